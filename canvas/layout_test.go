package canvas

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

const eps = 1e-6

// The aesthetics below are those of Reingold & Tilford, "Tidier Drawings of
// Trees" (IEEE TSE 7(2), 1981), which Buchheim, Jünger & Leipert (2002) keep.
func TestLayoutAesthetics(t *testing.T) {
	tests := []struct {
		name     string
		seeds    int
		size     int
		maxKids  int
		measurer TextMeasurer
	}{
		{"small bushy trees, real fonts", 40, 30, 5, FontMeasurer{}},
		{"mid trees, fixed-width measure", 40, 200, 4, fixedMeasurer{}},
		{"binary trees", 30, 300, 2, fixedMeasurer{}},
		{"wide fans", 10, 400, 12, fixedMeasurer{}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			for seed := 0; seed < tc.seeds; seed++ {
				rng := rand.New(rand.NewPCG(uint64(seed), 7))
				p := randomTree(rng, tc.size, tc.maxKids)
				opts := DefaultOptions()
				l := LayoutTree(p, nil, tc.measurer, opts)
				require.Equal(t, countNodes(p), len(l.Boxes), "seed %d: every node is shown", seed)
				checkNoOverlap(t, l, seed)
				checkCentred(t, l, seed)
				checkTextInsideBoxes(t, p, l, opts, seed)
				checkLabelsClearOfLines(t, l, seed)
			}
		})
	}
}

// checkNoOverlap: within a depth, extents (with the gap) never overlap; columns
// of different depths never overlap horizontally.
func checkNoOverlap(t *testing.T, l *Layout, seed int) {
	t.Helper()
	byDepth := map[int][]int{}
	for i, b := range l.Boxes {
		byDepth[b.Depth] = append(byDepth[b.Depth], i)
	}
	for d, idx := range byDepth {
		sort.Slice(idx, func(a, b int) bool { return l.Boxes[idx[a]].Y < l.Boxes[idx[b]].Y })
		for k := 1; k < len(idx); k++ {
			up, lo := l.Boxes[idx[k-1]], l.Boxes[idx[k]]
			gap := (lo.Y - lo.Top) - (up.Y + up.Bottom)
			if !assert.GreaterOrEqual(t, gap, l.Theme.SiblingGap-eps, "seed %d depth %d: boxes %d and %d overlap", seed, d, idx[k-1], idx[k]) {
				return
			}
		}
	}
	for d := 1; d < len(l.Columns); d++ {
		assert.LessOrEqual(t, l.Columns[d-1].End, l.Columns[d].BranchX, "seed %d: columns %d and %d overlap", seed, d-1, d)
	}
	for i := range l.Boxes {
		bx := l.Box(i)
		assert.True(t, bx.X >= -eps && bx.Y >= -eps && bx.X+bx.W <= l.Bounds.W+eps && bx.Y+bx.H <= l.Bounds.H+eps, "seed %d: box %d outside bounds", seed, i)
	}
}

func checkCentred(t *testing.T, l *Layout, seed int) {
	t.Helper()
	for i, b := range l.Boxes {
		kids := l.Kids(i)
		if len(kids) == 0 {
			continue
		}
		first, last := l.Boxes[kids[0]].Y, l.Boxes[kids[len(kids)-1]].Y
		if !assert.InDelta(t, (first+last)/2, b.Y, eps, "seed %d: node %d not centred on its children", seed, i) {
			return
		}
		for k := 1; k < len(kids); k++ {
			assert.Less(t, l.Boxes[kids[k-1]].Y, l.Boxes[kids[k]].Y, "seed %d: children of %d out of branch order", seed, i)
		}
	}
}

// checkTextInsideBoxes: every text hit region lies inside the box of the node it
// belongs to, so non-overlapping boxes mean non-overlapping labels.
func checkTextInsideBoxes(t *testing.T, p *engine.Project, l *Layout, opts Options, seed int) {
	t.Helper()
	s := Build(p, nil, l, opts, Rect{})
	for _, h := range s.Hits {
		if h.Target.Field == FieldNode {
			continue
		}
		n := h.Target.Node
		if h.Target.Branch >= 0 {
			n = n.Branches[h.Target.Branch].To
		}
		i := l.Index(n)
		require.GreaterOrEqual(t, i, 0)
		bx := l.Box(i)
		r := h.Rect
		ok := r.X >= bx.X-eps && r.Y >= bx.Y-eps && r.X+r.W <= bx.X+bx.W+eps && r.Y+r.H <= bx.Y+bx.H+eps
		if !assert.True(t, ok, "seed %d: %s text %+v outside its box %+v", seed, h.Target.Field, r, bx) {
			return
		}
	}
}

// checkLabelsClearOfLines: branch texts end before the node they lead to, and
// value texts start after the node shape.
func checkLabelsClearOfLines(t *testing.T, l *Layout, seed int) {
	t.Helper()
	th := l.Theme
	for _, b := range l.Boxes[1:] {
		c := l.Columns[b.Depth]
		left := b.X - th.NodeSize/2
		room := left - c.BranchX
		assert.LessOrEqual(t, b.Label.Width+th.TextPad, room+eps, "seed %d: label runs into node", seed)
		assert.GreaterOrEqual(t, c.ValueX, b.X+th.NodeSize/2, "seed %d", seed)
	}
}

func TestIdenticalSubtreesDrawnIdentically(t *testing.T) {
	for seed := 0; seed < 30; seed++ {
		rng := rand.New(rand.NewPCG(uint64(seed), 99))
		sub := randomTree(rng, 25, 3).Root
		other := randomTree(rng, 15, 4).Root
		root := &engine.Node{ID: "r", Kind: engine.Chance}
		copies := []*engine.Node{cloneSubtree(sub, "a"), cloneSubtree(other, "x"), cloneSubtree(sub, "b"), cloneSubtree(sub, "c")}
		for _, c := range copies {
			root.Branches = append(root.Branches, &engine.Branch{Label: "same", Probability: "0.25", To: c})
		}
		p := &engine.Project{Root: root}
		l := LayoutTree(p, nil, fixedMeasurer{}, DefaultOptions())
		shape := func(top *engine.Node) []Point {
			i := l.Index(top)
			require.GreaterOrEqual(t, i, 0)
			var out []Point
			engine.Walk(top, func(n *engine.Node, _ int) bool {
				j := l.Index(n)
				out = append(out, Point{l.Boxes[j].X - l.Boxes[i].X, l.Boxes[j].Y - l.Boxes[i].Y})
				return true
			})
			return out
		}
		a, b, c := shape(copies[0]), shape(copies[2]), shape(copies[3])
		require.Len(t, b, len(a))
		for k := range a {
			assert.InDelta(t, a[k].Y, b[k].Y, eps, "seed %d node %d", seed, k)
			assert.InDelta(t, a[k].Y, c[k].Y, eps, "seed %d node %d", seed, k)
			assert.InDelta(t, a[k].X, c[k].X, eps)
		}
	}
}

func TestLayoutIsNarrow(t *testing.T) {
	// Leaves under one parent are packed at exactly the sibling gap: nothing
	// wider is needed (the "as narrow as the rules allow" aesthetic).
	root := &engine.Node{ID: "r", Kind: engine.Decision}
	for i := 0; i < 7; i++ {
		root.Branches = append(root.Branches, &engine.Branch{Label: "x", To: &engine.Node{ID: string(rune('a' + i)), Kind: engine.End}})
	}
	l := LayoutTree(&engine.Project{Root: root}, nil, fixedMeasurer{}, DefaultOptions())
	kids := l.Kids(0)
	for k := 1; k < len(kids); k++ {
		up, lo := l.Boxes[kids[k-1]], l.Boxes[kids[k]]
		assert.InDelta(t, l.Theme.SiblingGap, (lo.Y-lo.Top)-(up.Y+up.Bottom), eps)
	}
	// Two subtrees whose contours interlock are pulled together until they touch
	// at some depth at exactly the subtree gap.
	mk := func(id string, deep bool) *engine.Node {
		n := &engine.Node{ID: id, Kind: engine.Chance}
		for i := 0; i < 3; i++ {
			c := &engine.Node{ID: id + string(rune('0'+i)), Kind: engine.End}
			if deep && i == 2 {
				c.Kind = engine.Chance
				c.Branches = []*engine.Branch{{Label: "y", To: &engine.Node{ID: id + "d", Kind: engine.End}}}
			}
			n.Branches = append(n.Branches, &engine.Branch{Label: "z", To: c})
		}
		return n
	}
	root2 := &engine.Node{ID: "r", Kind: engine.Decision, Branches: []*engine.Branch{{To: mk("a", true)}, {To: mk("b", false)}}}
	l2 := LayoutTree(&engine.Project{Root: root2}, nil, fixedMeasurer{}, DefaultOptions())
	minGap := math.Inf(1)
	byDepth := map[int][]NodeBox{}
	for _, b := range l2.Boxes {
		byDepth[b.Depth] = append(byDepth[b.Depth], b)
	}
	for _, bs := range byDepth {
		sort.Slice(bs, func(i, j int) bool { return bs[i].Y < bs[j].Y })
		for k := 1; k < len(bs); k++ {
			if bs[k].Parent != bs[k-1].Parent {
				minGap = math.Min(minGap, (bs[k].Y-bs[k].Top)-(bs[k-1].Y+bs[k-1].Bottom))
			}
		}
	}
	assert.InDelta(t, l2.Theme.SubtreeGap, minGap, eps)
}

func TestDeepChainLaysOut(t *testing.T) {
	for _, depth := range []int{2500, 10000} {
		p := chain(depth)
		l := LayoutTree(p, nil, fixedMeasurer{}, DefaultOptions())
		require.Len(t, l.Boxes, depth)
		for i := 1; i < depth; i++ {
			assert.InDelta(t, l.Boxes[0].Y, l.Boxes[i].Y, eps, "a chain is one straight row")
			if l.Boxes[i].Y != l.Boxes[0].Y {
				break
			}
		}
		assert.Greater(t, l.Bounds.W, float64(depth)*l.Theme.MinBranch)
	}
}

func TestCollapsedStub(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	p := randomTree(rng, 60, 3)
	var target *engine.Node
	for _, b := range p.Root.Branches {
		if len(b.To.Branches) > 0 {
			target = b.To
			break
		}
	}
	require.NotNil(t, target)
	hidden := len((&engine.Project{Root: target}).Nodes()) - 1
	target.Collapsed = true
	l := LayoutTree(p, nil, fixedMeasurer{}, DefaultOptions())
	assert.Equal(t, countNodes(p)-hidden, len(l.Boxes))
	i := l.Index(target)
	require.GreaterOrEqual(t, i, 0)
	assert.Equal(t, hidden, l.Boxes[i].Hidden)
	assert.Contains(t, l.Boxes[i].HiddenNote.Text, engine.FormatNumber(decimalInt(hidden), 0))
	assert.Empty(t, l.Kids(i))
}

func TestLayoutEmptyAndOddInput(t *testing.T) {
	assert.Empty(t, LayoutTree(nil, nil, nil, Options{}).Boxes)
	assert.Empty(t, LayoutTree(&engine.Project{}, nil, nil, Options{}).Boxes)
	weird := []string{"\x00\x01bad\xff\xfe", "\u202eright-to-left override", "tab\tand\nnewline", "\U0001F600\U0001F9EA", "ﷺ", "\u200b"}
	root := &engine.Node{ID: "r", Kind: engine.Chance}
	for _, w := range weird {
		root.Branches = append(root.Branches, &engine.Branch{Label: w, Probability: w, Cash: w, To: &engine.Node{ID: w, Kind: engine.End, Payoff: w}})
	}
	root.Branches = append(root.Branches, &engine.Branch{Label: "nil child"})
	p := &engine.Project{Root: root}
	require.NotPanics(t, func() {
		l := LayoutTree(p, nil, FontMeasurer{}, DefaultOptions())
		Build(p, nil, l, DefaultOptions(), Rect{})
	})
}
