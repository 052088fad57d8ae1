package analysis

import (
	"strings"

	"github.com/ramify-app/ramify/engine"
)

// Exact tornado end-points without evaluating the whole tree 2×(variables)
// times: for each variable, the exact engine evaluates a copy of the project
// in which every subtree that no formula using the variable (directly or
// through other variables) can reach is replaced by an end node whose payoff
// is that subtree's exact base value on the decision scale (its EV, or its CE
// when a risk attitude is on — a parent's CE only reads its children's CEs).
// The parts that can change are evaluated in full by engine.Evaluate; tests
// compare every end-point with a full evaluation of the whole project.

type pruner struct {
	p        *engine.Project
	r        *engine.Result
	uses     map[string][]*engine.Node // variable → nodes whose own fields name it
	users    map[string][]string       // variable → variables whose formula names it
	parent   map[*engine.Node]*engine.Node
	riskVars map[string]bool // names the risk tolerance uses
}

func formulaNames(src string) []string {
	src = strings.TrimSpace(src)
	if src == "" || src == engine.RestProbability {
		return nil
	}
	f, err := engine.ParseFormula(src)
	if err != nil {
		return nil
	}
	return f.Names()
}

func newPruner(p *engine.Project, r *engine.Result) *pruner {
	pr := &pruner{p: p, r: r, uses: map[string][]*engine.Node{}, users: map[string][]string{},
		parent: map[*engine.Node]*engine.Node{}, riskVars: map[string]bool{}}
	for _, v := range p.Variables {
		for _, name := range formulaNames(v.Value) {
			pr.users[name] = append(pr.users[name], v.Name)
		}
	}
	if p.Risk.Mode != engine.RiskNeutral {
		for _, name := range formulaNames(p.Risk.Tolerance) {
			pr.riskVars[name] = true
		}
	}
	engine.Walk(p.Root, func(n *engine.Node, _ int) bool {
		seen := map[string]bool{}
		add := func(src string) {
			for _, name := range formulaNames(src) {
				if !seen[name] {
					seen[name] = true
					pr.uses[name] = append(pr.uses[name], n)
				}
			}
		}
		add(n.Payoff)
		for _, b := range n.Branches {
			add(b.Cash)
			add(b.Probability)
			if b.To != nil {
				pr.parent[b.To] = n
			}
		}
		return true
	})
	return pr
}

// project returns the reduced copy for variable name, the full clone when
// nothing can be pruned, or nil when the variable reaches no part of the tree.
func (pr *pruner) project(name string) *engine.Project {
	deps := map[string]bool{name: true}
	queue := []string{name}
	for len(queue) > 0 {
		v := queue[0]
		queue = queue[1:]
		for _, u := range pr.users[v] {
			if !deps[u] {
				deps[u] = true
				queue = append(queue, u)
			}
		}
	}
	for d := range deps {
		if pr.riskVars[d] {
			return pr.p.Clone() // the tolerance moves every certainty equivalent
		}
	}
	var seeds []*engine.Node
	for d := range deps {
		seeds = append(seeds, pr.uses[d]...)
	}
	return pr.reduce(pr.p.Root, seeds)
}

// reduce copies the subtree at top (the root for a whole project) keeping the
// seed nodes and their ancestors up to top; every other subtree hanging off
// them becomes an end node paying its exact base value. It returns nil when no
// seed lies under top.
func (pr *pruner) reduce(top *engine.Node, seeds []*engine.Node) *engine.Project {
	dirty := map[*engine.Node]bool{}
	for _, n := range seeds {
		for m := n; m != nil && !dirty[m]; m = pr.parent[m] {
			dirty[m] = true
			if m == top {
				break
			}
		}
	}
	if !dirty[top] {
		return nil
	}
	c := *pr.p
	c.Variables = make([]*engine.Variable, len(pr.p.Variables))
	for i, v := range pr.p.Variables {
		c.Variables[i] = v.Clone()
	}
	copyNode := func(n *engine.Node) *engine.Node {
		return &engine.Node{ID: n.ID, Kind: n.Kind, Name: n.Name, Payoff: n.Payoff}
	}
	c.Root = copyNode(top)
	type pair struct{ from, to *engine.Node }
	stack := []pair{{top, c.Root}}
	for len(stack) > 0 {
		pp := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		pp.to.Branches = make([]*engine.Branch, len(pp.from.Branches))
		for i, b := range pp.from.Branches {
			nb := &engine.Branch{Label: b.Label, Probability: b.Probability, Cash: b.Cash}
			switch {
			case b.To == nil:
			case dirty[b.To]:
				nb.To = copyNode(b.To)
				stack = append(stack, pair{b.To, nb.To})
			default:
				nb.To = &engine.Node{ID: b.To.ID, Kind: engine.End, Name: b.To.Name, Payoff: pr.r.DisplayValue(b.To).String()}
			}
			pp.to.Branches[i] = nb
		}
	}
	return &c
}
