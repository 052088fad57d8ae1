package main

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/ramify-app/ramify/engine"
)

func init() {
	register("eval", "roll the tree back: value, recommended policy, path table (--json, --csv)", runEval)
	register("check", "list every problem in a project; exit 1 if there is any", runCheck)
}

func runCheck(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("check", stderr)
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	_, r, code := loadProject(path, stderr)
	if code != exitOK {
		return code
	}
	if r.Valid() {
		fmt.Fprintf(stdout, "%s: no problems (%d nodes)\n", path, len(r.Nodes))
		return exitOK
	}
	r.SortProblems()
	fmt.Fprintf(stdout, "%s: %d problem(s)\n", path, len(r.Problems))
	for _, p := range r.Problems {
		fmt.Fprintln(stdout, "  "+p.Msg)
	}
	return exitInvalid
}

func runEval(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("eval", stderr)
	asJSON := fs.Bool("json", false, "print one JSON object")
	csvTable := fs.String("csv", "", "print a table as CSV: paths, strategies or variables")
	path, ok := parseArgs(fs, normalizeOptionalValue(args, "--csv", "paths", "paths", "strategies", "variables"), stderr)
	if !ok {
		return exitUsage
	}
	if *csvTable != "" && !oneOf(*csvTable, "paths", "strategies", "variables") {
		fmt.Fprintf(stderr, "ramify eval: --csv takes paths, strategies or variables, not %q\n", *csvTable)
		return exitUsage
	}
	_, r, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	switch {
	case *asJSON:
		return writeJSON(fs.Name(), stdout, stderr, engine.ResultJSON(r))
	case *csvTable != "":
		return failOn(fs.Name(), engine.WriteCSV(stdout, r, strings.ToLower(*csvTable)), stderr)
	default:
		printEval(stdout, r)
	}
	return exitOK
}

// normalizeOptionalValue lets "--csv" stand alone (meaning def) as well as "--csv X".
func normalizeOptionalValue(args []string, flagName, def string, values ...string) []string {
	out := make([]string, 0, len(args)+1)
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == flagName || a == "-"+strings.TrimLeft(flagName, "-") {
			if i+1 < len(args) && oneOf(args[i+1], values...) {
				out = append(out, flagName+"="+args[i+1])
				i++
			} else {
				out = append(out, flagName+"="+def)
			}
			continue
		}
		out = append(out, a)
	}
	return out
}

func printEval(w io.Writer, r *engine.Result) {
	p := r.Project
	if p.Title != "" {
		fmt.Fprintln(w, p.Title)
	}
	fmt.Fprintf(w, "Root %s: %s\n", r.ValueWord(), r.Format(r.Value()))
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Recommendation:")
	for _, s := range r.Recommendation() {
		fmt.Fprintln(w, "  "+s)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Paths:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "\tPath\tProbability\tPayoff\tContribution\t")
	for _, row := range r.Paths() {
		mark := ""
		if row.Optimal {
			mark = "*"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t\n", mark, strings.Join(row.Labels, " › "),
			engine.FormatProbability(row.Probability), r.Format(row.Payoff), r.Format(row.Contribution))
	}
	tw.Flush()
	fmt.Fprintln(w, "(* on the recommended policy)")
}
