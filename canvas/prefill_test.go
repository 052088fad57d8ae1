package canvas

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// The first layout of a large tree formats and measures in parallel; it must
// give exactly the layout the plain sequential walk gives: every text, width
// and position, also with folded nodes, cut labels, certainty equivalents,
// values beyond the int64 fast path, and then through later re-layouts.
func TestPrefillMatchesSequentialLayout(t *testing.T) {
	saved := prefillMin
	t.Cleanup(func() { prefillMin = saved })
	rng := rand.New(rand.NewPCG(11, 4))
	odd := []string{"1/3", "123456789012345678901234", "-2/7", "0.00005", "12.5", "0"}
	tests := []struct {
		name string
		edit func(p *engine.Project, opts *Options)
	}{
		{"plain", func(*engine.Project, *Options) {}},
		{"folded, long and odd labels, odd payoffs", func(p *engine.Project, _ *Options) {
			engine.Walk(p.Root, func(n *engine.Node, depth int) bool {
				if depth > 0 && len(n.Branches) > 0 && rng.IntN(6) == 0 {
					n.Collapsed = true
				}
				if n.Kind == engine.End && rng.IntN(5) == 0 {
					n.Payoff = odd[rng.IntN(len(odd))]
				}
				for _, b := range n.Branches {
					if rng.IntN(5) == 0 {
						b.Label = sampleWords[rng.IntN(len(sampleWords))] + "\ttab"
					}
				}
				return true
			})
			p.Decimals, p.Currency = 2, "EUR"
		}},
		{"certainty equivalents", func(p *engine.Project, opts *Options) {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "50000"}
			opts.ShowCertaintyEquivalent = true
		}},
		{"risk on, expected values shown", func(p *engine.Project, _ *Options) {
			p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "50000"}
		}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p := bigTree(3000)
			opts := DefaultOptions()
			tt.edit(p, &opts)
			r := engine.Evaluate(p)
			require.True(t, r.Valid(), "%v", r.Problems)

			prefillMin = math.MaxInt
			want := NewLayouter(FontMeasurer{}).Layout(p, r, opts)
			prefillMin = 1
			lo := NewLayouter(FontMeasurer{})
			got := lo.Layout(p, r, opts)
			sameLayout(t, want, got)

			// a re-layout after an edit still matches a fresh one
			engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
				if n.Kind == engine.End && rng.IntN(7) == 0 {
					n.Payoff = odd[rng.IntN(len(odd))]
				}
				return true
			})
			r = engine.Evaluate(p)
			got = lo.Layout(p, r, opts)
			prefillMin = math.MaxInt
			sameLayout(t, NewLayouter(FontMeasurer{}).Layout(p, r, opts), got)
		})
	}
}

func sameLayout(t *testing.T, want, got *Layout) {
	t.Helper()
	require.Len(t, got.Boxes, len(want.Boxes))
	assert.Equal(t, want.Columns, got.Columns)
	assert.Equal(t, want.Bounds, got.Bounds)
	for i := range want.Boxes {
		a, b := want.Boxes[i], got.Boxes[i]
		require.Same(t, a.Node, b.Node, "box %d", i)
		assert.Equal(t, *a.NodeTexts, *b.NodeTexts, "box %d", i)
		a.NodeTexts, b.NodeTexts = nil, nil
		assert.Equal(t, a, b, "box %d", i)
		if t.Failed() {
			return
		}
	}
}
