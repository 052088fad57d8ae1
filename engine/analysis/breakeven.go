package analysis

import (
	"fmt"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// BreakEven is a value of an input where the best alternative at a decision changes.
type BreakEven struct {
	At       decimal.Decimal // the input value
	From, To int             // best alternative (branch index) just below and just above
	Value    decimal.Decimal // value of From at At, exact (the tied value when solved)
	Exact    bool            // solved exactly (the value is linear in the input there); else bisected
}

// Method says how the break-even was found, for tables and notes.
func (b BreakEven) Method() string {
	if b.Exact {
		return "solved exactly (linear)"
	}
	return "bisected to 1e-12 relative"
}

// bisectRel is the relative width at which bisection stops.
var bisectRel = decimal.New(1, -12)

// linearTol is the relative difference under which exact values count as equal:
// formula divisions keep engine.DivisionDigits digits, everything else is exact.
var linearTol = decimal.New(1, -20)

var halfDec = decimal.New(5, -1)

// crossingFinder locates break-evens with the exact engine on a private clone.
type crossingFinder struct {
	ex    *exactModel
	dec   *engine.Node // the decision in the clone
	evals int          // exact evaluations made (for tests and reports)
	memo  map[string]atResult
}

// atResult is one exact evaluation remembered: the ends of an interval are
// asked for more than once.
type atResult struct {
	vals []decimal.Decimal
	best int
}

func newCrossingFinder(p *engine.Project, s *Setting, decisionID string) *crossingFinder {
	return newCrossingFinderOn(p.Clone(), s, decisionID)
}

// newCrossingFinderOn works on a private copy the caller made (cloned or reduced).
func newCrossingFinderOn(copy *engine.Project, s *Setting, decisionID string) *crossingFinder {
	ex := newExactOn(copy, s)
	return &crossingFinder{ex: ex, dec: ex.node(decisionID)}
}

// at evaluates exactly at x: the values of the decision's alternatives and the best one.
func (f *crossingFinder) at(x decimal.Decimal) ([]decimal.Decimal, int, error) {
	key := x.String()
	if m, ok := f.memo[key]; ok {
		return m.vals, m.best, nil
	}
	f.evals++
	r, err := f.ex.eval(x)
	if err != nil {
		return nil, -1, err
	}
	vals := make([]decimal.Decimal, len(f.dec.Branches))
	for i := range vals {
		vals[i] = r.BranchValue(f.dec, i)
	}
	if f.memo == nil || len(f.memo) > 64 {
		f.memo = map[string]atResult{}
	}
	f.memo[key] = atResult{vals, r.Choice(f.dec)}
	return vals, r.Choice(f.dec), nil
}

func nearlyEqual(a, b decimal.Decimal) bool {
	scale := decimal.Max(decimal.NewFromInt(1), a.Abs(), b.Abs())
	return a.Sub(b).Abs().LessThanOrEqual(scale.Mul(linearTol))
}

// between lists every change of the best alternative in [lo, hi], as the exact
// engine sees it at the ends; changes that start and end inside one interval
// (the best leaves and comes back) are not seen.
func (f *crossingFinder) between(lo, hi decimal.Decimal) ([]BreakEven, error) {
	_, wlo, err := f.at(lo)
	if err != nil {
		return nil, err
	}
	_, whi, err := f.at(hi)
	if err != nil {
		return nil, err
	}
	var out []BreakEven
	for guard := 0; wlo != whi && guard < 64; guard++ {
		be, next, wnext, err := f.first(lo, hi, wlo, whi)
		if err != nil {
			return out, err
		}
		out = append(out, be)
		if !next.GreaterThan(lo) && wnext == wlo {
			break // no progress; cannot happen with a consistent engine
		}
		lo, wlo = next, wnext
	}
	return out, nil
}

// first finds the first change of the best alternative after lo, where a is best
// at lo and b at hi. It returns the break-even and a point after it with its winner.
func (f *crossingFinder) first(lo, hi decimal.Decimal, a, b int) (BreakEven, decimal.Decimal, int, error) {
	if be, ok, err := f.solveLinear(lo, hi, a, b); err != nil {
		return BreakEven{}, lo, a, err
	} else if ok {
		return be, be.At, b, nil
	}
	// Bisect on "a is best": a is best at l and not at h.
	l, h := lo, hi
	wh := b
	floor := hi.Sub(lo).Abs().Mul(decimal.New(1, -15)) // for a break-even at (or near) zero
	for i := 0; i < 400; i++ {
		width := h.Sub(l)
		scale := decimal.Max(l.Abs(), h.Abs())
		if width.LessThanOrEqual(scale.Mul(bisectRel)) || width.LessThanOrEqual(floor) {
			break
		}
		m := l.Add(h).Mul(halfDec)
		_, w, err := f.at(m)
		if err != nil {
			return BreakEven{}, lo, a, err
		}
		if w == a {
			l = m
		} else {
			h, wh = m, w
		}
	}
	at := l.Add(h).Mul(halfDec)
	if d := at.NumDigits(); d > 16 {
		if r := at.Round(-at.Exponent() - int32(d-16)); !r.LessThan(l) && !r.GreaterThan(h) {
			at = r
		}
	}
	vals, _, err := f.at(at)
	if err != nil {
		return BreakEven{}, lo, a, err
	}
	return BreakEven{At: at, From: a, To: wh, Value: vals[a]}, h, wh, nil
}

// solveLinear checks whether alternatives a and b are linear in the input on
// [lo, hi] (exact values at three points) and, if so, solves a = b with decimal
// arithmetic. ok is false when the values are not linear there or the solution
// is not a change of the best alternative (a third one is better at it).
func (f *crossingFinder) solveLinear(lo, hi decimal.Decimal, a, b int) (BreakEven, bool, error) {
	mid := lo.Add(hi).Mul(halfDec)
	vLo, _, err := f.at(lo)
	if err != nil {
		return BreakEven{}, false, err
	}
	vMid, _, err := f.at(mid)
	if err != nil {
		return BreakEven{}, false, err
	}
	vHi, _, err := f.at(hi)
	if err != nil {
		return BreakEven{}, false, err
	}
	for _, k := range []int{a, b} {
		if !nearlyEqual(vMid[k], vLo[k].Add(vHi[k]).Mul(halfDec)) {
			return BreakEven{}, false, nil
		}
	}
	dLo := vLo[a].Sub(vLo[b])
	dHi := vHi[a].Sub(vHi[b])
	if dLo.Equal(dHi) {
		return BreakEven{}, false, nil
	}
	// d(x) = dLo + (dHi − dLo)(x − lo)/(hi − lo) = 0
	x := lo.Add(engine.Divide(dLo.Mul(hi.Sub(lo)), dLo.Sub(dHi)))
	if x.LessThan(lo) || x.GreaterThan(hi) {
		return BreakEven{}, false, nil
	}
	vals, best, err := f.at(x)
	if err != nil {
		return BreakEven{}, false, err
	}
	if !nearlyEqual(vals[a], vals[b]) || !nearlyEqual(vals[best], vals[a]) {
		return BreakEven{}, false, nil
	}
	return BreakEven{At: x, From: a, To: b, Value: vals[a], Exact: true}, true, nil
}

// describe is a one-line statement of a break-even.
func (b BreakEven) describe(dec *engine.Node, name string) string {
	return fmt.Sprintf("%s = %s: best changes from %q to %q (%s)", name, b.At,
		engine.BranchTitle(dec, b.From), engine.BranchTitle(dec, b.To), b.Method())
}
