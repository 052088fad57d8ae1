package analysis

import (
	"context"
	"fmt"
	"io"
	"strconv"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// DefaultSteps is the number of intervals a one-way sweep uses unless told.
const DefaultSteps = 50

// SweepOptions shape a one-way sweep.
type SweepOptions struct {
	Range    *Range // nil: the input's own range (see Prepare)
	Decision string // id of the decision whose alternatives are compared; "" for the root
	Steps    int    // intervals across the range; 0 means DefaultSteps
}

// SweepResult holds the values of each alternative at a decision across an
// input's range and every break-even found.
type SweepResult struct {
	Setting      *Setting
	InputName    string
	Decision     *engine.Node // in the analysed project
	Alternatives []string
	X            []decimal.Decimal // Steps+1 input values, Low to High
	Values       [][]float64       // [point][alternative], on the decision scale (float; charts only)
	Best         []int             // best alternative at each point
	BreakEvens   []BreakEven       // every change of the best alternative, confirmed exactly
	BaseBest     int               // best alternative at the base case
	ValueWord    string            // "expected cost", "certainty equivalent", ...
	Unit         string
	Decimals     int
}

// decisionNode finds the decision whose alternatives an analysis compares.
func decisionNode(p *engine.Project, id string) (*engine.Node, error) {
	n := p.Root
	if id != "" {
		if n = p.FindNode(id); n == nil {
			return nil, fmt.Errorf("unknown node %q", id)
		}
	}
	if n == nil {
		return nil, fmt.Errorf("the project has no root node")
	}
	if n.Kind != engine.Decision {
		if id == "" {
			return nil, fmt.Errorf("the root %s is a %s node; name a decision node to compare its alternatives", engine.Place(n, -1), n.Kind)
		}
		return nil, fmt.Errorf("%s is a %s node; name a decision node", engine.Place(n, -1), n.Kind)
	}
	return n, nil
}

func alternatives(n *engine.Node) []string {
	out := make([]string, len(n.Branches))
	for i := range n.Branches {
		out[i] = engine.BranchTitle(n, i)
	}
	return out
}

// gridPoints returns steps+1 exact values from low to high.
func gridPoints(low, high decimal.Decimal, steps int) []decimal.Decimal {
	out := make([]decimal.Decimal, steps+1)
	width := high.Sub(low)
	for k := 0; k <= steps; k++ {
		switch k {
		case 0:
			out[k] = low
		case steps:
			out[k] = high
		default:
			out[k] = low.Add(engine.Divide(width.Mul(decimal.NewFromInt(int64(k))), decimal.NewFromInt(int64(steps))))
		}
	}
	return out
}

// compileBound finds the decision whose alternatives are compared (default: the
// root), compiles p for the float evaluator and binds each setting's input to it.
func compileBound(p *engine.Project, decisionID string, settings ...*Setting) (*engine.Node, *engine.FastModel, []fastInput, error) {
	dec, err := decisionNode(p, decisionID)
	if err != nil {
		return nil, nil, nil, err
	}
	m, err := engine.CompileFast(p)
	if err != nil {
		return nil, nil, nil, err
	}
	binds := make([]fastInput, len(settings))
	for i, s := range settings {
		if binds[i], err = s.bindFast(m, p); err != nil {
			return nil, nil, nil, err
		}
	}
	return dec, m, binds, nil
}

func checkSteps(steps int) (int, error) {
	if steps == 0 {
		return DefaultSteps, nil
	}
	if steps < 1 || steps > 100000 {
		return 0, fmt.Errorf("steps: %d is not between 1 and 100000", steps)
	}
	return steps, nil
}

// Sweep varies one input across its range. Values come from the float
// evaluator; every break-even is located and confirmed with the exact engine.
// The project is not changed.
func Sweep(ctx context.Context, p *engine.Project, r *engine.Result, in Input, o SweepOptions) (*SweepResult, error) {
	steps, err := checkSteps(o.Steps)
	if err != nil {
		return nil, err
	}
	s, err := Prepare(p, r, in, o.Range)
	if err != nil {
		return nil, err
	}
	dec, m, binds, err := compileBound(p, o.Decision, s)
	if err != nil {
		return nil, err
	}
	bind := binds[0]
	res := &SweepResult{Setting: s, InputName: s.Name(p), Decision: dec, Alternatives: alternatives(dec),
		X: gridPoints(s.Low, s.High, steps), BaseBest: r.Choice(dec), ValueWord: r.ValueWord(),
		Unit: p.Currency, Decimals: p.Decimals}
	for _, x := range res.X {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		bind.set(m, x.InexactFloat64())
		if err := m.Roll(); err != nil {
			return nil, fmt.Errorf("at %s = %s: %w", s.Input, x, err)
		}
		vals := make([]float64, len(dec.Branches))
		for i := range vals {
			vals[i] = m.BranchValue(dec, i)
		}
		res.Values = append(res.Values, vals)
		res.Best = append(res.Best, m.ChoiceOf(dec))
	}
	f := newCrossingFinder(p, s, dec.ID)
	for k := 1; k < len(res.X); k++ {
		if res.Best[k] == res.Best[k-1] {
			continue
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		bes, err := f.between(res.X[k-1], res.X[k])
		if err != nil {
			return nil, err
		}
		res.BreakEvens = append(res.BreakEvens, bes...)
	}
	return res, nil
}

// SweepDoc is the JSON form of a sweep; numbers a user reads are exact decimal strings.
type SweepDoc struct {
	Input        string         `json:"input"`
	Rule         string         `json:"probabilityRule,omitempty"`
	Decision     string         `json:"decision"`
	Low          string         `json:"low"`
	High         string         `json:"high"`
	Base         string         `json:"base"`
	ValueWord    string         `json:"valueWord"`
	Currency     string         `json:"currency,omitempty"`
	Alternatives []string       `json:"alternatives"`
	BreakEvens   []BreakEvenDoc `json:"breakEvens"`
	Points       []PointDoc     `json:"points"`
	Caution      string         `json:"caution"`
}

type BreakEvenDoc struct {
	At     string `json:"at"`
	From   string `json:"from"`
	To     string `json:"to"`
	Value  string `json:"value"`
	Method string `json:"method"`
}

type PointDoc struct {
	X      string    `json:"x"`
	Values []float64 `json:"values"`
	Best   string    `json:"best"`
}

// Doc builds the JSON document `ramify sweep --json` prints.
func (s *SweepResult) Doc() SweepDoc {
	d := SweepDoc{Input: s.InputName, Rule: s.Setting.Rule, Decision: s.Decision.ID,
		Low: s.Setting.Low.String(), High: s.Setting.High.String(), Base: s.Setting.Base.String(),
		ValueWord: s.ValueWord, Currency: s.Unit, Alternatives: s.Alternatives,
		BreakEvens: []BreakEvenDoc{}, Caution: engine.Caution}
	for _, b := range s.BreakEvens {
		d.BreakEvens = append(d.BreakEvens, BreakEvenDoc{At: b.At.String(), From: s.Alternatives[b.From],
			To: s.Alternatives[b.To], Value: b.Value.String(), Method: b.Method()})
	}
	for k, x := range s.X {
		d.Points = append(d.Points, PointDoc{X: x.String(), Values: s.Values[k], Best: s.Alternatives[s.Best[k]]})
	}
	return d
}

// WriteCSV writes one row per point: the input value, each alternative's value, the best.
func (s *SweepResult) WriteCSV(w io.Writer) error {
	head := append([]string{s.InputName}, s.Alternatives...)
	head = append(head, "best")
	rows := [][]string{head}
	for k, x := range s.X {
		row := []string{x.String()}
		for _, v := range s.Values[k] {
			row = append(row, strconv.FormatFloat(v, 'g', 15, 64))
		}
		rows = append(rows, append(row, s.Alternatives[s.Best[k]]))
	}
	return writeRows(w, rows)
}

// WriteBreakEvensCSV writes the break-even table.
func (s *SweepResult) WriteBreakEvensCSV(w io.Writer) error {
	rows := [][]string{{s.InputName, "best below", "best above", "value at break-even", "method"}}
	for _, b := range s.BreakEvens {
		rows = append(rows, []string{b.At.String(), s.Alternatives[b.From], s.Alternatives[b.To], b.Value.String(), b.Method()})
	}
	return writeRows(w, rows)
}

// Describe lists the break-evens in sentences.
func (s *SweepResult) Describe() []string {
	if len(s.BreakEvens) == 0 {
		return []string{fmt.Sprintf("%q is best across the whole range of %s (%s to %s).",
			s.Alternatives[s.Best[0]], s.InputName, s.Setting.Low, s.Setting.High)}
	}
	var out []string
	for _, b := range s.BreakEvens {
		out = append(out, b.describe(s.Decision, s.InputName))
	}
	return out
}
