package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/signal"
	"strings"
	"text/tabwriter"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	register("simulate", "Monte Carlo simulation over variable distributions (-n, --seed, --mode, --json, --csv, -o chart)", runSimulate)
}

func runSimulate(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("simulate", stderr)
	n := fs.Int("n", 10000, "number of iterations")
	seed := fs.String("seed", "", "seed of the run (a whole number); a new one is chosen and shown when absent")
	mode := fs.String("mode", "parameters", "parameters: draw the variables; full: also draw the chance events along the policy")
	workers := fs.Int("workers", 0, "workers to use (default: every core); results do not depend on it")
	asJSON := fs.Bool("json", false, "print one JSON object")
	csvTable := fs.String("csv", "", "print a table as CSV: summary or samples")
	chart := fs.String("o", "", "write the histogram, cumulative and running-mean charts to this .png, .svg or .pdf file")
	path, ok := parseArgs(fs, normalizeOptionalValue(args, "--csv", "summary", "summary", "samples"), stderr)
	if !ok {
		return exitUsage
	}
	if !oneOf(*mode, "parameters", "full") {
		fmt.Fprintf(stderr, "ramify simulate: --mode takes parameters or full, not %q\n", *mode)
		return exitUsage
	}
	if *csvTable != "" && !oneOf(*csvTable, "summary", "samples") {
		fmt.Fprintf(stderr, "ramify simulate: --csv takes summary or samples, not %q\n", *csvTable)
		return exitUsage
	}
	if *n <= 0 {
		fmt.Fprintf(stderr, "ramify simulate: -n must be at least 1 (got %d)\n", *n)
		return exitUsage
	}
	if *chart != "" {
		if _, err := analysis.SimulationChartFormat(*chart); err != nil {
			fmt.Fprintln(stderr, "ramify simulate:", err)
			return exitUsage
		}
	}
	var s uint64
	if *seed == "" {
		s = rand.Uint64() % 1_000_000_000
	} else if _, err := fmt.Sscan(*seed, &s); err != nil {
		fmt.Fprintf(stderr, "ramify simulate: --seed takes a whole number from 0 up, not %q\n", *seed)
		return exitUsage
	}
	p, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	res, err := analysis.Simulate(ctx, p, analysis.SimOptions{N: *n, Seed: s, Mode: analysis.SimMode(strings.ToLower(*mode)), Workers: *workers})
	if code := failOn(fs.Name(), err, stderr); code != exitOK {
		return code
	}
	if *chart != "" {
		if code := failOn(fs.Name(), analysis.SaveSimulationCharts(res.Charts(p.Currency), *chart), stderr); code != exitOK {
			return code
		}
	}
	switch {
	case *asJSON:
		return writeJSON(fs.Name(), stdout, stderr, simJSON(res))
	case *csvTable != "":
		if code := failOn(fs.Name(), analysis.WriteSimulationCSV(stdout, res, strings.ToLower(*csvTable)), stderr); code != exitOK {
			return code
		}
	default:
		printSimulation(stdout, p, r, res)
	}
	if res.Invalid > 0 && !*asJSON && *csvTable == "" {
		fmt.Fprintf(stderr, "ramify simulate: %d of %d iterations made the tree invalid and were left out; the first: %s\n", res.Invalid, res.N, res.InvalidExample)
	}
	return exitOK
}

func summaryJSON(s analysis.Summary) map[string]any {
	return map[string]any{"count": s.Count, "mean": s.Mean, "se": s.SE, "sd": s.SD, "min": s.Min, "max": s.Max,
		"p5": s.P5, "p10": s.P10, "p50": s.P50, "p90": s.P90, "p95": s.P95, "percentileSample": s.PercentileSample}
}

func simJSON(res *analysis.SimResult) any {
	var alts []map[string]any
	for _, a := range res.Alternatives {
		alts = append(alts, map[string]any{"label": a.Label, "best": a.Best, "pBest": a.PBest, "value": summaryJSON(a.Value)})
	}
	var conv [][2]float64
	for _, c := range res.Convergence {
		conv = append(conv, [2]float64{float64(c.Iteration), c.Mean})
	}
	doc := map[string]any{
		"mode": res.Mode, "seed": res.Seed, "iterations": res.N, "workers": res.Workers, "valueWord": res.ValueWord,
		"objective": res.Objective, "base": res.Base, "value": summaryJSON(res.Value), "pLoss": res.Loss, "lossRule": res.LossRule,
		"alternatives": alts, "invalid": res.Invalid, "varying": res.Varying, "convergence": conv,
	}
	if res.Decision != nil {
		doc["decision"] = res.Decision.ID
	}
	if res.InvalidExample != "" {
		doc["invalidExample"] = res.InvalidExample
	}
	return doc
}

func printSimulation(w io.Writer, p *engine.Project, r *engine.Result, res *analysis.SimResult) {
	f := func(x float64) string {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Sprint(x)
		}
		return r.Format(decimal.NewFromFloat(x))
	}
	if p.Title != "" {
		fmt.Fprintln(w, p.Title)
	}
	fmt.Fprintf(w, "Simulation, %s mode: %d iterations, seed %d (%d workers)\n", res.Mode, res.N, res.Seed, res.Workers)
	if len(res.Varying) == 0 {
		fmt.Fprintln(w, "No variable has a distribution: every iteration uses the base values.")
	} else {
		fmt.Fprintf(w, "Drawn: %s\n", strings.Join(res.Varying, ", "))
	}
	if res.Invalid > 0 {
		fmt.Fprintf(w, "Left out: %d iterations in which a draw made the tree invalid (first: %s)\n", res.Invalid, res.InvalidExample)
	}
	fmt.Fprintln(w)
	v := res.Value
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "%s\t\n", voiUpperFirst(res.ValueWord))
	fmt.Fprintf(tw, "  Base case\t%s\n", f(res.Base))
	fmt.Fprintf(tw, "  Mean\t%s ± %s (standard error)\n", f(v.Mean), f(v.SE))
	fmt.Fprintf(tw, "  Standard deviation\t%s\n", f(v.SD))
	fmt.Fprintf(tw, "  P5 / P10 / P50\t%s / %s / %s\n", f(v.P5), f(v.P10), f(v.P50))
	fmt.Fprintf(tw, "  P90 / P95\t%s / %s\n", f(v.P90), f(v.P95))
	fmt.Fprintf(tw, "  Lowest / highest\t%s / %s\n", f(v.Min), f(v.Max))
	fmt.Fprintf(tw, "  Chance of %s\t%.1f %%\n", res.LossRule, 100*res.Loss)
	tw.Flush()
	if v.PercentileSample < v.Count {
		fmt.Fprintf(w, "(percentiles from the first %d iterations)\n", v.PercentileSample)
	}
	if res.Decision != nil {
		fmt.Fprintln(w)
		fmt.Fprintf(w, "At %q:\n", engine.NodeTitle(res.Decision))
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  Alternative\tBest in\tMean\tP5\tP95")
		for _, a := range res.Alternatives {
			fmt.Fprintf(tw, "  %s\t%.1f %%\t%s\t%s\t%s\n", a.Label, 100*a.PBest, f(a.Value.Mean), f(a.Value.P5), f(a.Value.P95))
		}
		tw.Flush()
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, engine.Caution)
}
