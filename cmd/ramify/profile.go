package main

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	register("profile", "risk profiles and strategy table at a decision (--node, --risk-tolerance, --json, -o chart)", runProfile)
}

func runProfile(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("profile", stderr)
	nodeID := fs.String("node", "", "decision node `ID` whose alternatives are compared (default: the root)")
	tolerance := fs.String("risk-tolerance", "", "compare at risk tolerance `R` (exponential utility) instead of the project's attitude")
	neutral := fs.Bool("risk-neutral", false, "compare risk-neutral, whatever the project says")
	asJSON := fs.Bool("json", false, "print distributions and statistics as JSON with decimal strings")
	out := fs.String("o", "", "write a chart to `FILE` (.png, .svg or .pdf)")
	cumulative := fs.Bool("cumulative", false, "chart the cumulative risk profile (step curves) instead of probability bars")
	strategies := fs.Bool("strategies", false, "also list every pure strategy, up to --limit")
	limit := fs.Int("limit", analysis.DefaultStrategyLimit, "most pure strategies listed with --strategies")
	loss := fs.String("loss-threshold", "", "payoff below `X` counts as a loss (default 0); for a cost objective, cost above X")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	if *tolerance != "" && *neutral {
		fmt.Fprintln(stderr, "ramify profile: give --risk-tolerance or --risk-neutral, not both")
		return exitUsage
	}
	if *limit < 1 || *limit > analysis.MaxStrategyLimit {
		fmt.Fprintf(stderr, "ramify profile: --limit must be between 1 and %d, not %d\n", analysis.MaxStrategyLimit, *limit)
		return exitUsage
	}
	if *out != "" {
		if _, err := analysis.ChartFormat(*out); err != nil {
			fmt.Fprintln(stderr, "ramify profile: -o", err)
			return exitUsage
		}
	}
	p, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	opt := analysis.Options{NodeID: *nodeID, Strategies: *strategies, Limit: *limit}
	switch {
	case *neutral:
		opt.Risk = &engine.RiskAttitude{}
	case *tolerance != "":
		if _, err := analysis.ParseTolerance(*tolerance, r.Vars); err != nil {
			fmt.Fprintln(stderr, "ramify profile: --risk-tolerance:", err)
			return exitUsage
		}
		opt.Risk = &engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: *tolerance}
	}
	if *loss != "" {
		d, err := decimal.NewFromString(strings.ReplaceAll(strings.TrimSpace(*loss), ",", ""))
		if err != nil {
			fmt.Fprintf(stderr, "ramify profile: --loss-threshold: %q is not a number\n", *loss)
			return exitUsage
		}
		opt.LossThreshold = &d
	}
	a, err := analysis.Analyse(p, opt)
	if err != nil {
		fmt.Fprintf(stderr, "ramify profile: %s: %s\n", path, err)
		return exitInvalid
	}
	if *out != "" {
		chart, err := a.ProfileChart(*cumulative, nil)
		if err == nil {
			err = analysis.SaveChart(chart, *out, 0, 0)
		}
		if code := failOn(fs.Name(), err, stderr); code != exitOK {
			return code
		}
	}
	if *asJSON {
		return writeJSON(fs.Name(), stdout, stderr, a.JSON())
	}
	printProfile(stdout, a)
	if *out != "" {
		fmt.Fprintf(stdout, "\nChart written to %s\n", *out)
	}
	return exitOK
}

func printProfile(w io.Writer, a *analysis.Analysis) {
	p := a.Result.Project
	if p.Title != "" {
		fmt.Fprintln(w, p.Title)
	}
	better := "higher is better"
	if a.Minimize {
		better = "lower is better"
	}
	fmt.Fprintf(w, "Risk profiles at %q (%s, %s)\n", engine.NodeTitle(a.Node), strings.ToLower(a.ValueName()), better)
	fmt.Fprintln(w, a.AttitudeSentence())
	fmt.Fprintln(w)
	printTable(w, a.TableHeader(), a.TableCells())
	if a.Minimize && !a.Loss.HasThreshold {
		fmt.Fprintln(w, "(P(loss) needs a cost threshold: --loss-threshold X counts a cost above X as a loss.)")
	}
	fmt.Fprintln(w, "(P10/P50/P90: the smallest value whose chance of being reached or undercut is at least 10/50/90 %.)")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Dominance:")
	for _, s := range analysis.DominanceSummary(a.Profiles, a.Dominance) {
		fmt.Fprintln(w, "  "+s)
	}
	if a.StrategyNote != "" {
		fmt.Fprintln(w)
		fmt.Fprintln(w, a.StrategyNote)
	}
	if len(a.Strategies) > 0 {
		fmt.Fprintln(w)
		fmt.Fprintf(w, "Pure strategies (%d):\n", len(a.Strategies))
		header := []string{"Strategy", a.EVName()}
		if a.RiskOn {
			header = append(header, "Certainty equivalent")
		}
		header = append(header, "SD", "Min", "Max")
		var rows [][]string
		for _, s := range a.Strategies {
			row := []string{s.Name, a.Format(s.Stats.EV)}
			if a.RiskOn {
				row = append(row, a.Format(s.Stats.CE))
			}
			rows = append(rows, append(row, a.Format(s.Stats.SD), a.Format(s.Stats.Min), a.Format(s.Stats.Max)))
		}
		printTable(w, header, rows)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, engine.Caution)
}

func printTable(w io.Writer, header []string, rows [][]string) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, strings.Join(header, "\t")+"\t")
	for _, r := range rows {
		fmt.Fprintln(tw, strings.Join(r, "\t")+"\t")
	}
	tw.Flush()
}
