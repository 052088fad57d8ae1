package canvas

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// A Layouter that has seen many shapes of a tree (branches moved, deleted,
// pasted, folded, reordered) must lay it out exactly as a fresh one does: it
// finds each node's remembered texts by position while the shape is unchanged
// and by identity after it changed.
func TestLayouterFollowsShapeChanges(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	p := randomTree(rng, 120, 4)
	lo := NewLayouter(FontMeasurer{})
	opts := DefaultOptions()
	inner := func() []*engine.Node {
		var out []*engine.Node
		engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
			if len(n.Branches) > 0 {
				out = append(out, n)
			}
			return true
		})
		return out
	}
	pasted := 0
	for step := 0; step < 200; step++ {
		nodes := inner()
		require.NotEmpty(t, nodes)
		n := nodes[rng.IntN(len(nodes))]
		switch rng.IntN(6) {
		case 0: // move a branch elsewhere (not into its own subtree)
			if len(n.Branches) > 1 {
				bi := rng.IntN(len(n.Branches))
				b := n.Branches[bi]
				var targets []*engine.Node
				for _, m := range nodes {
					inside := false
					engine.Walk(b.To, func(x *engine.Node, _ int) bool {
						inside = inside || x == m
						return !inside
					})
					if !inside && m != n {
						targets = append(targets, m)
					}
				}
				if len(targets) > 0 {
					n.Branches = append(n.Branches[:bi], n.Branches[bi+1:]...)
					m := targets[rng.IntN(len(targets))]
					m.Branches = append(m.Branches, b)
				}
			}
		case 1: // delete a branch
			if len(n.Branches) > 1 {
				bi := rng.IntN(len(n.Branches))
				n.Branches = append(n.Branches[:bi], n.Branches[bi+1:]...)
			}
		case 2: // paste a copy of a subtree at the front
			if b := n.Branches[rng.IntN(len(n.Branches))]; b.To != nil {
				pasted++
				nb := *b
				nb.To = cloneSubtree(b.To, "p"+itoa(pasted))
				n.Branches = append([]*engine.Branch{&nb}, n.Branches...)
			}
		case 3:
			n.Collapsed = !n.Collapsed
		case 4:
			i, j := rng.IntN(len(n.Branches)), rng.IntN(len(n.Branches))
			n.Branches[i], n.Branches[j] = n.Branches[j], n.Branches[i]
		case 5: // texts only
			n.Branches[0].Label = sampleWords[rng.IntN(len(sampleWords))]
		}
		var r *engine.Result
		if rng.IntN(4) > 0 {
			r = engine.Evaluate(p)
		}
		l := lo.Layout(p, r, opts)
		fresh := LayoutTree(p, r, FontMeasurer{}, opts)
		require.Len(t, l.Boxes, len(fresh.Boxes), "step %d", step)
		for i := range l.Boxes {
			a, b := &l.Boxes[i], &fresh.Boxes[i]
			require.Same(t, b.Node, a.Node, "step %d box %d", step, i)
			assert.Equal(t, *b.NodeTexts, *a.NodeTexts, "step %d box %d", step, i)
			assert.Equal(t, b.Hidden, a.Hidden, "step %d box %d", step, i)
			assert.Equal(t, b.Y, a.Y, "step %d box %d", step, i)
		}
		if t.Failed() {
			return
		}
	}
}

// The first layout sizes its arrays by the nodes it will show.
func TestShownCount(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 1))
	p := randomTree(rng, 300, 4)
	l := LayoutTree(p, nil, FontMeasurer{}, DefaultOptions())
	assert.Equal(t, len(l.Boxes), shownCount(p.Root))
	p.Root.Branches[0].To.Collapsed = true
	l = LayoutTree(p, nil, FontMeasurer{}, DefaultOptions())
	assert.Equal(t, len(l.Boxes), shownCount(p.Root))
}

// columns and finish use maxf and minf, which must give math.Max and math.Min
// bit for bit, also on zeros, infinities and NaN.
func TestMaxfMatchesMath(t *testing.T) {
	vals := []float64{0, math.Copysign(0, -1), 1, -1, math.Inf(1), math.Inf(-1), math.NaN(), 1e-300, 7.25}
	for _, a := range vals {
		for _, b := range vals {
			assert.Equal(t, math.Float64bits(math.Max(a, b)), math.Float64bits(maxf(a, b)), "max(%v, %v)", a, b)
			assert.Equal(t, math.Float64bits(math.Min(a, b)), math.Float64bits(minf(a, b)), "min(%v, %v)", a, b)
		}
	}
}
