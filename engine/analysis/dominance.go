package analysis

import (
	"fmt"

	"github.com/shopspring/decimal"
)

// Dominance is one finding between two profiles: Better dominates Worse at
// first or second order (Order 1 or 2). Sentence says it in plain words.
type Dominance struct {
	Better, Worse int // indexes into the profiles compared
	Order         int
	Sentence      string
}

// Stochastic dominance in the usual sense (Hadar & Russell 1969, "Rules for
// Ordering Uncertain Prospects", American Economic Review; Levy 1992,
// "Stochastic Dominance and Expected Utility: Survey and Analysis", Management
// Science): on payoffs where more is better, A dominates B at first order when
// F_A(x) ≤ F_B(x) at every x, and at second order when ∫_{−∞}^{x} F_A ≤ ∫ F_B
// at every x; in both cases with strict inequality somewhere. A cost objective
// is compared on the negated cost, so less is better.

// FirstOrder reports whether a dominates b at first order.
func FirstOrder(a, b Distribution, minimize bool) bool {
	a, b = benefit(a, minimize), benefit(b, minimize)
	strict := false
	for _, x := range support(a, b) {
		fa, fb := a.CDF(x), b.CDF(x)
		if fa.GreaterThan(fb) {
			return false
		}
		if fa.LessThan(fb) {
			strict = true
		}
	}
	return strict
}

// SecondOrder reports whether a dominates b at second order. The integral of the
// cumulative profile, G(x) = E[(x − X)⁺], the expected shortfall below x, is
// piecewise linear between outcomes, so comparing it at every outcome of
// either profile is exact.
func SecondOrder(a, b Distribution, minimize bool) bool {
	a, b = benefit(a, minimize), benefit(b, minimize)
	xs := support(a, b)
	ga, gb := decimal.Zero, decimal.Zero
	strict := false
	for k, x := range xs {
		if k > 0 {
			step := x.Sub(xs[k-1])
			ga = ga.Add(a.CDF(xs[k-1]).Mul(step))
			gb = gb.Add(b.CDF(xs[k-1]).Mul(step))
		}
		if ga.GreaterThan(gb) {
			return false
		}
		if ga.LessThan(gb) {
			strict = true
		}
	}
	return strict
}

// Same reports whether two profiles are identical.
func Same(a, b Distribution) bool {
	if len(a.Outcomes) != len(b.Outcomes) {
		return false
	}
	for k := range a.Outcomes {
		if !a.Outcomes[k].Value.Equal(b.Outcomes[k].Value) || !a.Outcomes[k].Probability.Equal(b.Outcomes[k].Probability) {
			return false
		}
	}
	return true
}

// FindDominance compares every pair of profiles and keeps the strongest finding
// for each ordered pair: first order where it holds, otherwise second order.
func FindDominance(profiles []*Profile, minimize bool) []Dominance {
	var out []Dominance
	for i, a := range profiles {
		for j, b := range profiles {
			if i == j || Same(a.Dist, b.Dist) {
				continue
			}
			switch {
			case FirstOrder(a.Dist, b.Dist, minimize):
				out = append(out, Dominance{i, j, 1, dominanceSentence(a.Name, b.Name, 1, minimize)})
			case SecondOrder(a.Dist, b.Dist, minimize):
				out = append(out, Dominance{i, j, 2, dominanceSentence(a.Name, b.Name, 2, minimize)})
			}
		}
	}
	return out
}

func dominanceSentence(better, worse string, order int, minimize bool) string {
	switch {
	case order == 1 && minimize:
		return fmt.Sprintf("%q dominates %q at first order: at every cost level its chance of costing no more than that "+
			"is as high or higher, so anyone who prefers lower cost would choose it.", better, worse)
	case order == 1:
		return fmt.Sprintf("%q dominates %q at first order: at every level its chance of doing at least that well "+
			"is as high or higher, so anyone who prefers more to less would choose it.", better, worse)
	case minimize:
		return fmt.Sprintf("%q dominates %q at second order: at every cost level its expected overrun above that "+
			"level is no larger, so anyone who prefers lower cost and is averse to risk would choose it.", better, worse)
	}
	return fmt.Sprintf("%q dominates %q at second order: at every level its expected shortfall below that level "+
		"is no larger, so anyone who prefers more to less and is averse to risk would choose it.", better, worse)
}

// DominanceSummary is the list of sentences for a view, with one sentence
// saying so when nothing dominates and one for alternatives with the same profile.
func DominanceSummary(profiles []*Profile, findings []Dominance) []string {
	var out []string
	for _, f := range findings {
		out = append(out, f.Sentence)
	}
	for i := range profiles {
		for j := i + 1; j < len(profiles); j++ {
			if Same(profiles[i].Dist, profiles[j].Dist) {
				out = append(out, fmt.Sprintf("%q and %q have the same risk profile.", profiles[i].Name, profiles[j].Name))
			}
		}
	}
	if len(findings) == 0 && len(profiles) > 1 {
		out = append(out, "No alternative dominates another at first or second order: the choice depends on the attitude to risk.")
	}
	return out
}

// benefit turns a cost profile into a payoff profile (negated cost) so that
// more is better in every comparison.
func benefit(d Distribution, minimize bool) Distribution {
	if !minimize {
		return d
	}
	neg := make([]Outcome, len(d.Outcomes))
	for k, o := range d.Outcomes {
		neg[k] = Outcome{Value: o.Value.Neg(), Probability: o.Probability}
	}
	return NewDistribution(neg)
}

// support is the sorted union of both profiles' outcomes (both are sorted).
func support(a, b Distribution) []decimal.Decimal {
	xs := make([]decimal.Decimal, 0, len(a.Outcomes)+len(b.Outcomes))
	i, j := 0, 0
	for i < len(a.Outcomes) || j < len(b.Outcomes) {
		var x decimal.Decimal
		switch {
		case j >= len(b.Outcomes) || (i < len(a.Outcomes) && a.Outcomes[i].Value.LessThan(b.Outcomes[j].Value)):
			x = a.Outcomes[i].Value
			i++
		case i >= len(a.Outcomes) || b.Outcomes[j].Value.LessThan(a.Outcomes[i].Value):
			x = b.Outcomes[j].Value
			j++
		default: // equal
			x = a.Outcomes[i].Value
			i++
			j++
		}
		xs = append(xs, x)
	}
	return xs
}
