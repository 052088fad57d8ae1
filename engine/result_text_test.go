package engine_test

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

// The result's texts come from the roll-back's int64 forms; they must print
// every number exactly as the one formatter prints the decimal (which is
// checked against decimal's own rounding in format_test.go), also for values
// that need the decimal fall-back: huge payoffs, long quotients, fine
// probabilities, many decimals.
func TestResultTextsMatchFormat(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 8))
	odd := []string{"1/3", "-2/7", "123456789012345678901234", "-98765432109876543210.5", "0.00005", "-0.00004", "1e3", "0", "0.125"}
	checked := 0
	for trial := 0; trial < 120; trial++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 40, MaxBranches: 4, UseRest: trial%2 == 0, UseCash: true, UseVars: trial%3 == 0})
		p.Decimals = rng.IntN(21)
		if trial%4 == 0 {
			p.Currency = "EUR"
		}
		if trial%5 == 0 {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "5000"}
		}
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			if n.Kind == engine.End && rng.IntN(3) == 0 {
				n.Payoff = odd[rng.IntN(len(odd))]
			}
			for _, b := range n.Branches {
				if b.Cash != "" && rng.IntN(3) == 0 {
					b.Cash = odd[rng.IntN(len(odd))]
				}
			}
			return true
		})
		r := engine.Evaluate(p)
		require.NotNil(t, r)
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			assert.Equal(t, r.Format(r.ValueOf(n)), r.ValueText(n), "value of %s", n.ID)
			assert.Equal(t, r.Format(r.PathValue(n)), r.PathValueText(n), "path value of %s", n.ID)
			// the Append forms add the same text after what the buffer holds
			assert.Equal(t, "x"+r.Format(r.ValueOf(n)), string(r.AppendValueText([]byte("x"), n)), "value of %s", n.ID)
			assert.Equal(t, "x"+r.Format(r.PathValue(n)), string(r.AppendPathValueText([]byte("x"), n)), "path value of %s", n.ID)
			for i := range n.Branches {
				assert.Equal(t, engine.FormatProbability(r.Probability(n, i)), r.ProbabilityText(n, i), "probability %s/%d", n.ID, i)
				assert.Equal(t, r.Format(r.Cash(n, i)), r.CashText(n, i), "cash %s/%d", n.ID, i)
				assert.Equal(t, "x"+engine.FormatProbability(r.Probability(n, i)), string(r.AppendProbabilityText([]byte("x"), n, i)), "probability %s/%d", n.ID, i)
				assert.Equal(t, "x"+r.Format(r.Cash(n, i)), string(r.AppendCashText([]byte("x"), n, i)), "cash %s/%d", n.ID, i)
			}
			checked++
			return true
		})
	}
	assert.Greater(t, checked, 2000)
	// a node the result does not know reads as zero, as the decimal accessors do
	r := engine.Evaluate(enginetest.RandomProject(rng, enginetest.Options{Nodes: 5}))
	stranger := &engine.Node{ID: "x"}
	assert.Equal(t, r.Format(r.ValueOf(stranger)), r.ValueText(stranger))
	assert.Equal(t, r.Format(r.PathValue(stranger)), r.PathValueText(stranger))
	assert.Equal(t, engine.FormatProbability(r.Probability(stranger, 0)), r.ProbabilityText(stranger, 0))
	assert.Equal(t, r.Format(r.Cash(stranger, 0)), r.CashText(stranger, 0))
	assert.Equal(t, r.Format(r.ValueOf(stranger)), string(r.AppendValueText(nil, stranger)))
	assert.Equal(t, r.Format(r.PathValue(stranger)), string(r.AppendPathValueText(nil, stranger)))
	assert.Equal(t, engine.FormatProbability(r.Probability(stranger, 0)), string(r.AppendProbabilityText(nil, stranger, 0)))
	assert.Equal(t, r.Format(r.Cash(stranger, 0)), string(r.AppendCashText(nil, stranger, 0)))
}

// ValueKey lets the layout see whether a value changed without its decimal:
// equal set keys must mean equal decimal values (checked with decimal's own
// Equal), within a result, across re-evaluations and after edits.
func TestValueKeyMatchesDecimalValues(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 17))
	odd := []string{"1/3", "123456789012345678901234", "-2.5", "0", "7", "0.001"}
	set, sameKey := 0, 0
	for trial := 0; trial < 60; trial++ {
		p := enginetest.RandomProject(rng, enginetest.Options{Nodes: 40, MaxBranches: 4, UseRest: trial%2 == 0, UseCash: true})
		if trial%5 == 0 {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "5000"}
		}
		type kv struct {
			k engine.ValueKey
			v engine.Decimal
		}
		var all []kv
		take := func(r *engine.Result) {
			engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
				all = append(all, kv{r.ValueKey(n), r.ValueOf(n)})
				return true
			})
		}
		r1 := engine.Evaluate(p)
		take(r1)
		r2 := engine.Evaluate(p) // the same project again: every set key repeats
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			if r1.ValueKey(n).Set() {
				assert.Equal(t, r1.ValueKey(n), r2.ValueKey(n), "re-evaluated %s", n.ID)
			}
			return true
		})
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			if n.Kind == engine.End && rng.IntN(4) == 0 {
				n.Payoff = odd[rng.IntN(len(odd))]
			}
			return true
		})
		take(engine.Evaluate(p))
		for i, a := range all {
			if !a.k.Set() {
				continue
			}
			set++
			for _, b := range all[i+1:] {
				if b.k.Set() && a.k == b.k {
					sameKey++
					assert.True(t, a.v.Equal(b.v), "key %v: %s vs %s", a.k, a.v, b.v)
				}
			}
		}
	}
	assert.Greater(t, set, 2000)
	assert.Greater(t, sameKey, 1000)
	stranger := &engine.Node{ID: "x"}
	assert.False(t, engine.Evaluate(enginetest.RandomProject(rng, enginetest.Options{Nodes: 5})).ValueKey(stranger).Set())
}
