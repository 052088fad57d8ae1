package engine

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// The edit commands. Each holds pointers to the nodes it changes; every inverse
// puts back the very same objects (nodes, branches, variables), so a pointer
// held by an older command or by a selection stays valid across undo and redo.
// A command that returns an error has changed nothing.

// ---- field edits ----

// Node fields SetNodeField can change.
const (
	FieldName        = "name"
	FieldNote        = "note"
	FieldPayoff      = "payoff"
	FieldLabel       = "label"
	FieldProbability = "probability"
	FieldCash        = "cash"
)

// SetNodeField changes a node's name, note or payoff.
type SetNodeField struct {
	Node  *Node
	Field string // FieldName, FieldNote or FieldPayoff
	Value string
}

func (c *SetNodeField) Describe() string { return "Change " + c.Field }

func (c *SetNodeField) Apply(p *Project) (Command, error) {
	n := c.Node
	if n == nil {
		return nil, errors.New("no node selected")
	}
	var ptr *string
	switch c.Field {
	case FieldName:
		ptr = &n.Name
	case FieldNote:
		ptr = &n.Note
	case FieldPayoff:
		if n.Kind != End && strings.TrimSpace(c.Value) != "" {
			return nil, fmt.Errorf("%s payoff: only end nodes have a payoff; put the value on a branch's cash", Place(n, -1))
		}
		if err := checkOptionalFormula(c.Value); err != nil {
			return nil, fmt.Errorf("%s payoff: %w", Place(n, -1), err)
		}
		ptr = &n.Payoff
	default:
		return nil, fmt.Errorf("%s: no field %q", Place(n, -1), c.Field)
	}
	old := *ptr
	*ptr = c.Value
	return &SetNodeField{Node: n, Field: c.Field, Value: old}, nil
}

// SetBranchField changes a branch's label, probability or cash.
type SetBranchField struct {
	Node   *Node
	Branch int
	Field  string // FieldLabel, FieldProbability or FieldCash
	Value  string
}

func (c *SetBranchField) Describe() string { return "Change " + c.Field }

func (c *SetBranchField) Apply(p *Project) (Command, error) {
	n := c.Node
	if n == nil || c.Branch < 0 || c.Branch >= len(n.Branches) {
		return nil, errors.New("no branch selected")
	}
	b := n.Branches[c.Branch]
	var ptr *string
	switch c.Field {
	case FieldLabel:
		ptr = &b.Label
	case FieldCash:
		if err := checkOptionalFormula(c.Value); err != nil {
			return nil, fmt.Errorf("%s cash: %w", Place(n, c.Branch), err)
		}
		ptr = &b.Cash
	case FieldProbability:
		v := strings.TrimSpace(c.Value)
		switch {
		case n.Kind != Chance && v != "":
			return nil, fmt.Errorf("%s probability: a decision branch has no probability; make the node a chance node first", Place(n, c.Branch))
		case n.Kind != Chance || v == RestProbability:
		case v == "":
			return nil, fmt.Errorf("%s probability: missing (give a number, a formula or rest)", Place(n, c.Branch))
		default:
			if _, err := ParseFormula(c.Value); err != nil {
				return nil, fmt.Errorf("%s probability: %w", Place(n, c.Branch), err)
			}
		}
		ptr = &b.Probability
	default:
		return nil, fmt.Errorf("%s: no field %q", Place(n, c.Branch), c.Field)
	}
	old := *ptr
	*ptr = c.Value
	return &SetBranchField{Node: n, Branch: c.Branch, Field: c.Field, Value: old}, nil
}

// checkOptionalFormula accepts an empty text (zero) or one that parses.
func checkOptionalFormula(src string) error {
	if strings.TrimSpace(src) == "" {
		return nil
	}
	_, err := ParseFormula(src)
	return err
}

// ---- structure ----

// nodeState is everything about a node that structural edits change.
type nodeState struct {
	Node     *Node
	Kind     Kind
	Payoff   string
	Branches []*Branch
	Probs    []string // the branches' probability texts
	Desc     string
}

func captureState(n *Node, desc string) *nodeState {
	s := &nodeState{Node: n, Kind: n.Kind, Payoff: n.Payoff, Desc: desc,
		Branches: append([]*Branch(nil), n.Branches...)}
	for _, b := range n.Branches {
		s.Probs = append(s.Probs, b.Probability)
	}
	return s
}

func (s *nodeState) Describe() string { return s.Desc }

func (s *nodeState) Apply(p *Project) (Command, error) {
	inv := captureState(s.Node, s.Desc)
	s.Node.Kind, s.Node.Payoff = s.Kind, s.Payoff
	s.Node.Branches = append([]*Branch(nil), s.Branches...)
	if len(s.Branches) == 0 {
		s.Node.Branches = nil
	}
	for i, b := range s.Node.Branches {
		b.Probability = s.Probs[i]
	}
	return inv, nil
}

// AddBranch adds a branch to a decision or chance node at position At
// (-1 or past the end: last). With Branch nil it makes a new branch leading to
// a new end node; otherwise it inserts the given branch and its subtree.
type AddBranch struct {
	Node   *Node
	At     int
	Branch *Branch
	Desc   string // optional: "Paste", "Duplicate subtree"
}

func (c *AddBranch) Describe() string {
	if c.Desc != "" {
		return c.Desc
	}
	return "Add branch"
}

func (c *AddBranch) Apply(p *Project) (Command, error) {
	n := c.Node
	if n == nil {
		return nil, errors.New("no node selected")
	}
	if n.Kind == End {
		return nil, fmt.Errorf("%s: an end node has no branches; make it a decision or chance node first", Place(n, -1))
	}
	at := c.At
	if at < 0 || at > len(n.Branches) {
		at = len(n.Branches)
	}
	b := c.Branch
	if b == nil {
		b = newBranch(p, n, at)
	}
	inv := captureState(n, c.Describe())
	n.Branches = append(n.Branches, nil)
	copy(n.Branches[at+1:], n.Branches[at:])
	n.Branches[at] = b
	return inv, nil
}

// newBranch makes a branch for n leading to a fresh end node. On a chance node
// it takes "rest" when no branch has it yet, otherwise 0, so the node stays valid.
func newBranch(p *Project, n *Node, at int) *Branch {
	b := &Branch{To: &Node{ID: NewNodeID(p), Kind: End}}
	switch n.Kind {
	case Chance:
		b.Label = fmt.Sprintf("Outcome %d", at+1)
		b.Probability = RestProbability
		for _, o := range n.Branches {
			if strings.TrimSpace(o.Probability) == RestProbability {
				b.Probability = "0"
			}
		}
	default:
		b.Label = fmt.Sprintf("Option %d", at+1)
	}
	return b
}

// NewNodeID returns an id no node of the project uses: n1, n2, …
func NewNodeID(p *Project) string {
	used := map[string]bool{}
	Walk(p.Root, func(n *Node, _ int) bool { used[n.ID] = true; return true })
	counter := len(used)
	return nextID(used, &counter)
}

// NewAddSibling adds a new branch after the one leading to n.
func NewAddSibling(p *Project, n *Node) (Command, error) {
	parent, i := p.Parent(n)
	if parent == nil {
		return nil, errors.New("the root node has no siblings; add a branch to it instead")
	}
	return &AddBranch{Node: parent, At: i + 1, Desc: "Add sibling"}, nil
}

// RemoveBranch removes a branch and the subtree it leads to.
type RemoveBranch struct {
	Node   *Node
	Branch int
}

func (c *RemoveBranch) Describe() string { return "Delete subtree" }

func (c *RemoveBranch) Apply(p *Project) (Command, error) {
	n := c.Node
	if n == nil || c.Branch < 0 || c.Branch >= len(n.Branches) {
		return nil, errors.New("no branch selected")
	}
	inv := captureState(n, "Delete subtree")
	n.Branches = append(append([]*Branch(nil), n.Branches[:c.Branch]...), n.Branches[c.Branch+1:]...)
	if len(n.Branches) == 0 {
		n.Branches = nil
	}
	return inv, nil
}

// NewDeleteSubtree deletes n and everything below it. The root cannot be deleted.
func NewDeleteSubtree(p *Project, n *Node) (Command, error) {
	parent, i := p.Parent(n)
	if parent == nil {
		return nil, errors.New("the root node cannot be deleted; make it an end node to clear the tree")
	}
	return &RemoveBranch{Node: parent, Branch: i}, nil
}

// MoveBranch moves a branch from one position to another among its siblings.
type MoveBranch struct {
	Node     *Node
	From, To int
}

func (c *MoveBranch) Describe() string {
	if c.To < c.From {
		return "Move up"
	}
	return "Move down"
}

func (c *MoveBranch) Apply(p *Project) (Command, error) {
	n := c.Node
	if n == nil || c.From < 0 || c.From >= len(n.Branches) {
		return nil, errors.New("no branch selected")
	}
	if c.To < 0 || c.To >= len(n.Branches) {
		if c.To < c.From {
			return nil, errors.New("already the first branch")
		}
		return nil, errors.New("already the last branch")
	}
	b := n.Branches[c.From]
	n.Branches = append(n.Branches[:c.From], n.Branches[c.From+1:]...)
	n.Branches = append(n.Branches, nil)
	copy(n.Branches[c.To+1:], n.Branches[c.To:])
	n.Branches[c.To] = b
	return &MoveBranch{Node: n, From: c.To, To: c.From}, nil
}

// ChangeKind makes a node a decision, chance or end node. What it drops (the
// branches when becoming an end, the payoff otherwise) is kept in the inverse.
// Decision → chance gives the branches equal probabilities; end → decision or
// chance adds two branches so the node is usable at once.
type ChangeKind struct {
	Node *Node
	Kind Kind
}

func (c *ChangeKind) Describe() string { return "Make " + string(c.Kind) }

func (c *ChangeKind) Apply(p *Project) (Command, error) {
	n := c.Node
	if n == nil {
		return nil, errors.New("no node selected")
	}
	switch c.Kind {
	case Decision, Chance, End:
	default:
		return nil, fmt.Errorf("%s: unknown kind %q (use decision, chance or end)", Place(n, -1), c.Kind)
	}
	if n.Kind == c.Kind {
		return nil, fmt.Errorf("%s is already a %s node", Place(n, -1), c.Kind)
	}
	inv := captureState(n, c.Describe())
	from := n.Kind
	n.Kind = c.Kind
	switch {
	case c.Kind == End:
		n.Branches = nil
	case from == End || len(n.Branches) == 0:
		n.Payoff = ""
		n.Branches = nil
		for i := 0; i < 2; i++ {
			n.Branches = append(n.Branches, newBranch(p, n, i))
		}
		if c.Kind == Chance {
			n.Branches[0].Probability = "1/2"
			n.Branches[1].Probability = RestProbability
		}
	case c.Kind == Decision:
		for _, b := range n.Branches {
			b.Probability = ""
		}
	case c.Kind == Chance:
		k := len(n.Branches)
		for i, b := range n.Branches {
			b.Probability = "1/" + strconv.Itoa(k)
			if i == k-1 {
				b.Probability = RestProbability
			}
		}
	}
	return inv, nil
}

// SetCollapsed collapses or expands a node on the drawing.
type SetCollapsed struct {
	Node      *Node
	Collapsed bool
}

func (c *SetCollapsed) Describe() string {
	if c.Collapsed {
		return "Collapse"
	}
	return "Expand"
}

func (c *SetCollapsed) Apply(p *Project) (Command, error) {
	if c.Node == nil {
		return nil, errors.New("no node selected")
	}
	old := c.Node.Collapsed
	c.Node.Collapsed = c.Collapsed
	return &SetCollapsed{Node: c.Node, Collapsed: old}, nil
}

// ReplaceNode puts New where Old is (the root, or the end of Old's branch).
type ReplaceNode struct {
	Old, New *Node
	Desc     string
}

func (c *ReplaceNode) Describe() string {
	if c.Desc != "" {
		return c.Desc
	}
	return "Replace subtree"
}

func (c *ReplaceNode) Apply(p *Project) (Command, error) {
	if c.Old == nil || c.New == nil {
		return nil, errors.New("nothing to replace")
	}
	if p.Root == c.Old {
		p.Root = c.New
	} else {
		parent, i := p.Parent(c.Old)
		if parent == nil {
			return nil, fmt.Errorf("%s is not in the project", Place(c.Old, -1))
		}
		parent.Branches[i].To = c.New
	}
	return &ReplaceNode{Old: c.New, New: c.Old, Desc: c.Desc}, nil
}

// Batch applies several commands as one edit; its inverse undoes them in reverse.
// If one fails, those already applied are undone and the error returned.
type Batch struct {
	Desc     string
	Commands []Command
}

func (c *Batch) Describe() string { return c.Desc }

func (c *Batch) Apply(p *Project) (Command, error) {
	invs := make([]Command, 0, len(c.Commands))
	for _, cmd := range c.Commands {
		inv, err := cmd.Apply(p)
		if err != nil {
			for i := len(invs) - 1; i >= 0; i-- {
				_, _ = invs[i].Apply(p) // an inverse of a successful edit cannot fail
			}
			return nil, err
		}
		invs = append(invs, inv)
	}
	rev := make([]Command, len(invs))
	for i, inv := range invs {
		rev[len(invs)-1-i] = inv
	}
	return &Batch{Desc: c.Desc, Commands: rev}, nil
}
