package canvas

import (
	"fmt"
	"math/rand/v2"
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

var sampleWords = []string{"go", "wait", "pilot", "build in-house", "outsource", "high demand", "low demand",
	"delay", "on time", "Zürich depot", "größer", "東京 office", "ship 🚢", "résumé", "a", "",
	"a rather long label that will certainly not fit in the column and has to be cut short"}

// randomTree builds a project of about size nodes with random shapes and texts.
func randomTree(rng *rand.Rand, size, maxKids int) *engine.Project {
	id := 0
	newNode := func(k engine.Kind) *engine.Node {
		id++
		return &engine.Node{ID: fmt.Sprintf("n%d", id), Kind: k, Name: fmt.Sprintf("node %d", id)}
	}
	root := newNode(engine.Decision)
	open := []*engine.Node{root}
	count := 1
	for len(open) > 0 {
		i := rng.IntN(len(open))
		n := open[i]
		open = append(open[:i], open[i+1:]...)
		kids := 1 + rng.IntN(maxKids)
		for k := 0; k < kids; k++ {
			kind := engine.End
			if count < size {
				switch rng.IntN(3) {
				case 0:
					kind = engine.Decision
				case 1:
					kind = engine.Chance
				}
			}
			c := newNode(kind)
			count++
			b := &engine.Branch{Label: sampleWords[rng.IntN(len(sampleWords))], To: c}
			if n.Kind == engine.Chance {
				b.Probability = fmt.Sprintf("0.%d", rng.IntN(100))
			}
			if rng.IntN(3) == 0 {
				b.Cash = fmt.Sprintf("-%d", rng.IntN(100000))
			}
			if kind == engine.End {
				c.Payoff = fmt.Sprintf("%d", rng.IntN(1000000))
			} else {
				open = append(open, c)
			}
			n.Branches = append(n.Branches, b)
		}
	}
	return &engine.Project{Title: "Random", Currency: "EUR", Root: root}
}

// cloneSubtree copies a subtree with fresh ids and the same texts.
func cloneSubtree(n *engine.Node, suffix string) *engine.Node {
	c := *n
	c.ID = n.ID + suffix
	c.Branches = nil
	for _, b := range n.Branches {
		nb := *b
		nb.To = cloneSubtree(b.To, suffix)
		c.Branches = append(c.Branches, &nb)
	}
	return &c
}

// chain is a decision chain depth nodes deep ending in an end node.
func chain(depth int) *engine.Project {
	root := &engine.Node{ID: "c0", Kind: engine.Decision}
	n := root
	for i := 1; i < depth; i++ {
		kind := engine.Chance
		if i == depth-1 {
			kind = engine.End
		}
		c := &engine.Node{ID: fmt.Sprintf("c%d", i), Kind: kind}
		n.Branches = append(n.Branches, &engine.Branch{Label: "step", Probability: "1", To: c})
		n = c
	}
	return &engine.Project{Title: "Chain", Root: root}
}

// fixedMeasurer is a measurer with a simple closed form (0.55 em per rune), for
// tests that check geometry rather than fonts, and for benchmarks of the layout
// alone.
type fixedMeasurer struct{}

func (fixedMeasurer) TextWidth(s string, size float64, bold bool) float64 {
	return float64(len([]rune(s))) * size * 0.55
}

func countNodes(p *engine.Project) int { return len(p.Nodes()) }

var _ = strings.Repeat

func decimalInt(n int) decimal.Decimal { return decimal.NewFromInt(int64(n)) }
