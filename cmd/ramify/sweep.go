package main

import (
	"context"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	register("sweep", "one-way sensitivity: values across an input's range and exact break-evens (--var or --field)", runSweep)
}

func runSweep(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("sweep", stderr)
	varName := fs.String("var", "", "variable to vary (its low and high are the range unless --from/--to)")
	field := fs.String("field", "", "tree field to vary: NODEID:BRANCH:probability, NODEID:BRANCH:cash or NODEID:payoff (BRANCH counts from 1 or is the label)")
	from := fs.String("from", "", "low end of the range (a number or formula)")
	to := fs.String("to", "", "high end of the range")
	steps := fs.Int("steps", analysis.DefaultSteps, "intervals across the range")
	node := fs.String("node", "", "id of the decision whose alternatives are compared (default: the root)")
	out := sensOutputFlags(fs, "print one JSON object (break-evens as exact decimal strings)",
		"print the points as CSV", "write the chart to this file (.png, .svg or .pdf)")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	in, code := sensInput(fs.Name(), *varName, *field, stderr)
	if code != exitOK {
		return code
	}
	if code := out.check(fs.Name(), stderr); code != exitOK {
		return code
	}
	p, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	rng, code := sensRange(fs.Name(), *from, *to, r, stderr)
	if code != exitOK {
		return code
	}
	res, err := analysis.Sweep(context.Background(), p, r, in, analysis.SweepOptions{Range: rng, Decision: *node, Steps: *steps})
	if err != nil {
		fmt.Fprintf(stderr, "ramify sweep: %s: %s\n", path, err)
		return exitInvalid
	}
	return out.write(fs.Name(), res, func() any { return res.Doc() },
		func(w io.Writer) { printSweep(w, res) }, stdout, stderr)
}

func printSweep(w io.Writer, s *analysis.SweepResult) {
	set := s.Setting
	fmt.Fprintf(w, "%s of the alternatives at %q as %s goes from %s to %s (base %s)\n",
		sensCapital(s.ValueWord), engine.NodeTitle(s.Decision), s.InputName, set.Low, set.High, set.Base)
	if set.Rule != "" {
		fmt.Fprintf(w, "To keep the distribution valid, %s.\n", set.Rule)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Break-evens:")
	if len(s.BreakEvens) == 0 {
		fmt.Fprintf(w, "  none: %q is best across the whole range.\n", s.Alternatives[s.Best[0]])
	}
	for _, b := range s.BreakEvens {
		fmt.Fprintf(w, "  %s = %s: best changes from %q to %q (%s)\n", s.InputName, b.At,
			s.Alternatives[b.From], s.Alternatives[b.To], b.Method())
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "%s\t", s.InputName)
	for _, a := range s.Alternatives {
		fmt.Fprintf(tw, "%s\t", a)
	}
	fmt.Fprintln(tw, "best\t")
	for k, x := range s.X {
		fmt.Fprintf(tw, "%s\t", x.Round(8).String())
		for _, v := range s.Values[k] {
			fmt.Fprintf(tw, "%s\t", engine.FormatNumber(decimal.NewFromFloat(v), s.Decimals))
		}
		fmt.Fprintf(tw, "%s\t\n", s.Alternatives[s.Best[k]])
	}
	tw.Flush()
	fmt.Fprintln(w, "(values in the table are float figures for the chart; break-evens are confirmed with the exact engine)")
	fmt.Fprintln(w)
	fmt.Fprintln(w, engine.Caution)
}

func sensCapital(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// inputFlag turns --var / --field into one analysis input.
func sensInput(cmd, varName, field string, stderr io.Writer) (analysis.Input, int) {
	switch {
	case varName != "" && field != "":
		fmt.Fprintf(stderr, "%s: give --var or --field, not both\n", cmd)
		return analysis.Input{}, exitUsage
	case varName == "" && field == "":
		fmt.Fprintf(stderr, "%s: name the input to vary with --var NAME or --field NODEID:BRANCH:probability\n", cmd)
		return analysis.Input{}, exitUsage
	case varName != "":
		return analysis.VariableInput(varName), exitOK
	}
	in, err := analysis.ParseInput(field)
	if err == nil && in.IsVariable() {
		err = fmt.Errorf("%q is not a tree field; use --var for a variable", field)
	}
	if err != nil {
		fmt.Fprintf(stderr, "%s: --field: %s\n", cmd, err)
		return analysis.Input{}, exitUsage
	}
	return in, exitOK
}

// rangeFlags reads --from/--to (numbers or formulas over the project's variables).
func sensRange(cmd, from, to string, r *engine.Result, stderr io.Writer) (*analysis.Range, int) {
	if from == "" && to == "" {
		return nil, exitOK
	}
	if from == "" || to == "" {
		fmt.Fprintf(stderr, "%s: give both --from and --to, or neither\n", cmd)
		return nil, exitUsage
	}
	var ends [2]decimal.Decimal
	for i, src := range []string{from, to} {
		f, err := engine.ParseFormula(src)
		if err == nil {
			ends[i], err = f.Eval(r.Vars)
		}
		if err != nil {
			fmt.Fprintf(stderr, "%s: --%s %q: %s\n", cmd, []string{"from", "to"}[i], src, err)
			return nil, exitUsage
		}
	}
	return &analysis.Range{Low: ends[0], High: ends[1]}, exitOK
}
