package analysis

import (
	"fmt"

	"github.com/ramify-app/ramify/engine"
	"github.com/shopspring/decimal"
)

var one = decimal.NewFromInt(1)

// BayesResult is what Bayes' rule gives for a study: how likely each result is,
// and what each result says about the states.
type BayesResult struct {
	PResult   []decimal.Decimal   // P(result r) = Σ_s P(r | s)·P(s)
	Posterior [][]decimal.Decimal // Posterior[r][s] = P(s | r); nil row when P(r) = 0
}

// Bayes applies Bayes' rule. prior[s] is P(state s) and likelihood[r][s] is
// P(result r | state s). Products and sums are exact; the division keeps
// engine.DivisionDigits significant digits. Each state's column of the
// likelihood table must add up to exactly 1 (some result always comes out).
func Bayes(prior []decimal.Decimal, likelihood [][]decimal.Decimal) (*BayesResult, error) {
	if len(prior) == 0 {
		return nil, fmt.Errorf("no states")
	}
	if len(likelihood) == 0 {
		return nil, fmt.Errorf("no study results (give at least two)")
	}
	sum := decimal.Zero
	for s, p := range prior {
		if p.IsNegative() || p.GreaterThan(one) {
			return nil, fmt.Errorf("prior of state %d: %s is outside 0 to 1", s+1, p)
		}
		sum = sum.Add(p)
	}
	if !sum.Equal(one) {
		return nil, fmt.Errorf("the prior probabilities add up to %s, not 1", sum)
	}
	for r, row := range likelihood {
		if len(row) != len(prior) {
			return nil, fmt.Errorf("result %d: %d likelihoods for %d states", r+1, len(row), len(prior))
		}
		for s, l := range row {
			if l.IsNegative() || l.GreaterThan(one) {
				return nil, fmt.Errorf("P(result %d | state %d): %s is outside 0 to 1", r+1, s+1, l)
			}
		}
	}
	for s := range prior {
		col := decimal.Zero
		for _, row := range likelihood {
			col = col.Add(row[s])
		}
		if !col.Equal(one) {
			return nil, fmt.Errorf("for state %d the chances of the results add up to %s, not 1", s+1, col)
		}
	}
	out := &BayesResult{PResult: make([]decimal.Decimal, len(likelihood)), Posterior: make([][]decimal.Decimal, len(likelihood))}
	for r, row := range likelihood {
		joint := make([]decimal.Decimal, len(prior))
		pr := decimal.Zero
		for s, l := range row {
			joint[s] = l.Mul(prior[s])
			pr = pr.Add(joint[s])
		}
		out.PResult[r] = pr
		if pr.IsZero() {
			continue
		}
		post := make([]decimal.Decimal, len(prior))
		for s := range joint {
			post[s] = engine.Divide(joint[s], pr)
		}
		out.Posterior[r] = post
	}
	return out, nil
}

// probabilityTexts writes a distribution as decimal texts that add up to exactly
// 1: every entry is cut (not rounded) to places decimals, and the largest takes
// the remainder, so no entry moves by more than 10^-places per other entry.
func probabilityTexts(ps []decimal.Decimal, places int32) []string {
	out := make([]string, len(ps))
	largest := 0
	for i, p := range ps {
		if p.GreaterThan(ps[largest]) {
			largest = i
		}
	}
	sum := decimal.Zero
	cut := make([]decimal.Decimal, len(ps))
	for i, p := range ps {
		if i == largest {
			continue
		}
		cut[i] = p.Truncate(places)
		sum = sum.Add(cut[i])
	}
	cut[largest] = one.Sub(sum)
	for i := range cut {
		out[i] = cut[i].String()
	}
	return out
}
