package analysis

import (
	"fmt"
	"math/rand/v2"

	"github.com/ramify-app/ramify/engine"
)

// Test trees are generated in code (never stored as large files).

// randomTree builds a valid project of about size nodes: decisions and chance
// nodes with 2–4 branches, integer cash and payoffs, probabilities in
// hundredths with the last branch "rest".
func randomTree(rng *rand.Rand, size int, objective engine.Objective, rootDecision bool) *engine.Project {
	id := 0
	newNode := func(kind engine.Kind) *engine.Node {
		id++
		return &engine.Node{ID: fmt.Sprintf("n%d", id), Kind: kind, Name: fmt.Sprintf("%s %d", kind, id)}
	}
	root := newNode(engine.Chance)
	if rootDecision {
		root.Kind = engine.Decision
	}
	queue := []*engine.Node{root}
	count := 1
	for len(queue) > 0 {
		n := queue[0]
		queue = queue[1:]
		k := 2 + rng.IntN(3)
		left := 100
		for i := 0; i < k; i++ {
			b := &engine.Branch{Label: fmt.Sprintf("%s option %d", n.ID, i+1)}
			if rng.IntN(3) == 0 {
				b.Cash = fmt.Sprint(rng.IntN(401) - 200)
			}
			if n.Kind == engine.Chance {
				if i == k-1 {
					b.Probability = engine.RestProbability
				} else {
					p := 1 + rng.IntN(left-(k-1-i))
					if p > left/2 && i < k-2 {
						p = left / 2
					}
					left -= p
					b.Probability = fmt.Sprintf("0.%02d", p)
				}
			}
			var child *engine.Node
			switch r := rng.IntN(10); {
			case count+2*len(queue)+k >= size || r < 3: // queued nodes will add at least two children each
				child = newNode(engine.End)
				child.Payoff = fmt.Sprint(rng.IntN(2001) - 1000)
			case r < 6:
				child = newNode(engine.Decision)
			default:
				child = newNode(engine.Chance)
			}
			count++
			b.To = child
			n.Branches = append(n.Branches, b)
			if child.Kind != engine.End {
				queue = append(queue, child)
			}
		}
	}
	return &engine.Project{Title: "random", Objective: objective, Currency: "EUR", Root: root}
}

// node, branch and chance builders for hand-made trees.
func end(id string, payoff string) *engine.Node {
	return &engine.Node{ID: id, Kind: engine.End, Payoff: payoff}
}

func branch(label, prob, cash string, to *engine.Node) *engine.Branch {
	return &engine.Branch{Label: label, Probability: prob, Cash: cash, To: to}
}

func node(id string, kind engine.Kind, branches ...*engine.Branch) *engine.Node {
	return &engine.Node{ID: id, Kind: kind, Name: id, Branches: branches}
}
