package ui

import (
	"fmt"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/canvas"
	"github.com/ramify-app/ramify/engine"
)

// bigProject builds a valid tree of at least size nodes, alternating decision
// and chance levels with three branches each, and returns it with a chance
// node on the deepest level.
func bigProject(size int) (*engine.Project, *engine.Node) {
	p := &engine.Project{Title: "big", Objective: engine.Maximize, Decimals: 0,
		Variables: []*engine.Variable{{Name: "gain", Value: "100"}, {Name: "p", Value: "0.3"}}}
	id := 0
	mk := func(k engine.Kind) *engine.Node {
		id++
		return &engine.Node{ID: fmt.Sprintf("n%d", id), Kind: k, Name: fmt.Sprintf("Node %d", id)}
	}
	p.Root = mk(engine.Decision)
	queue := []*engine.Node{p.Root}
	var leaves []*engine.Node
	for len(queue) > 0 {
		n := queue[0]
		queue = queue[1:]
		if id >= size {
			leaves = append(leaves, n)
			continue
		}
		for i := 0; i < 3; i++ {
			kind := engine.Chance
			if n.Kind == engine.Chance {
				kind = engine.Decision
			}
			c := mk(kind)
			b := &engine.Branch{Label: fmt.Sprintf("B%d", i+1), Cash: "-1", To: c}
			if n.Kind == engine.Chance {
				b.Probability = []string{"p", "0.2", "rest"}[i]
			}
			n.Branches = append(n.Branches, b)
			queue = append(queue, c)
		}
	}
	for i, n := range leaves { // nodes left without branches become end nodes
		n.Kind = engine.End
		n.Payoff = fmt.Sprintf("gain * %d", i%7)
	}
	var deep *engine.Node
	for _, n := range p.Nodes() {
		if n.Kind == engine.Chance {
			deep = n
		}
	}
	return p, deep
}

// BenchmarkEditUpdate10k (sub-benchmarks: the view zoomed onto the edited
// subtree, as when one reads the probability being changed; and the whole
// tree fitted in the window) measures the whole update path after one edit in a
// tree of more than 10,000 nodes: change one probability deep in the tree
// (an undoable command), evaluate exactly, give the view the new data
// (re-layout, scene of the visible part, canvas objects), and refresh the
// inspector, variables, problems and status line. Target: ≤ 16 ms.
//
// Seen whole, a 10,000-node tree is drawn as one image, redrawn off the event
// goroutine after an edit: "whole-tree" includes that drawing competing for
// the two cores with the next edits; "whole-tree-event-loop" measures only
// the event goroutine's share, which is what keeps the window responsive.
func BenchmarkEditUpdate10k(b *testing.B) {
	inBackground := func(f func()) { go f() }
	b.Run("focused", func(b *testing.B) { benchEdit(b, true, inBackground) })
	b.Run("whole-tree", func(b *testing.B) { benchEdit(b, false, inBackground) })
	b.Run("whole-tree-event-loop", func(b *testing.B) { benchEdit(b, false, func(func()) {}) })
}

func benchEdit(b *testing.B, focus bool, raster func(func())) {
	p, deep := bigProject(10_000)
	require.GreaterOrEqual(b, len(p.Nodes()), 10_000)
	require.Less(b, len(p.Nodes()), 10_010)
	saved := panels
	panels = nil // analysis panels only mark themselves stale on Update; see newTestEditor
	defer func() { panels = saved }()
	a := test.NewApp()
	defer test.NewApp()
	w := test.NewWindow(nil)
	defer w.Close()
	w.Resize(fyne.NewSize(1280, 800))
	e := NewEditor(a, w, p, "", "bench")
	e.recoveryDir = b.TempDir()
	require.True(b, e.Result().Valid(), "%v", e.Result().Problems)
	e.SelectNode(deep.Branches[0].To)
	if focus {
		e.view.FocusNode(deep)
	}
	// As in the app: a whole-tree overview image is redrawn off the event goroutine.
	canvas.RunInBackground = raster
	defer func() { canvas.RunInBackground = func(f func()) { f() } }()
	values := []string{"0.35", "0.3"}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := e.Apply(&engine.SetBranchField{Node: deep, Branch: 0, Field: engine.FieldProbability, Value: values[i%2]}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkEvaluate10k is the engine's share of the same path, for comparison.
func BenchmarkEvaluate10k(b *testing.B) {
	p, _ := bigProject(10_000)
	for i := 0; i < b.N; i++ {
		engine.Evaluate(p)
	}
}
