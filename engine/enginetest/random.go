// Package enginetest builds random projects for property tests across packages.
package enginetest

import (
	"fmt"
	"math/rand/v2"

	"github.com/ramify-app/ramify/engine"
)

// Options shape a random tree.
type Options struct {
	Nodes       int  // approximate number of nodes
	MaxBranches int  // branches per inner node, at least 2
	UseRest     bool // give one chance branch "rest"
	UseCash     bool // put cash on some branches
	UseVars     bool // use variables in some formulas
}

// RandomProject builds a valid random project. Probabilities are exact decimals
// (multiples of 0.05) so the exact engine can check sums exactly.
func RandomProject(rng *rand.Rand, o Options) *engine.Project {
	if o.MaxBranches < 2 {
		o.MaxBranches = 3
	}
	if o.Nodes < 1 {
		o.Nodes = 20
	}
	p := &engine.Project{Title: "random", Objective: engine.Maximize, Decimals: 2}
	if rng.IntN(2) == 0 {
		p.Objective = engine.Minimize
	}
	if o.UseVars {
		p.Variables = []*engine.Variable{
			{Name: "a", Value: fmt.Sprint(rng.IntN(200) - 50), Low: "-60", High: "160"},
			{Name: "b", Value: "a * 2 + 7", Low: "0", High: "400"},
			{Name: "q", Value: "0.3", Low: "0.1", High: "0.5"},
		}
	}
	id := 0
	newNode := func(kind engine.Kind) *engine.Node {
		id++
		return &engine.Node{ID: fmt.Sprintf("n%d", id), Kind: kind, Name: fmt.Sprintf("%s %d", kind, id)}
	}
	value := func() string {
		if o.UseVars && rng.IntN(4) == 0 {
			return []string{"a", "b", "a - b / 4", "max(a, 10)"}[rng.IntN(4)]
		}
		return fmt.Sprint(rng.IntN(2001) - 1000)
	}
	root := newNode(engine.Decision)
	frontier := []*engine.Node{root}
	count := 1
	for len(frontier) > 0 {
		n := frontier[0]
		frontier = frontier[1:]
		k := 2 + rng.IntN(o.MaxBranches-1)
		probs := randomProbs(rng, k)
		for i := 0; i < k; i++ {
			var kind engine.Kind
			switch {
			case count >= o.Nodes:
				kind = engine.End
			default:
				kind = []engine.Kind{engine.Decision, engine.Chance, engine.End, engine.End}[rng.IntN(4)]
			}
			child := newNode(kind)
			count++
			b := &engine.Branch{Label: fmt.Sprintf("b%d", i+1), To: child}
			if n.Kind == engine.Chance {
				b.Probability = probs[i]
				if o.UseRest && i == k-1 {
					b.Probability = engine.RestProbability
				}
				if o.UseVars && k == 2 && i == 0 && kind == engine.End && rng.IntN(3) == 0 {
					child.Payoff = value()
					b.Probability = "q"
					n.Branches = append(n.Branches, b)
					n.Branches = append(n.Branches, &engine.Branch{Label: "b2", Probability: "1 - q", To: newEnd(&id, value())})
					count++
					break
				}
			}
			if o.UseCash && rng.IntN(3) == 0 {
				b.Cash = value()
			}
			if kind == engine.End {
				child.Payoff = value()
			} else {
				frontier = append(frontier, child)
			}
			n.Branches = append(n.Branches, b)
		}
	}
	p.Root = root
	return p
}

func newEnd(id *int, payoff string) *engine.Node {
	*id++
	return &engine.Node{ID: fmt.Sprintf("n%d", *id), Kind: engine.End, Payoff: payoff}
}

// randomProbs returns k probabilities in steps of 0.05 that add up to exactly 1.
func randomProbs(rng *rand.Rand, k int) []string {
	units := make([]int, k)
	left := 20
	for i := 0; i < k-1; i++ {
		u := rng.IntN(left - (k - 1 - i) + 1)
		units[i] = u
		left -= u
	}
	units[k-1] = left
	out := make([]string, k)
	for i, u := range units {
		out[i] = fmt.Sprintf("%.2f", float64(u)*0.05)
	}
	return out
}

// Chain builds a deep tree: a chain of chance nodes (probability 1 and 0) and one decision at the bottom.
func Chain(depth int) *engine.Project {
	p := &engine.Project{Title: "chain", Objective: engine.Maximize}
	var next *engine.Node = &engine.Node{ID: "bottom", Kind: engine.Decision, Branches: []*engine.Branch{
		{Label: "x", To: &engine.Node{ID: "ex", Kind: engine.End, Payoff: "5"}},
		{Label: "y", To: &engine.Node{ID: "ey", Kind: engine.End, Payoff: "7"}},
	}}
	for i := depth; i > 0; i-- {
		next = &engine.Node{ID: fmt.Sprintf("c%d", i), Kind: engine.Chance, Branches: []*engine.Branch{
			{Label: "go", Probability: "1", Cash: "1", To: next},
			{Label: "stop", Probability: "0", To: &engine.Node{ID: fmt.Sprintf("s%d", i), Kind: engine.End, Payoff: "0"}},
		}}
	}
	p.Root = next
	return p
}

// Wide builds a balanced tree of about n nodes, alternating decision levels
// (2 alternatives with cash) and chance levels (0.5 / 0.3 / rest), for benchmarks.
func Wide(n int) *engine.Project {
	id := 0
	mk := func() *engine.Node {
		id++
		return &engine.Node{ID: fmt.Sprintf("n%d", id), Kind: engine.End, Payoff: fmt.Sprint((id*7919)%2000 - 1000)}
	}
	root := mk()
	type item struct {
		n     *engine.Node
		depth int
	}
	queue := []item{{root, 0}}
	count := 1
	for len(queue) > 0 && count < n {
		it := queue[0]
		queue = queue[1:]
		node := it.n
		node.Payoff = ""
		if it.depth%2 == 0 {
			node.Kind = engine.Decision
			for k := 0; k < 2; k++ {
				c := mk()
				node.Branches = append(node.Branches, &engine.Branch{Label: fmt.Sprintf("option %d", k+1), Cash: fmt.Sprint(-10 * (k + 1)), To: c})
				queue = append(queue, item{c, it.depth + 1})
			}
			count += 2
		} else {
			node.Kind = engine.Chance
			for k, prob := range []string{"0.5", "0.3", engine.RestProbability} {
				c := mk()
				node.Branches = append(node.Branches, &engine.Branch{Label: fmt.Sprintf("outcome %d", k+1), Probability: prob, To: c})
				queue = append(queue, item{c, it.depth + 1})
			}
			count += 3
		}
	}
	return &engine.Project{Title: "wide", Objective: engine.Maximize, Root: root}
}
