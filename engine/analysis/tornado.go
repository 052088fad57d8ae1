package analysis

import (
	"context"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"
	"sync"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// TornadoBar is one variable's effect on the root value: the value with the
// variable at its low and at its high, every other input at base.
type TornadoBar struct {
	Variable        string
	Low, High, Base decimal.Decimal // the variable's values
	AtLow, AtHigh   decimal.Decimal // root value (EV, or CE with a risk attitude), exact
	ChoiceLow       int             // choice at the first decision of the recommended policy, at low
	ChoiceHigh      int             // the same at high
	Swing           decimal.Decimal // |AtHigh − AtLow|
	Flips           bool            // the range changes the recommendation
}

// TornadoResult is a tornado diagram's figures, bars sorted by swing, largest first.
type TornadoResult struct {
	Base         decimal.Decimal // root value at base
	Decision     *engine.Node    // first decision of the recommended policy (nil when there is none)
	BaseChoice   int
	Alternatives []string
	Bars         []TornadoBar
	Skipped      []string // variables left out, with the reason
	ValueWord    string
	Unit         string
	Decimals     int
}

// Tornado computes a tornado diagram over every variable with a low and a high.
// The float evaluator ranks them; every end-point is then computed with the
// exact engine, and the two must agree (a guard against a wrong fast path).
// p is evaluated here: pass a private clone when other goroutines use it.
func Tornado(ctx context.Context, p *engine.Project, r *engine.Result) (*TornadoResult, error) {
	if err := requireValid(r); err != nil {
		return nil, err
	}
	res := &TornadoResult{Base: r.DisplayValue(p.Root), BaseChoice: -1, ValueWord: r.ValueWord(),
		Unit: p.Currency, Decimals: p.Decimals}
	if pol := r.Policy(); len(pol) > 0 {
		res.Decision, res.BaseChoice = pol[0].Node, pol[0].Choice
		res.Alternatives = alternatives(res.Decision)
	}
	var settings []*Setting
	for _, v := range p.Variables {
		if strings.TrimSpace(v.Low) == "" && strings.TrimSpace(v.High) == "" {
			continue // no range: not part of the diagram
		}
		s, err := prepare(p, r, VariableInput(v.Name), nil, false)
		if err != nil {
			res.Skipped = append(res.Skipped, err.Error())
			continue
		}
		settings = append(settings, s)
	}
	if len(settings) == 0 {
		return res, nil
	}
	m, err := engine.CompileFast(p)
	if err != nil {
		return nil, err
	}
	type floatEnds struct{ low, high float64 }
	var fast []floatEnds
	kept := settings[:0]
	for _, s := range settings {
		b, err := s.bindFast(m, p)
		if err != nil {
			return nil, err
		}
		var fe floatEnds
		var rollErr error
		for end, x := range []decimal.Decimal{s.Low, s.High} {
			b.set(m, x.InexactFloat64())
			if err := m.Roll(); err != nil {
				rollErr = fmt.Errorf("variable %q left out: at %s: %w", s.Input.Variable, x, err)
				break
			}
			if end == 0 {
				fe.low = m.RootValue()
			} else {
				fe.high = m.RootValue()
			}
		}
		m.ResetVars()
		if rollErr != nil {
			res.Skipped = append(res.Skipped, rollErr.Error())
			continue
		}
		kept = append(kept, s)
		fast = append(fast, fe)
	}
	settings = kept
	bars, err := exactEnds(ctx, p, r, settings, res.Decision, res.BaseChoice)
	if err != nil {
		return nil, err
	}
	for i := range bars {
		for _, pair := range [][2]float64{{fast[i].low, bars[i].AtLow.InexactFloat64()}, {fast[i].high, bars[i].AtHigh.InexactFloat64()}} {
			if math.Abs(pair[0]-pair[1]) > 1e-9*math.Max(1, math.Abs(pair[1])) {
				return nil, fmt.Errorf("variable %q: the float evaluator gives %g but the exact engine %g; please report this", bars[i].Variable, pair[0], pair[1])
			}
		}
		bars[i].Flips = res.Decision != nil && (bars[i].ChoiceLow != res.BaseChoice || bars[i].ChoiceHigh != res.BaseChoice)
	}
	sort.SliceStable(bars, func(a, b int) bool {
		if c := bars[a].Swing.Cmp(bars[b].Swing); c != 0 {
			return c > 0
		}
		return bars[a].Variable < bars[b].Variable
	})
	res.Bars = bars
	return res, nil
}

// exactEnds evaluates each variable at its low and high with the exact engine
// (on reduced copies, see tornado_prune.go), on two goroutines.
func exactEnds(ctx context.Context, p *engine.Project, r *engine.Result, settings []*Setting, dec *engine.Node, baseChoice int) ([]TornadoBar, error) {
	bars := make([]TornadoBar, len(settings))
	errs := make([]error, len(settings))
	pr := newPruner(p, r)
	base := r.DisplayValue(p.Root)
	workers := 2
	if len(settings) < workers {
		workers = len(settings)
	}
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for i := w; i < len(settings); i += workers {
				if ctx.Err() != nil {
					errs[i] = ctx.Err()
					return
				}
				s := settings[i]
				b := TornadoBar{Variable: s.Input.Variable, Low: s.Low, High: s.High, Base: s.Base,
					AtLow: base, AtHigh: base, ChoiceLow: baseChoice, ChoiceHigh: baseChoice}
				if c := pr.project(s.Input.Variable); c != nil {
					var cdec *engine.Node
					if dec != nil {
						cdec = c.FindNode(dec.ID)
					}
					v := c.Variable(s.Input.Variable)
					for end, x := range []decimal.Decimal{s.Low, s.High} {
						v.Value = x.String()
						cr := engine.Evaluate(c)
						if !cr.Valid() {
							errs[i] = fmt.Errorf("at %s = %s: %s", s.Input, x, cr.Problems[0].Msg)
							break
						}
						val, choice := cr.DisplayValue(c.Root), baseChoice
						if cdec != nil {
							choice = cr.Choice(cdec)
						}
						if end == 0 {
							b.AtLow, b.ChoiceLow = val, choice
						} else {
							b.AtHigh, b.ChoiceHigh = val, choice
						}
					}
				}
				b.Swing = b.AtHigh.Sub(b.AtLow).Abs()
				bars[i] = b
			}
		}(w)
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	return bars, nil
}

// TornadoDoc is the JSON form of a tornado diagram (exact decimal strings).
type TornadoDoc struct {
	ValueWord  string          `json:"valueWord"`
	Currency   string          `json:"currency,omitempty"`
	Base       string          `json:"base"`
	Decision   string          `json:"decision,omitempty"`
	BaseChoice string          `json:"baseChoice,omitempty"`
	Bars       []TornadoBarDoc `json:"bars"`
	Skipped    []string        `json:"skipped,omitempty"`
	Caution    string          `json:"caution"`
}

type TornadoBarDoc struct {
	Variable   string `json:"variable"`
	Low        string `json:"low"`
	High       string `json:"high"`
	Base       string `json:"base"`
	AtLow      string `json:"valueAtLow"`
	AtHigh     string `json:"valueAtHigh"`
	Swing      string `json:"swing"`
	ChoiceLow  string `json:"choiceAtLow,omitempty"`
	ChoiceHigh string `json:"choiceAtHigh,omitempty"`
	Flips      bool   `json:"flipsRecommendation"`
}

func (t *TornadoResult) choiceName(i int) string {
	if t.Decision == nil || i < 0 || i >= len(t.Alternatives) {
		return ""
	}
	return t.Alternatives[i]
}

// Doc builds the JSON document `ramify tornado --json` prints.
func (t *TornadoResult) Doc() TornadoDoc {
	d := TornadoDoc{ValueWord: t.ValueWord, Currency: t.Unit, Base: t.Base.String(), Bars: []TornadoBarDoc{},
		Skipped: t.Skipped, Caution: engine.Caution, BaseChoice: t.choiceName(t.BaseChoice)}
	if t.Decision != nil {
		d.Decision = t.Decision.ID
	}
	for _, b := range t.Bars {
		d.Bars = append(d.Bars, TornadoBarDoc{Variable: b.Variable, Low: b.Low.String(), High: b.High.String(),
			Base: b.Base.String(), AtLow: b.AtLow.String(), AtHigh: b.AtHigh.String(), Swing: b.Swing.String(),
			ChoiceLow: t.choiceName(b.ChoiceLow), ChoiceHigh: t.choiceName(b.ChoiceHigh), Flips: b.Flips})
	}
	return d
}

// WriteCSV writes the tornado table, one row per variable in bar order.
func (t *TornadoResult) WriteCSV(w io.Writer) error {
	rows := [][]string{{"variable", "low", "high", "base", t.ValueWord + " at low", t.ValueWord + " at high",
		"swing", "choice at low", "choice at high", "flips recommendation"}}
	for _, b := range t.Bars {
		rows = append(rows, []string{b.Variable, b.Low.String(), b.High.String(), b.Base.String(), b.AtLow.String(),
			b.AtHigh.String(), b.Swing.String(), t.choiceName(b.ChoiceLow), t.choiceName(b.ChoiceHigh), fmt.Sprint(b.Flips)})
	}
	return writeRows(w, rows)
}
