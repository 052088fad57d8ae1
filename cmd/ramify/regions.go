package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	register("regions", "two-way map: the best alternative over a grid of two inputs (--x, --y, -o chart)", runRegions)
}

func runRegions(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("regions", stderr)
	x := fs.String("x", "", "input along the x axis: a variable name or NODEID:BRANCH:probability (also cash, NODEID:payoff)")
	y := fs.String("y", "", "input along the y axis")
	xFrom := fs.String("x-from", "", "low end of x's range (default: its own low)")
	xTo := fs.String("x-to", "", "high end of x's range")
	yFrom := fs.String("y-from", "", "low end of y's range")
	yTo := fs.String("y-to", "", "high end of y's range")
	steps := fs.Int("steps", analysis.DefaultGrid, "points along each axis")
	node := fs.String("node", "", "id of the decision whose alternatives are compared (default: the root)")
	out := sensOutputFlags(fs, "print one JSON object",
		"print the grid as CSV", "write the map to this file (.png, .svg or .pdf)")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	if *x == "" || *y == "" {
		fmt.Fprintln(stderr, "ramify regions: name both inputs with --x and --y")
		return exitUsage
	}
	if code := out.check(fs.Name(), stderr); code != exitOK {
		return code
	}
	var ins [2]analysis.Input
	for i, text := range []string{*x, *y} {
		in, err := analysis.ParseInput(text)
		if err != nil {
			fmt.Fprintf(stderr, "ramify regions: --%s: %s\n", []string{"x", "y"}[i], err)
			return exitUsage
		}
		ins[i] = in
	}
	p, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	xr, code := sensRange("ramify regions (x)", *xFrom, *xTo, r, stderr)
	if code != exitOK {
		return code
	}
	yr, code := sensRange("ramify regions (y)", *yFrom, *yTo, r, stderr)
	if code != exitOK {
		return code
	}
	res, err := analysis.Regions(context.Background(), p, r, ins[0], ins[1],
		analysis.RegionOptions{XRange: xr, YRange: yr, Decision: *node, Steps: *steps})
	if err != nil {
		fmt.Fprintf(stderr, "ramify regions: %s: %s\n", path, err)
		return exitInvalid
	}
	return out.write(fs.Name(), res, func() any { return res.Doc() },
		func(w io.Writer) { printRegions(w, res) }, stdout, stderr)
}

func printRegions(w io.Writer, rm *analysis.RegionMap) {
	fmt.Fprintf(w, "Best alternative at %q over %s (%s to %s) and %s (%s to %s), %d × %d grid\n",
		engine.NodeTitle(rm.Decision), rm.XName, rm.X.Low, rm.X.High, rm.YName, rm.Y.Low, rm.Y.High, len(rm.Xs), len(rm.Ys))
	fmt.Fprintf(w, "Base case (%s = %s, %s = %s): %q\n\n", rm.XName, rm.X.Base, rm.YName, rm.Y.Base, rm.Alternatives[rm.BaseBest])
	total := len(rm.Xs) * len(rm.Ys)
	letters := "ABCDEFGHIJKLMNOPQRSTUVWXYZ"
	for i, c := range rm.Shares() {
		mark := "?"
		if i < len(letters) {
			mark = letters[i : i+1]
		}
		fmt.Fprintf(w, "  %s  %-40s %5.1f%% of the grid\n", mark, rm.Alternatives[i], 100*float64(c)/float64(total))
	}
	// A small text map: y from high (top) to low, at most 40 columns and 20 rows.
	fmt.Fprintln(w)
	rows, cols := len(rm.Ys), len(rm.Xs)
	rStep, cStep := (rows+19)/20, (cols+39)/40
	for iy := rows - 1; iy >= 0; iy -= rStep {
		var b strings.Builder
		for ix := 0; ix < cols; ix += cStep {
			k := rm.Best[iy][ix]
			if k < len(letters) {
				b.WriteByte(letters[k])
			} else {
				b.WriteByte('?')
			}
		}
		fmt.Fprintf(w, "  %12s | %s\n", rm.Ys[iy].Round(6).String(), b.String())
	}
	fmt.Fprintf(w, "  %12s   %s → %s\n", "", rm.XName, rm.X.High.String())
	fmt.Fprintln(w)
	fmt.Fprintln(w, engine.Caution)
}
