package canvas

import (
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
	"github.com/ramify-app/ramify/engine/enginetest"
)

func evaluated(t testing.TB, seed uint64, nodes int) (*engine.Project, *engine.Result) {
	rng := rand.New(rand.NewPCG(seed, 11))
	p := enginetest.RandomProject(rng, enginetest.Options{Nodes: nodes, MaxBranches: 4, UseCash: true, UseRest: true})
	p.Currency = "EUR"
	r := engine.Evaluate(p)
	require.True(t, r.Valid(), "random project should be valid: %v", r.Problems)
	return p, r
}

func demoProject(t testing.TB) (*engine.Project, *engine.Result) {
	data, err := os.ReadFile("../assets/demos/chiller-cover.ramify.json")
	require.NoError(t, err)
	p, err := engine.Parse(data, "chiller-cover.ramify.json")
	require.NoError(t, err)
	return p, engine.Evaluate(p)
}

// A point in the middle of each drawn text or node, computed from the layout's
// geometry, must map back to the target the editor needs.
func TestHitRegionsRoundTrip(t *testing.T) {
	for seed := uint64(0); seed < 20; seed++ {
		p, r := evaluated(t, seed, 80)
		opts := DefaultOptions()
		l := LayoutTree(p, r, FontMeasurer{}, opts)
		s := Build(p, r, l, opts, Rect{})
		th := l.Theme
		mid := func(x, w, top, size float64) Point { return Point{x + w/2, top + th.lineHeight(size)/2} }
		for i, b := range l.Boxes {
			c := l.Columns[b.Depth]
			type probe struct {
				at   Point
				want Target
			}
			probes := []probe{{Point{b.X, b.Y}, Target{b.Node, -1, FieldNode}}}
			if b.Parent >= 0 {
				parent := l.Boxes[b.Parent].Node
				x := c.BranchX + th.TextPad
				if b.Label.Width > 0 {
					probes = append(probes, probe{mid(x, b.Label.Width, b.Y-th.TextPad-th.lineHeight(th.LabelSize), th.LabelSize), Target{parent, b.Branch, FieldLabel}})
				}
				if b.Prob.Width > 0 {
					probes = append(probes, probe{mid(x, b.Prob.Width, b.Y+th.TextPad, th.NumberSize), Target{parent, b.Branch, FieldProbability}})
					x += b.Prob.Width + 2*th.TextPad
				}
				if b.Cash.Width > 0 {
					probes = append(probes, probe{mid(x, b.Cash.Width, b.Y+th.TextPad, th.NumberSize), Target{parent, b.Branch, FieldCash}})
				}
			}
			if b.Value.Width > 0 {
				probes = append(probes, probe{mid(c.ValueX, b.Value.Width, b.Y-th.TextPad-th.lineHeight(th.ValueSize), th.ValueSize), Target{b.Node, -1, FieldValue}})
			}
			if b.Payoff.Width > 0 {
				probes = append(probes, probe{Point{c.ValueX + b.Payoff.Width/2, b.Y}, Target{b.Node, -1, FieldPayoff}})
			}
			for _, pr := range probes {
				h, ok := s.HitAt(pr.at)
				require.True(t, ok, "seed %d box %d: nothing at %v (want %s)", seed, i, pr.at, pr.want.Field)
				assert.Equal(t, pr.want, h.Target, "seed %d box %d", seed, i)
			}
		}
		_, ok := s.HitAt(Point{-50, -50})
		assert.False(t, ok, "nothing outside the drawing")
	}
}

func TestSceneShowsTheResult(t *testing.T) {
	p, r := demoProject(t)
	require.True(t, r.Valid())
	opts := DefaultOptions()
	s := Build(p, r, nil, opts, Rect{})
	texts := map[string]bool{}
	for _, pr := range s.Prims {
		if pr.Kind == PrimText {
			texts[pr.Text] = true
		}
	}
	policyLines := 0
	for _, pr := range s.Prims {
		if pr.Role == RoleBranchPolicy {
			policyLines++
		}
	}
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if n.Kind == engine.End {
			assert.True(t, texts[r.Format(r.PathValue(n))], "path payoff of %s", n.ID)
		} else {
			assert.True(t, texts[r.Format(r.ValueOf(n))], "value of %s", n.ID)
		}
		for i, b := range n.Branches {
			assert.True(t, texts[b.Label], "label %q", b.Label)
			if n.Kind == engine.Chance {
				assert.True(t, texts[engine.FormatProbability(r.Probability(n, i))])
			}
		}
		return true
	})
	onPolicy := 0
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if r.OnPolicy(n) {
			onPolicy++
		}
		return true
	})
	// every on-policy node has its incoming branch (or the root's stub) drawn as policy
	assert.GreaterOrEqual(t, policyLines, onPolicy-1)
}

func TestPresentationOptions(t *testing.T) {
	p, r := demoProject(t)
	count := func(o Options, field string) int {
		n := 0
		for _, h := range Build(p, r, nil, o, Rect{}).Hits {
			if h.Target.Field == field {
				n++
			}
		}
		return n
	}
	all := DefaultOptions()
	hide := all
	hide.HideWorkingNumbers = true
	assert.Positive(t, count(all, FieldCash))
	assert.Zero(t, count(hide, FieldCash))
	assert.Equal(t, 1, count(hide, FieldValue), "only the root value is left")
	assert.Equal(t, count(all, FieldPayoff), count(hide, FieldPayoff))
	assert.Equal(t, count(all, FieldProbability), count(hide, FieldProbability))

	l := LayoutTree(p, r, FontMeasurer{}, all)
	deepest := len(l.Columns) - 1
	for step := 0; step <= deepest; step++ {
		o := all
		o.RevealColumns = step
		want := 0
		for _, b := range l.Boxes {
			if b.Depth >= deepest-step && !b.Value.empty() {
				want++
			}
		}
		assert.Equal(t, want, count(o, FieldValue), "step %d", step)
	}
}

func TestCertaintyEquivalentShown(t *testing.T) {
	p, _ := demoProject(t)
	p.Risk = engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "200000"}
	r := engine.Evaluate(p)
	require.True(t, r.RiskActive(), "%v", r.Problems)
	o := DefaultOptions()
	o.ShowCertaintyEquivalent = true
	l := LayoutTree(p, r, FontMeasurer{}, o)
	for _, b := range l.Boxes {
		if b.Node.Kind == engine.End {
			continue
		}
		ce, ok := r.CertaintyEquivalent(b.Node)
		require.True(t, ok)
		assert.Equal(t, r.Format(ce), b.Value.Text)
	}
}

func TestProblemsAreMarked(t *testing.T) {
	p, _ := demoProject(t)
	var bad *engine.Node
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		if bad == nil && n.Kind == engine.Chance {
			bad = n
			n.Branches[0].Probability = "1.7 +"
		}
		return true
	})
	r := engine.Evaluate(p)
	require.NotEmpty(t, r.ProblemsAt(bad))
	var s *Scene
	require.NotPanics(t, func() { s = Build(p, r, nil, DefaultOptions(), Rect{}) })
	marks := 0
	for _, pr := range s.Prims {
		if pr.Role == RoleProblemMark {
			marks++
		}
	}
	assert.Positive(t, marks)
	h, ok := s.HitFor(Target{bad, -1, FieldNode})
	require.True(t, ok)
	assert.Contains(t, h.Tip, r.ProblemsAt(bad)[0].Msg)
}

func TestSceneCullsToViewport(t *testing.T) {
	p, r := evaluated(t, 1, 3000)
	l := LayoutTree(p, r, FontMeasurer{}, DefaultOptions())
	full := Build(p, r, l, DefaultOptions(), Rect{})
	vp := Rect{l.Bounds.W / 3, l.Bounds.H / 2, 900, 600}
	part := Build(p, r, l, DefaultOptions(), vp)
	assert.Less(t, len(part.Prims)*10, len(full.Prims), "a window shows a small part")
	require.NotEmpty(t, part.Hits)
	for _, h := range part.Hits {
		n := h.Target.Node
		if h.Target.Branch >= 0 {
			n = n.Branches[h.Target.Branch].To
		}
		assert.True(t, l.Box(l.Index(n)).Intersects(vp), "hit %+v belongs to a node outside the viewport", h.Rect)
	}
	// every node whose shape lies in the viewport is drawn
	for _, b := range l.Boxes {
		if vp.Contains(Point{b.X, b.Y}) {
			_, ok := part.HitFor(Target{b.Node, -1, FieldNode})
			assert.True(t, ok)
		}
	}
}

func TestCleanText(t *testing.T) {
	tests := []struct{ in, want string }{
		{"plain", "plain"},
		{"a\nb\tc", "a b c"},
		{"bad\xffbyte", "bad\uFFFDbyte"},
		{"\u202eevil", "evil"},
		{"null\x00", "null"},
		{"東京 🚢", "東京 🚢"},
	}
	for _, tc := range tests {
		assert.Equal(t, tc.want, cleanText(tc.in))
	}
	long := strings.Repeat("wide words ", 40)
	ct := newMeasureCache(FontMeasurer{}).fit(long, 10, false, 120)
	assert.True(t, ct.cut)
	assert.LessOrEqual(t, ct.width, 120.0)
	assert.True(t, strings.HasSuffix(ct.text, ellipsis))
}
