package analysis

import (
	"fmt"
	"math"
	"sort"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// Outcome is one point of a risk profile: a payoff (a cost, for a cost
// objective) and its probability.
type Outcome struct {
	Value       decimal.Decimal
	Probability decimal.Decimal
}

// Distribution is a discrete risk profile: outcomes with equal payoffs merged,
// sorted from the lowest payoff to the highest, and the cumulative chance
// P(payoff ≤ x) at each of them. All figures are exact decimals.
type Distribution struct {
	Outcomes   []Outcome
	Cumulative []decimal.Decimal // Cumulative[k] = P(payoff ≤ Outcomes[k].Value)
}

// NewDistribution merges equal payoffs, sorts and accumulates. Outcomes with
// probability zero are dropped: they cannot happen.
func NewDistribution(outcomes []Outcome) Distribution {
	merged := map[string]int{}
	var out []Outcome
	for _, o := range outcomes {
		if o.Probability.IsZero() {
			continue
		}
		key := o.Value.String() // canonical: trailing zeros removed
		if k, ok := merged[key]; ok {
			out[k].Probability = out[k].Probability.Add(o.Probability)
			continue
		}
		merged[key] = len(out)
		out = append(out, o)
	}
	sort.Slice(out, func(a, b int) bool { return out[a].Value.LessThan(out[b].Value) })
	cum := make([]decimal.Decimal, len(out))
	sum := decimal.Zero
	for k, o := range out {
		sum = sum.Add(o.Probability)
		cum[k] = sum
	}
	return Distribution{Outcomes: out, Cumulative: cum}
}

// Total is the sum of the probabilities (1 for a complete profile).
func (d Distribution) Total() decimal.Decimal {
	if len(d.Cumulative) == 0 {
		return decimal.Zero
	}
	return d.Cumulative[len(d.Cumulative)-1]
}

// CDF is P(payoff ≤ x).
func (d Distribution) CDF(x decimal.Decimal) decimal.Decimal {
	// The last outcome not above x.
	k := sort.Search(len(d.Outcomes), func(i int) bool { return d.Outcomes[i].Value.GreaterThan(x) })
	if k == 0 {
		return decimal.Zero
	}
	return d.Cumulative[k-1]
}

// Mean is the expected value Σ p·x, exact.
func (d Distribution) Mean() decimal.Decimal {
	sum := decimal.Zero
	for _, o := range d.Outcomes {
		sum = sum.Add(o.Probability.Mul(o.Value))
	}
	return sum
}

// Variance is Σ p·(x − mean)², exact.
func (d Distribution) Variance() decimal.Decimal {
	mean := d.Mean()
	sum := decimal.Zero
	for _, o := range d.Outcomes {
		dev := o.Value.Sub(mean)
		sum = sum.Add(o.Probability.Mul(dev).Mul(dev))
	}
	return sum
}

// Quantile is the lower quantile: the smallest payoff x with P(payoff ≤ x) ≥ q
// (the generalised inverse of the cumulative profile; Hyndman & Fan 1996,
// "Sample Quantiles in Statistical Packages", definition 1, applied to a
// discrete distribution). So P50 is a payoff that is reached or bettered at
// least half of the time, and P90 for a cost is the cost not exceeded with
// at least 90 % chance.
func (d Distribution) Quantile(q decimal.Decimal) decimal.Decimal {
	for k, c := range d.Cumulative {
		if c.GreaterThanOrEqual(q) {
			return d.Outcomes[k].Value
		}
	}
	if n := len(d.Outcomes); n > 0 {
		return d.Outcomes[n-1].Value
	}
	return decimal.Zero
}

// Stats are the figures a strategy table shows for one risk profile. Decimal
// fields are exact except SD (a square root, computed in float64 and shown as
// a decimal) and CE (exponential utility, float64 inside).
type Stats struct {
	EV, SD, Min, Max decimal.Decimal
	P10, P50, P90    decimal.Decimal
	PLoss            decimal.Decimal
	HasLoss          bool // false when P(loss) is not defined (a cost objective with no threshold)
	CE               decimal.Decimal
	HasCE            bool
}

// LossRule says what counts as a loss. For a benefit objective a loss is a
// payoff below Threshold (0 unless set); for a cost objective it is a cost
// above Threshold, which the user must give.
type LossRule struct {
	Minimize     bool
	Threshold    decimal.Decimal
	HasThreshold bool
}

// Loss is the probability of a loss under the rule, and whether it is defined.
func (d Distribution) Loss(rule LossRule) (decimal.Decimal, bool) {
	sum := decimal.Zero
	switch {
	case rule.Minimize && !rule.HasThreshold:
		return decimal.Zero, false
	case rule.Minimize:
		for _, o := range d.Outcomes {
			if o.Value.GreaterThan(rule.Threshold) {
				sum = sum.Add(o.Probability)
			}
		}
	default:
		for _, o := range d.Outcomes {
			if o.Value.LessThan(rule.Threshold) {
				sum = sum.Add(o.Probability)
			}
		}
	}
	return sum, true
}

var (
	tenth     = decimal.RequireFromString("0.1")
	half      = decimal.RequireFromString("0.5")
	ninetieth = decimal.RequireFromString("0.9")
)

// Statistics computes the profile's figures. R is the risk tolerance for the
// certainty equivalent (0: none). With a cost objective the utility applies to
// the negated cost and the CE is reported as a cost, as the engine does.
func (d Distribution) Statistics(rule LossRule, R float64) Stats {
	s := Stats{EV: d.Mean()}
	if len(d.Outcomes) == 0 {
		return s
	}
	s.Min = d.Outcomes[0].Value
	s.Max = d.Outcomes[len(d.Outcomes)-1].Value
	s.SD = decimal.NewFromFloat(math.Sqrt(math.Max(0, d.Variance().InexactFloat64())))
	s.P10, s.P50, s.P90 = d.Quantile(tenth), d.Quantile(half), d.Quantile(ninetieth)
	s.PLoss, s.HasLoss = d.Loss(rule)
	if R != 0 && !math.IsNaN(R) && !math.IsInf(R, 0) {
		s.CE, s.HasCE = decimal.NewFromFloat(d.CertaintyEquivalent(R, rule.Minimize)), true
	}
	return s
}

// CertaintyEquivalent of the profile under exponential utility with tolerance R,
// through the engine's own formula (engine.CertaintyEquivalent).
func (d Distribution) CertaintyEquivalent(R float64, minimize bool) float64 {
	sign := 1.0
	if minimize {
		sign = -1
	}
	ps := make([]float64, len(d.Outcomes))
	xs := make([]float64, len(d.Outcomes))
	for k, o := range d.Outcomes {
		ps[k] = o.Probability.InexactFloat64()
		xs[k] = sign * o.Value.InexactFloat64()
	}
	return sign * engine.CertaintyEquivalent(ps, xs, R)
}

// Policy picks a branch at a decision node while a profile is traced.
type Policy func(n *engine.Node) int

// TraceProfile collects the payoffs reachable from branch (or the whole node,
// when branch < 0) of n when every decision below follows choose. Payoffs are
// measured from n: cash collected before reaching n is left out, the way the
// engine's value at n leaves it out. Probabilities are conditional on reaching n.
func TraceProfile(r *engine.Result, n *engine.Node, branch int, choose Policy) (Distribution, error) {
	type item struct {
		n    *engine.Node
		prob decimal.Decimal
		cash decimal.Decimal
	}
	one := decimal.NewFromInt(1)
	var stack []item
	if branch >= 0 {
		if branch >= len(n.Branches) || n.Branches[branch].To == nil {
			return Distribution{}, fmt.Errorf("%s: no such branch", engine.Place(n, branch))
		}
		stack = append(stack, item{n.Branches[branch].To, one, r.Cash(n, branch)})
	} else {
		stack = append(stack, item{n, one, decimal.Zero})
	}
	var outs []Outcome
	for len(stack) > 0 {
		it := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		if r.Broken(it.n) {
			return Distribution{}, fmt.Errorf("%s cannot be evaluated; fix its problems first", engine.Place(it.n, -1))
		}
		switch it.n.Kind {
		case engine.End:
			outs = append(outs, Outcome{Value: it.cash.Add(r.Payoff(it.n)), Probability: it.prob})
		case engine.Chance:
			for i, b := range it.n.Branches {
				p := r.Probability(it.n, i)
				if p.IsZero() {
					continue
				}
				stack = append(stack, item{b.To, it.prob.Mul(p), it.cash.Add(r.Cash(it.n, i))})
			}
		case engine.Decision:
			c := choose(it.n)
			if c < 0 || c >= len(it.n.Branches) {
				return Distribution{}, fmt.Errorf("%s has no choice to follow", engine.Place(it.n, -1))
			}
			stack = append(stack, item{it.n.Branches[c].To, it.prob, it.cash.Add(r.Cash(it.n, c))})
		default:
			return Distribution{}, fmt.Errorf("%s: unknown kind %q", engine.Place(it.n, -1), it.n.Kind)
		}
	}
	return NewDistribution(outs), nil
}

// ResultPolicy follows the result's recommended choices.
func ResultPolicy(r *engine.Result) Policy {
	return func(n *engine.Node) int { return r.Choice(n) }
}
