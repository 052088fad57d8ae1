package analysis

import (
	"fmt"
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

func init() {
	// `ramify eval --csv strategies` and every other caller of engine.WriteCSV
	// get the real strategy table once this package is linked in.
	engine.StrategyRowsCSV = StrategyRowsCSV
}

// StrategyRowsCSV is the strategy table at the root as CSV rows with exact
// decimal strings, under the project's own attitude to risk.
func StrategyRowsCSV(r *engine.Result) [][]string {
	a, err := Analyse(r.Project, Options{})
	if err != nil {
		return [][]string{{"error"}, {err.Error()}}
	}
	return a.CSVRows()
}

// ValueName is the word for the payoff axis and columns: "Cost" or "Payoff".
func (a *Analysis) ValueName() string {
	if a.Minimize {
		return "Cost"
	}
	return "Payoff"
}

// EVName is "Expected cost" or "Expected value".
func (a *Analysis) EVName() string {
	if a.Minimize {
		return "Expected cost"
	}
	return "Expected value"
}

// LossName describes the P(loss) column.
func (a *Analysis) LossName() string {
	if a.Minimize {
		if a.Loss.HasThreshold {
			return "P(cost > " + engine.FormatNumber(a.Loss.Threshold, a.decimals()) + ")"
		}
		return "P(cost over threshold)"
	}
	if a.Loss.HasThreshold && !a.Loss.Threshold.IsZero() {
		return "P(payoff < " + engine.FormatNumber(a.Loss.Threshold, a.decimals()) + ")"
	}
	return "P(loss)"
}

func (a *Analysis) decimals() int { return a.Result.Project.Decimals }

// Format prints a value the way the rest of Ramify does.
func (a *Analysis) Format(d decimal.Decimal) string { return a.Result.Format(d) }

// RName states the attitude for column headings: "R = 250,000 EUR".
func (a *Analysis) RName() string {
	if !a.RiskOn {
		return ""
	}
	return "R = " + a.Format(decimal.NewFromFloat(a.R))
}

// AttitudeSentence states the attitude in force in plain words.
func (a *Analysis) AttitudeSentence() string {
	switch {
	case !a.RiskOn:
		return "Risk-neutral: alternatives are ranked by " + strings.ToLower(a.EVName()) + "."
	case a.R > 0:
		return fmt.Sprintf("Risk-averse, exponential utility with risk tolerance %s: alternatives are ranked by certainty equivalent.", a.RName())
	}
	return fmt.Sprintf("Risk-seeking, exponential utility with risk tolerance %s: alternatives are ranked by certainty equivalent.", a.RName())
}

// TableHeader is the strategy table's header for display.
func (a *Analysis) TableHeader() []string {
	h := []string{"Alternative", a.EVName()}
	if a.RiskOn {
		h = append(h, "Certainty equivalent")
	}
	h = append(h, "SD", "Min", "Max", "P10", "P50", "P90")
	if !a.Loss.Minimize || a.Loss.HasThreshold {
		h = append(h, a.LossName())
	}
	h = append(h, "Best if risk-neutral")
	if a.RiskOn {
		h = append(h, "Best at "+a.RName())
	}
	return h
}

// TableCells is the strategy table formatted for reading (CLI and window).
func (a *Analysis) TableCells() [][]string {
	yes := func(b bool) string {
		if b {
			return "yes"
		}
		return ""
	}
	var out [][]string
	for _, row := range a.Rows {
		s := row.Stats
		cells := []string{row.Name, a.Format(s.EV)}
		if a.RiskOn {
			cells = append(cells, a.Format(s.CE))
		}
		cells = append(cells, a.Format(s.SD), a.Format(s.Min), a.Format(s.Max), a.Format(s.P10), a.Format(s.P50), a.Format(s.P90))
		if s.HasLoss {
			cells = append(cells, engine.FormatProbability(s.PLoss))
		}
		cells = append(cells, yes(row.BestNeutral))
		if a.RiskOn {
			cells = append(cells, yes(row.BestAtR))
		}
		out = append(out, cells)
	}
	return out
}

// CSVRows is the strategy table with exact decimal strings (SD and CE are
// computed in float64 and printed as decimals). Empty cells mean "not defined".
func (a *Analysis) CSVRows() [][]string {
	rows := [][]string{{"alternative", "expected_value", "certainty_equivalent", "risk_tolerance", "sd", "min", "max",
		"p10", "p50", "p90", "p_loss", "recommended_risk_neutral", "recommended_at_r"}}
	if a.Minimize {
		rows[0][1] = "expected_cost"
	}
	rStr := ""
	if a.RiskOn {
		rStr = decimal.NewFromFloat(a.R).String()
	}
	for _, row := range a.Rows {
		s := row.Stats
		ce, loss, atR := "", "", ""
		if s.HasCE {
			ce = s.CE.String()
		}
		if s.HasLoss {
			loss = s.PLoss.String()
		}
		if a.RiskOn {
			atR = fmt.Sprint(row.BestAtR)
		}
		rows = append(rows, []string{row.Name, s.EV.String(), ce, rStr, s.SD.String(), s.Min.String(), s.Max.String(),
			s.P10.String(), s.P50.String(), s.P90.String(), loss, fmt.Sprint(row.BestNeutral), atR})
	}
	return rows
}

// JSON shapes of `ramify profile --json`: numbers are decimal strings.
type (
	ProfileDoc struct {
		Node         string         `json:"node"`
		Objective    string         `json:"objective"`
		Currency     string         `json:"currency,omitempty"`
		Attitude     string         `json:"attitude"`
		Tolerance    string         `json:"riskTolerance,omitempty"`
		LossRule     string         `json:"lossRule,omitempty"`
		Alternatives []ProfileEntry `json:"alternatives"`
		Strategies   []ProfileEntry `json:"strategies,omitempty"`
		StrategyNote string         `json:"strategyNote,omitempty"`
		Dominance    []string       `json:"dominance"`
		Caution      string         `json:"caution"`
	}
	ProfileEntry struct {
		Name               string       `json:"name"`
		Outcomes           []OutcomeDoc `json:"outcomes"`
		EV                 string       `json:"expectedValue"`
		CE                 string       `json:"certaintyEquivalent,omitempty"`
		SD                 string       `json:"sd"`
		Min                string       `json:"min"`
		Max                string       `json:"max"`
		P10                string       `json:"p10"`
		P50                string       `json:"p50"`
		P90                string       `json:"p90"`
		PLoss              string       `json:"pLoss,omitempty"`
		RecommendedNeutral *bool        `json:"recommendedRiskNeutral,omitempty"`
		RecommendedAtR     *bool        `json:"recommendedAtR,omitempty"`
	}
	OutcomeDoc struct {
		Value       string `json:"value"`
		Probability string `json:"probability"`
		Cumulative  string `json:"cumulative"`
	}
)

// JSON builds the document `ramify profile --json` prints.
func (a *Analysis) JSON() ProfileDoc {
	p := a.Result.Project
	doc := ProfileDoc{Node: a.Node.ID, Objective: string(p.Objective), Currency: p.Currency,
		Attitude: "risk-neutral", Dominance: DominanceSummary(a.Profiles, a.Dominance), Caution: engine.Caution,
		StrategyNote: a.StrategyNote}
	if doc.Objective == "" {
		doc.Objective = string(engine.Maximize)
	}
	if a.RiskOn {
		doc.Attitude = "exponential"
		doc.Tolerance = decimal.NewFromFloat(a.R).String()
	}
	switch {
	case a.Minimize && a.Loss.HasThreshold:
		doc.LossRule = "cost > " + a.Loss.Threshold.String()
	case !a.Minimize:
		doc.LossRule = "payoff < " + a.Loss.Threshold.String()
	}
	for k, pr := range a.Profiles {
		e := entry(pr)
		nb, rb := a.Rows[k].BestNeutral, a.Rows[k].BestAtR
		e.RecommendedNeutral = &nb
		if a.RiskOn {
			e.RecommendedAtR = &rb
		}
		doc.Alternatives = append(doc.Alternatives, e)
	}
	for _, s := range a.Strategies {
		doc.Strategies = append(doc.Strategies, entry(s))
	}
	return doc
}

func entry(pr *Profile) ProfileEntry {
	s := pr.Stats
	e := ProfileEntry{Name: pr.Name, EV: s.EV.String(), SD: s.SD.String(), Min: s.Min.String(), Max: s.Max.String(),
		P10: s.P10.String(), P50: s.P50.String(), P90: s.P90.String(), Outcomes: []OutcomeDoc{}}
	if s.HasCE {
		e.CE = s.CE.String()
	}
	if s.HasLoss {
		e.PLoss = s.PLoss.String()
	}
	for k, o := range pr.Dist.Outcomes {
		e.Outcomes = append(e.Outcomes, OutcomeDoc{Value: o.Value.String(), Probability: o.Probability.String(),
			Cumulative: pr.Dist.Cumulative[k].String()})
	}
	return e
}
