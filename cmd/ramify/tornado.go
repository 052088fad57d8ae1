package main

import (
	"context"
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	register("tornado", "tornado diagram: root value with each variable at its low and high (--json, --csv, -o chart)", runTornado)
}

func runTornado(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("tornado", stderr)
	out := sensOutputFlags(fs, "print one JSON object (exact decimal strings)",
		"print the table as CSV", "write the chart to this file (.png, .svg or .pdf)")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	if code := out.check(fs.Name(), stderr); code != exitOK {
		return code
	}
	p, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	res, err := analysis.Tornado(context.Background(), p, r)
	if err != nil {
		fmt.Fprintf(stderr, "ramify tornado: %s: %s\n", path, err)
		return exitInvalid
	}
	for _, s := range res.Skipped {
		fmt.Fprintln(stderr, "ramify tornado: "+s)
	}
	if len(res.Bars) == 0 {
		fmt.Fprintf(stderr, "ramify tornado: %s: no variable has both a low and a high; give ranges in the variables table\n", path)
		return exitInvalid
	}
	return out.write(fs.Name(), res, func() any { return res.Doc() },
		func(w io.Writer) { printTornado(w, res) }, stdout, stderr)
}

func printTornado(w io.Writer, t *analysis.TornadoResult) {
	f := func(d engine.Decimal) string { return engine.FormatValue(d, t.Decimals, t.Unit) }
	fmt.Fprintf(w, "Tornado diagram: root %s, base %s\n", t.ValueWord, f(t.Base))
	if t.Decision != nil {
		fmt.Fprintf(w, "Recommendation at base: %q at %q\n", t.Alternatives[t.BaseChoice], engine.NodeTitle(t.Decision))
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "variable\tlow\thigh\tat low\tat high\tswing\tflips\t")
	for _, b := range t.Bars {
		flip := ""
		if b.Flips {
			flip = "yes"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n", b.Variable, b.Low, b.High, f(b.AtLow), f(b.AtHigh), f(b.Swing), flip)
	}
	tw.Flush()
	fmt.Fprintln(w, "(flips: the variable's range changes the recommendation; every figure is exact)")
	fmt.Fprintln(w)
	fmt.Fprintln(w, engine.Caution)
}
