package main

import (
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

func init() {
	register("voi", "value of information: EVPI overall and per uncertainty, and a study's EVSI (--json)", runVOI)
}

func runVOI(args []string, stdout, stderr io.Writer) int {
	fs := newFlags("voi", stderr)
	asJSON := fs.Bool("json", false, "print one JSON object")
	anyBranch := fs.Bool("any-branch", false, "treat an uncertainty found on only some branches of a decision as happening whatever is chosen")
	at := fs.String("study-at", "", "id of the decision a study would come before")
	informs := fs.String("informs", "", "id of a chance node the study informs")
	results := fs.String("results", "", `study results, comma-separated: "Favourable,Unfavourable"`)
	like := fs.String("likelihood", "", `P(result | state): one row per result separated by ';', one entry per state separated by ',': "0.9,0.2;0.1,0.8"`)
	cost := fs.String("cost", "", "the study's cost, a positive amount")
	path, ok := parseArgs(fs, args, stderr)
	if !ok {
		return exitUsage
	}
	studyAsked := *at != "" || *informs != "" || *results != "" || *like != ""
	var spec analysis.StudySpec
	if studyAsked {
		if *at == "" || *informs == "" || *results == "" || *like == "" {
			fmt.Fprintln(stderr, "ramify voi: a study needs --study-at, --informs, --results and --likelihood")
			return exitUsage
		}
		spec = analysis.StudySpec{DecisionID: *at, NodeID: *informs, Cost: *cost}
		for _, r := range strings.Split(*results, ",") {
			spec.Results = append(spec.Results, strings.TrimSpace(r))
		}
		for _, row := range strings.Split(*like, ";") {
			var cells []string
			for _, c := range strings.Split(row, ",") {
				cells = append(cells, strings.TrimSpace(c))
			}
			spec.Likelihood = append(spec.Likelihood, cells)
		}
	}
	p, _, code := loadValid(path, stderr)
	if code != exitOK {
		return code
	}
	opt := analysis.VOIOptions{AnyBranch: *anyBranch}
	rep, err := analysis.EVPI(p, opt)
	if err != nil {
		fmt.Fprintln(stderr, "ramify voi:", err)
		return exitInvalid
	}
	var plan *analysis.StudyPlan
	if studyAsked {
		if plan, err = analysis.PlanStudy(p, spec, opt); err != nil {
			fmt.Fprintf(stderr, "ramify voi: study: %v\n", err)
			return exitInvalid
		}
	}
	if *asJSON {
		return writeJSON(fs.Name(), stdout, stderr, voiJSON(rep, plan))
	}
	printVOI(stdout, p, rep, plan)
	return exitOK
}

type figureJSON struct {
	Name   string   `json:"name"`
	Nodes  []string `json:"nodes"`
	Valid  bool     `json:"valid"`
	Reason string   `json:"reason,omitempty"`
	With   string   `json:"with,omitempty"`
	EVPI   string   `json:"evpi,omitempty"`
}

func toFigureJSON(f analysis.EVPIFigure) figureJSON {
	out := figureJSON{Name: f.Name, Nodes: f.NodeIDs, Valid: f.Valid, Reason: f.Reason}
	if f.Valid {
		out.With, out.EVPI = f.With.String(), f.EVPI.String()
	}
	return out
}

func voiJSON(rep *analysis.VOIReport, plan *analysis.StudyPlan) any {
	doc := map[string]any{
		"objective": string(rep.Objective), "valueWord": rep.ValueWord, "without": rep.Without.String(),
		"whole": toFigureJSON(rep.Whole),
	}
	var figs []figureJSON
	for _, f := range rep.Nodes {
		figs = append(figs, toFigureJSON(f))
	}
	doc["uncertainties"] = figs
	if plan != nil {
		post := map[string]map[string]string{}
		pres := map[string]string{}
		for i, b := range plan.Bayes.PResult {
			pres[plan.Results[i]] = b.String()
		}
		for ri, row := range plan.Bayes.Posterior {
			if row == nil {
				continue
			}
			m := map[string]string{}
			for si, v := range row {
				m[plan.States[si]] = v.String()
			}
			post[plan.Results[ri]] = m
		}
		s := map[string]any{
			"decision": plan.Decision.ID, "informs": plan.Informs, "states": plan.States,
			"pResult": pres, "posterior": post,
			"without": plan.Without.String(), "with": plan.With.String(), "evsi": plan.EVSI.String(),
			"cost": plan.Cost.String(), "net": plan.Net.String(), "mostWorthPaying": plan.MostWorth.String(),
			"evpi": toFigureJSON(plan.EVPI),
		}
		if !math.IsNaN(plan.Efficiency) {
			s["efficiency"] = plan.Efficiency
		}
		doc["study"] = s
	}
	return doc
}

func gainWord(obj engine.Objective) string {
	if obj == engine.Minimize {
		return "saves"
	}
	return "gains"
}

func printVOI(w io.Writer, p *engine.Project, rep *analysis.VOIReport, plan *analysis.StudyPlan) {
	if p.Title != "" {
		fmt.Fprintln(w, p.Title)
	}
	fmt.Fprintf(w, "%s as it stands: %s\n\n", voiUpperFirst(rep.ValueWord), rep.Format(rep.Without))
	fmt.Fprintln(w, "Expected value of perfect information (EVPI): what knowing the outcome before the first decision is worth.")
	line := func(f analysis.EVPIFigure, title string) {
		if f.Valid {
			fmt.Fprintf(w, "  %s: EVPI %s (knowing first %s it; value then %s)\n", title, rep.Format(f.EVPI), gainWord(rep.Objective), rep.Format(f.With))
			return
		}
		fmt.Fprintf(w, "  %s: no figure. %s\n", title, strings.ReplaceAll(f.Reason, "\n", "\n    "))
	}
	line(rep.Whole, "Everything")
	for _, f := range rep.Nodes {
		line(f, fmt.Sprintf("%q (%s)", f.Name, strings.Join(f.NodeIDs, ", ")))
	}
	if plan != nil {
		fmt.Fprintln(w)
		fmt.Fprintf(w, "Study before %q informing %q:\n", engine.NodeTitle(plan.Decision), plan.Informs)
		for ri, name := range plan.Results {
			fmt.Fprintf(w, "  P(%s) = %s", name, engine.FormatProbability(plan.Bayes.PResult[ri]))
			if row := plan.Bayes.Posterior[ri]; row != nil {
				var parts []string
				for si, v := range row {
					parts = append(parts, fmt.Sprintf("%s %s", plan.States[si], engine.FormatProbability(v)))
				}
				fmt.Fprintf(w, "; then %s", strings.Join(parts, ", "))
			}
			fmt.Fprintln(w)
		}
		fmt.Fprintf(w, "  Value with the study, before its cost: %s (without: %s)\n", rep.Format(plan.With), rep.Format(plan.Without))
		fmt.Fprintf(w, "  EVSI: %s; cost %s; net value %s\n", rep.Format(plan.EVSI), rep.Format(plan.Cost), rep.Format(plan.Net))
		fmt.Fprintf(w, "  Most worth paying for the study: %s\n", rep.Format(plan.MostWorth))
		if !math.IsNaN(plan.Efficiency) {
			fmt.Fprintf(w, "  Efficiency EVSI / EVPI: %.1f %%\n", 100*plan.Efficiency)
		} else if !plan.EVPI.Valid {
			fmt.Fprintf(w, "  Efficiency: not available (%s)\n", plan.EVPI.Reason)
		}
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, engine.Caution)
}

func voiUpperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
