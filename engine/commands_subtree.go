package engine

import (
	"errors"
	"fmt"
	"strings"
)

// Subtrees travel through the clipboard in the project file format: a whole
// project document whose root is the copied node, carrying the variables the
// subtree's formulas use (directly or through other variables), so a paste
// into another project still evaluates. Parse reads it back like any file.

// MarshalSubtree writes the subtree at n as a project document.
func MarshalSubtree(p *Project, n *Node) ([]byte, error) {
	if n == nil {
		return nil, errors.New("no node selected")
	}
	doc := &Project{
		Title:     "Copied subtree: " + NodeTitle(n),
		Objective: p.Objective,
		Currency:  p.Currency,
		Decimals:  p.Decimals,
		Variables: usedVariables(p, n),
		Root:      n,
	}
	return Marshal(doc)
}

// usedVariables lists, in project order, the variables the subtree needs.
func usedVariables(p *Project, root *Node) []*Variable {
	var texts []string
	Walk(root, func(n *Node, _ int) bool {
		texts = append(texts, n.Payoff)
		for _, b := range n.Branches {
			texts = append(texts, b.Probability, b.Cash)
		}
		return true
	})
	needed := map[string]bool{}
	uses := func(name string) bool {
		for _, t := range texts {
			if t != "" && UsesName(t, name) {
				return true
			}
		}
		return false
	}
	for changed := true; changed; {
		changed = false
		for _, v := range p.Variables {
			if !needed[v.Name] && uses(v.Name) {
				needed[v.Name] = true
				changed = true
				texts = append(texts, v.Value, v.Low, v.High)
				if d := v.Dist; d != nil {
					texts = append(texts, d.Min, d.Mode, d.Max, d.Mean, d.SD)
					texts = append(texts, d.Values...)
					texts = append(texts, d.Probs...)
				}
			}
		}
	}
	var out []*Variable
	for _, v := range p.Variables {
		if needed[v.Name] {
			out = append(out, v)
		}
	}
	return out
}

// freshIDs gives the nodes of sub ids the project does not use. With keep,
// an id that is still free is kept (so cut and paste keeps ids).
func freshIDs(p *Project, sub *Node, keep bool) {
	used := map[string]bool{}
	Walk(p.Root, func(n *Node, _ int) bool { used[n.ID] = true; return true })
	counter := len(used)
	Walk(sub, func(n *Node, _ int) bool {
		if keep && n.ID != "" && !used[n.ID] {
			used[n.ID] = true
		} else {
			n.ID = nextID(used, &counter)
		}
		return true
	})
}

// NewPaste pastes a subtree read from the clipboard (see MarshalSubtree) at
// target: onto a decision or chance node it becomes a new branch; onto an end
// node it replaces that node. Variables the subtree needs and the project lacks
// are added; a variable the project already has keeps the project's definition.
func NewPaste(p *Project, target *Node, clip *Project) (Command, error) {
	if target == nil {
		return nil, errors.New("select where to paste first")
	}
	if clip == nil || clip.Root == nil {
		return nil, errors.New("the clipboard holds no subtree")
	}
	sub := clip.Root.Clone()
	freshIDs(p, sub, true)
	batch := &Batch{Desc: "Paste"}
	for _, v := range clip.Variables {
		if p.Variable(v.Name) == nil {
			batch.Commands = append(batch.Commands, &AddVariable{Variable: v.Clone(), At: -1})
		}
	}
	if target.Kind == End {
		batch.Commands = append(batch.Commands, &ReplaceNode{Old: target, New: sub, Desc: "Paste"})
	} else {
		b := newBranch(p, target, len(target.Branches))
		if strings.TrimSpace(sub.Name) != "" {
			b.Label = sub.Name
		}
		b.To = sub
		batch.Commands = append(batch.Commands, &AddBranch{Node: target, At: -1, Branch: b, Desc: "Paste"})
	}
	return batch, nil
}

// NewDuplicate copies the subtree at n, with fresh ids, onto a new branch right
// after n's own. On a chance node the copy's probability is 0, so the node's
// probabilities still add up.
func NewDuplicate(p *Project, n *Node) (Command, error) {
	parent, i := p.Parent(n)
	if parent == nil {
		return nil, errors.New("the root node cannot be duplicated; copy it and paste it onto a node instead")
	}
	src := parent.Branches[i]
	sub := n.Clone()
	freshIDs(p, sub, false)
	b := &Branch{Label: strings.TrimSpace(src.Label + " (copy)"), Cash: src.Cash, To: sub}
	if parent.Kind == Chance {
		b.Probability = "0"
	}
	return &AddBranch{Node: parent, At: i + 1, Branch: b, Desc: fmt.Sprintf("Duplicate %s", NodeTitle(n))}, nil
}
