package engine

import (
	"fmt"
	"strings"
)

// ValueWord names what the values are: "expected cost" or "expected value",
// or the certainty-equivalent form when a risk attitude is active.
func (r *Result) ValueWord() string {
	switch {
	case r.riskOn && r.Project.Objective == Minimize:
		return "certainty-equivalent cost"
	case r.riskOn:
		return "certainty equivalent"
	case r.Project.Objective == Minimize:
		return "expected cost"
	}
	return "expected value"
}

// RuleWord states how a decision chooses.
func (r *Result) RuleWord() string {
	switch {
	case r.riskOn && r.Project.Objective == Minimize:
		return "lowest certainty-equivalent cost"
	case r.riskOn:
		return "highest certainty equivalent"
	case r.Project.Objective == Minimize:
		return "lowest expected cost"
	}
	return "highest expected value"
}

// NodeTitle is a node's name, or its id when it has none.
func NodeTitle(n *Node) string {
	if strings.TrimSpace(n.Name) != "" {
		return n.Name
	}
	return n.ID
}

// BranchTitle is a branch's label, or its position when it has none.
func BranchTitle(n *Node, i int) string {
	if l := strings.TrimSpace(n.Branches[i].Label); l != "" {
		return l
	}
	return fmt.Sprintf("branch %d", i+1)
}

// Recommendation states the recommended policy in plain sentences, one per
// decision reached on the recommended path.
func (r *Result) Recommendation() []string {
	if !r.Valid() {
		return []string{fmt.Sprintf("No recommendation: the project has %d problem(s) to fix first.", len(r.Problems))}
	}
	var out []string
	for _, step := range r.Policy() {
		n := step.Node
		chosen := n.Branches[step.Choice]
		value := r.DisplayValue(chosen.To)
		if ce, ok := r.branchDisplay(n, step.Choice); ok {
			value = ce
		}
		s := fmt.Sprintf("At %q choose %q: %s %s, the %s of %d alternatives.",
			NodeTitle(n), BranchTitle(n, step.Choice), r.ValueWord(), r.Format(value), r.RuleWord(), len(n.Branches))
		if r.Depth(n) > 0 {
			s = "If it comes to it, a" + strings.TrimPrefix(s, "A")
		}
		if len(step.Ties) > 0 {
			var names []string
			for _, t := range step.Ties {
				names = append(names, fmt.Sprintf("%q", BranchTitle(n, t)))
			}
			s += fmt.Sprintf(" Tied with %s; the first is shown.", strings.Join(names, ", "))
		}
		out = append(out, s)
	}
	return out
}

// BranchValue is the value of taking branch i of n: its cash plus the value below,
// on the scale decisions use (CE with a risk attitude, EV otherwise).
func (r *Result) BranchValue(n *Node, i int) Decimal {
	if v, ok := r.branchDisplay(n, i); ok {
		return v
	}
	return Decimal{}
}

func (r *Result) branchDisplay(n *Node, i int) (Decimal, bool) {
	if !r.has(n) || i < 0 || i >= len(n.Branches) || n.Branches[i].To == nil || !r.has(n.Branches[i].To) {
		return Decimal{}, false
	}
	return r.DisplayValue(n.Branches[i].To).Add(r.Cash(n, i)), true
}
