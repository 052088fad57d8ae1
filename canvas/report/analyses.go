package report

import (
	"fmt"
	"math"
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/analysis"
)

// The analyses' sections. Each reads the analysis package's own figures and
// formatting, so the report prints what the app's panels print.
//
// Order of the analysis sections (RegisterAnalysis sorts by it):
//
//	10 risk profile   20 tornado   30 break-evens   40 value of information
//	50 simulation summary
func init() {
	RegisterAnalysis(Builder{Name: "risk profile", Order: 10, Build: riskProfileSection})
	RegisterAnalysis(Builder{Name: "tornado", Order: 20, Build: tornadoSection})
	RegisterAnalysis(Builder{Name: "break-evens", Order: 30, Build: breakEvenSection})
	RegisterAnalysis(Builder{Name: "value of information", Order: 40, Build: voiSection})
	RegisterAnalysis(Builder{Name: "simulation summary", Order: 50, Build: simulationSection})
}

// riskAnalysis is the risk-profile analysis at the root, computed once for the
// strategy table and the risk profile section.
func (in *Input) riskAnalysis() (*analysis.Analysis, error) {
	if in.risk == nil && in.riskErr == nil {
		in.risk, in.riskErr = analysis.Analyse(in.Project, analysis.Options{})
	}
	return in.risk, in.riskErr
}

// strategyTable is the strategy table of the risk-profile analysis: each
// alternative of the first decision with its expected value, spread and
// percentiles, and which rule recommends it.
func strategyTable(in *Input) ([]Section, error) {
	a, err := in.riskAnalysis()
	if err != nil {
		return nil, err
	}
	if len(a.Rows) == 0 {
		return nil, nil
	}
	t := &Table{Header: a.TableHeader(), Rows: a.TableCells()}
	for range t.Header {
		t.Align = append(t.Align, Right)
	}
	t.Align[0] = Left
	for _, row := range a.Rows {
		t.Highlight = append(t.Highlight, (row.BestAtR && a.RiskOn) || (row.BestNeutral && !a.RiskOn))
	}
	t.Note = "SD is the standard deviation; P10, P50 and P90 are the 10th, 50th and 90th percentiles of the " +
		strings.ToLower(a.ValueName()) + " under the recommended later choices."
	where := fmt.Sprintf("Each alternative at %q", engine.NodeTitle(a.Node))
	if a.Node.Kind != engine.Decision {
		where = "The recommended policy"
	}
	return []Section{{Title: "Strategies", Table: t,
		Paragraphs: []string{where + ", with the later decisions made as recommended. " + a.AttitudeSentence()}}}, nil
}

func riskProfileSection(in *Input) ([]Section, error) {
	a, err := in.riskAnalysis()
	if err != nil {
		return nil, err
	}
	if len(a.Profiles) == 0 {
		return nil, nil
	}
	chart, err := a.ProfileChart(true, nil)
	if err != nil {
		return nil, err
	}
	paras := []string{fmt.Sprintf("The cumulative risk profile shows, for each alternative, the chance that the %s is at most a given amount.",
		strings.ToLower(a.ValueName()))}
	paras = append(paras, analysis.DominanceSummary(a.Profiles, a.Dominance)...)
	return []Section{{Title: "Risk profile", Paragraphs: paras, Chart: chart}}, nil
}

func voiSection(in *Input) ([]Section, error) {
	rep, err := analysis.EVPI(in.Project, analysis.VOIOptions{})
	if err != nil {
		return nil, err
	}
	if len(rep.Nodes) == 0 {
		return nil, nil
	}
	t := &Table{Header: []string{"Learnt before deciding", "Value with the information", "EVPI"}, Align: []Align{Left, Right, Right}}
	var missing []string
	row := func(f analysis.EVPIFigure, name string) {
		if !f.Valid {
			t.Rows = append(t.Rows, []string{name, "not computed", "—"})
			missing = append(missing, name+": "+f.Reason+".")
			return
		}
		t.Rows = append(t.Rows, []string{name, rep.Format(f.With), rep.Format(f.EVPI)})
	}
	row(rep.Whole, "Every uncertainty")
	for _, f := range rep.Nodes {
		row(f, f.Name)
	}
	t.Highlight = []bool{true}
	paras := []string{fmt.Sprintf("As it stands the %s is %s. The expected value of perfect information (EVPI) is what learning an "+
		"uncertainty before deciding would be worth at most: the most worth paying for a study, survey or test of it.",
		rep.ValueWord, rep.Format(rep.Without))}
	secs := []Section{{Title: "Value of information", Paragraphs: paras, Table: t}}
	if len(missing) > 0 {
		secs = append(secs, Section{Paragraphs: append([]string{"Why some figures are not computed:"}, missing...)})
	}
	return secs, nil
}

// Simulation settings for the report: fixed so the same project always gives
// the same report.
const (
	reportSimIterations = 10_000
	reportSimSeed       = 1
)

func simulationSection(in *Input) ([]Section, error) {
	var varying []string
	for _, v := range in.Project.Variables {
		if v.Dist != nil && v.Dist.Kind != "" && v.Dist.Kind != engine.DistFixed {
			varying = append(varying, v.Name)
		}
	}
	if len(varying) == 0 {
		return nil, nil
	}
	res, err := analysis.Simulate(in.Ctx, in.Project, analysis.SimOptions{N: reportSimIterations, Seed: reportSimSeed, Mode: analysis.SimParameters})
	if err != nil {
		return nil, err
	}
	r := in.Result
	f := func(x float64) string {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return "—"
		}
		return r.Format(decimal.NewFromFloat(x))
	}
	v := res.Value
	t := &Table{Header: []string{"", strings.ToUpper(res.ValueWord[:1]) + res.ValueWord[1:]}, Align: []Align{Left, Right}, Rows: [][]string{
		{"Base case", f(res.Base)},
		{"Mean (± standard error)", f(v.Mean) + " ± " + f(v.SE)},
		{"Standard deviation", f(v.SD)},
		{"P5 / P50 / P95", f(v.P5) + " / " + f(v.P50) + " / " + f(v.P95)},
		{"Lowest / highest", f(v.Min) + " / " + f(v.Max)},
		{"Chance of " + res.LossRule, fmt.Sprintf("%.1f %%", 100*res.Loss)},
	}}
	paras := []string{fmt.Sprintf("%s iterations (seed %d) drew %s from their distributions and rolled the tree back each time.",
		engine.FormatNumber(decimal.NewFromInt(int64(res.N)), 0), res.Seed, strings.Join(varying, ", "))}
	if res.Invalid > 0 {
		paras = append(paras, fmt.Sprintf("%d iterations made the tree invalid and were left out; the first: %s", res.Invalid, res.InvalidExample))
	}
	secs := []Section{{Title: "Simulation summary", Paragraphs: paras, Table: t}}
	if res.Decision != nil && len(res.Alternatives) > 0 {
		at := &Table{Header: []string{"Alternative", "Best in", "Mean", "P5", "P95"}, Align: []Align{Left, Right, Right, Right, Right}}
		for _, a := range res.Alternatives {
			at.Rows = append(at.Rows, []string{a.Label, fmt.Sprintf("%.1f %%", 100*a.PBest), f(a.Value.Mean), f(a.Value.P5), f(a.Value.P95)})
		}
		s := Section{Paragraphs: []string{fmt.Sprintf("At %q, how often each alternative was the best choice:", engine.NodeTitle(res.Decision))}, Table: at}
		if charts := res.Charts(in.Project.Currency); len(charts) > 0 {
			s.Chart = charts[0]
		}
		secs = append(secs, s)
	}
	return secs, nil
}

func tornadoSection(in *Input) ([]Section, error) {
	pc := in.Project.Clone() // the tornado evaluates the project it is given
	t, err := analysis.Tornado(in.Ctx, pc, engine.Evaluate(pc))
	if err != nil {
		return nil, err
	}
	if len(t.Bars) == 0 {
		return nil, nil
	}
	r := in.Result
	tab := &Table{Header: []string{"Variable", "Low – high", "Value at low", "Value at high", "Swing", "Changes the choice"},
		Align: []Align{Left, Left, Right, Right, Right, Left}}
	for _, b := range t.Bars {
		flips := ""
		if b.Flips {
			flips = "yes"
		}
		tab.Rows = append(tab.Rows, []string{b.Variable, exactNumber(b.Low) + " – " + exactNumber(b.High),
			r.Format(b.AtLow), r.Format(b.AtHigh), r.Format(b.Swing), flips})
		tab.Highlight = append(tab.Highlight, b.Flips)
	}
	paras := []string{fmt.Sprintf("Each bar shows the %s as one variable moves across its low–high range with the others at their values (base %s), largest swing first.",
		t.ValueWord, r.Format(t.Base))}
	if len(t.Skipped) > 0 {
		paras = append(paras, "Left out: "+strings.Join(t.Skipped, "; ")+".")
	}
	chart, err := t.Chart()
	if err != nil {
		return nil, err
	}
	return []Section{{Title: "Tornado diagram", Paragraphs: paras, Table: tab, Chart: chart}}, nil
}

// shownInput rounds an input value found by a search to six significant
// figures (never fewer decimals than the project shows), for reading.
func shownInputValue(d decimal.Decimal, decimals int) string {
	mag := int(d.NumDigits()) + int(d.Exponent())
	places := min(max(6-mag, decimals, 0), 12)
	return engine.FormatNumber(d.Round(int32(places)), places)
}

func breakEvenSection(in *Input) ([]Section, error) {
	p, r := in.Project, in.Result
	if p.Root.Kind != engine.Decision {
		return nil, nil
	}
	tab := &Table{Header: []string{"Variable", "Break-even", "Best below", "Best above", "Value there"},
		Align: []Align{Left, Right, Left, Left, Right}}
	var none []string
	for _, v := range p.Variables {
		if strings.TrimSpace(v.Low) == "" || strings.TrimSpace(v.High) == "" {
			continue
		}
		pc := p.Clone()
		s, err := analysis.Sweep(in.Ctx, pc, engine.Evaluate(pc), analysis.VariableInput(v.Name), analysis.SweepOptions{})
		if err != nil {
			return nil, fmt.Errorf("variable %q: %w", v.Name, err)
		}
		if len(s.BreakEvens) == 0 {
			none = append(none, v.Name)
			continue
		}
		for _, b := range s.BreakEvens {
			tab.Rows = append(tab.Rows, []string{v.Name, shownInputValue(b.At, p.Decimals), s.Alternatives[b.From], s.Alternatives[b.To], r.Format(b.Value)})
		}
	}
	if len(tab.Rows) == 0 && len(none) == 0 {
		return nil, nil
	}
	paras := []string{fmt.Sprintf("A break-even is a value of one input, the others at their values, at which the best alternative at %q changes.",
		engine.NodeTitle(p.Root))}
	if len(none) > 0 {
		paras = append(paras, "The best alternative stays the same across the whole range of "+strings.Join(none, ", ")+".")
	}
	sec := Section{Title: "Break-evens", Paragraphs: paras}
	if len(tab.Rows) > 0 {
		sec.Table = tab
	}
	return []Section{sec}, nil
}
