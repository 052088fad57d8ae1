// Package engine holds Ramify's decision-tree model, its formulas, the exact
// roll-back, validation, the project file format and the edit commands.
// It never imports Fyne: every renderer and front end reads what it computes.
package engine

// Kind is the kind of a node, in the trade's own words.
type Kind string

const (
	Decision Kind = "decision"
	Chance   Kind = "chance"
	End      Kind = "end"
)

// Objective says which way a decision chooses.
type Objective string

const (
	Maximize Objective = "maximize" // benefits, profit: highest expected value wins
	Minimize Objective = "minimize" // costs: lowest expected value wins
)

// Project is one decision problem: settings, named variables and the tree.
type Project struct {
	Title      string
	Notes      string
	PreparedBy string
	Objective  Objective
	Currency   string // unit label shown beside values: "EUR", "$", "days"
	Decimals   int    // decimals shown; arithmetic is always exact
	Variables  []*Variable
	Risk       RiskAttitude
	Root       *Node

	sizeHint   int    // node count at the last evaluation, to size slices
	idsChecked int    // node count when the ids were last found unique, -1 when not
	varsGen    uint64 // see noteVariables
	lastVars   MapEnv
}

// RiskAttitude is the project's stated attitude to risk.
// Tolerance is a formula text (R of the exponential utility); empty when neutral.
type RiskAttitude struct {
	Mode      RiskMode
	Tolerance string
}

type RiskMode string

const (
	RiskNeutral     RiskMode = ""            // decide on expected value
	RiskExponential RiskMode = "exponential" // U(x) = 1 − exp(−x/R), R > 0 averse, R < 0 seeking
)

// Variable is a named input. Value, Low and High are formula texts; Low and High
// are optional and give the range used by sensitivity analysis.
type Variable struct {
	Name  string
	Value string
	Low   string
	High  string
	Note  string
	Dist  *Distribution // optional: the variable's uncertainty for simulation
}

// Distribution describes a variable's uncertainty for Monte Carlo simulation.
// Parameters are formula texts; which ones apply depends on Kind.
type Distribution struct {
	Kind   DistKind
	Min    string   // uniform, triangular, pert
	Mode   string   // triangular, pert (most likely)
	Max    string   // uniform, triangular, pert
	Mean   string   // normal, lognormal (mean of the variable itself)
	SD     string   // normal, lognormal (standard deviation of the variable itself)
	Values []string // discrete
	Probs  []string // discrete
}

type DistKind string

const (
	DistFixed      DistKind = "fixed"
	DistUniform    DistKind = "uniform"
	DistTriangular DistKind = "triangular"
	DistPERT       DistKind = "pert"
	DistNormal     DistKind = "normal"
	DistLognormal  DistKind = "lognormal"
	DistDiscrete   DistKind = "discrete"
)

// Node is a decision, chance or end node. Probability, cash and payoff are
// formula texts over the project's variables; they are compiled once and the
// compiled form is cached until the text changes.
type Node struct {
	ID        string
	Kind      Kind
	Name      string
	Note      string
	Payoff    string // end nodes only; empty means 0
	Branches  []*Branch
	Collapsed bool // drawn as a stub; a view setting saved with the project

	payoffF cachedFormula
	index   int    // position in the last evaluation's preorder; see Evaluate
	stamp   uint64 // last evaluation that visited the node
	// checkedID is the id the node had when the ids were last found unique.
	checkedID string

	probCheck probabilityCheck
}

// Branch leaves a decision or chance node and leads to a child node.
type Branch struct {
	Label       string
	Probability string // chance branches only: a formula, or "rest"
	Cash        string // optional value incurred on taking the branch
	To          *Node

	probF cachedFormula
	cashF cachedFormula
}

// RestProbability is the probability text meaning "1 minus the node's other branches".
const RestProbability = "rest"

// Walk visits n and every node below it in preorder without recursion.
// Returning false from visit skips that node's children.
func Walk(n *Node, visit func(n *Node, depth int) bool) {
	if n == nil {
		return
	}
	type item struct {
		n     *Node
		depth int
	}
	stack := []item{{n, 0}}
	for len(stack) > 0 {
		it := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		if !visit(it.n, it.depth) {
			continue
		}
		for i := len(it.n.Branches) - 1; i >= 0; i-- {
			if c := it.n.Branches[i].To; c != nil {
				stack = append(stack, item{c, it.depth + 1})
			}
		}
	}
}

// Nodes returns every node of the project in preorder.
func (p *Project) Nodes() []*Node {
	var out []*Node
	Walk(p.Root, func(n *Node, _ int) bool { out = append(out, n); return true })
	return out
}

// FindNode returns the node with the given id, or nil.
func (p *Project) FindNode(id string) *Node {
	var found *Node
	Walk(p.Root, func(n *Node, _ int) bool {
		if n.ID == id {
			found = n
		}
		return found == nil
	})
	return found
}

// Parent returns the node and branch index leading to n, or nil, -1 for the root.
func (p *Project) Parent(n *Node) (*Node, int) {
	var parent *Node
	idx := -1
	Walk(p.Root, func(m *Node, _ int) bool {
		for i, b := range m.Branches {
			if b.To == n {
				parent, idx = m, i
			}
		}
		return parent == nil
	})
	return parent, idx
}

// Variable returns the variable with the given name, or nil.
func (p *Project) Variable(name string) *Variable {
	for _, v := range p.Variables {
		if v.Name == name {
			return v
		}
	}
	return nil
}

// Better reports whether a is strictly better than b under the objective.
func (o Objective) Better(a, b float64) bool {
	if o == Minimize {
		return a < b
	}
	return a > b
}

// Clone returns a deep copy of the project; compiled formulas are not shared,
// so the copy can be evaluated on another goroutine.
func (p *Project) Clone() *Project {
	c := *p
	c.idsChecked, c.sizeHint, c.varsGen, c.lastVars = 0, 0, 0, nil
	c.Variables = make([]*Variable, len(p.Variables))
	for i, v := range p.Variables {
		c.Variables[i] = v.Clone()
	}
	c.Root = p.Root.Clone()
	return &c
}

// Clone returns a deep copy of the variable.
func (v *Variable) Clone() *Variable {
	c := *v
	if v.Dist != nil {
		d := *v.Dist
		d.Values = append([]string(nil), v.Dist.Values...)
		d.Probs = append([]string(nil), v.Dist.Probs...)
		c.Dist = &d
	}
	return &c
}

// Clone returns a deep copy of the subtree at n, ids included, without recursion.
func (n *Node) Clone() *Node {
	if n == nil {
		return nil
	}
	copyOne := func(m *Node) *Node {
		c := &Node{ID: m.ID, Kind: m.Kind, Name: m.Name, Note: m.Note, Payoff: m.Payoff, Collapsed: m.Collapsed}
		if len(m.Branches) > 0 {
			c.Branches = make([]*Branch, len(m.Branches))
		}
		return c
	}
	root := copyOne(n)
	type pair struct{ from, to *Node }
	stack := []pair{{n, root}}
	for len(stack) > 0 {
		pr := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		for i, b := range pr.from.Branches {
			nb := &Branch{Label: b.Label, Probability: b.Probability, Cash: b.Cash}
			if b.To != nil {
				nb.To = copyOne(b.To)
				stack = append(stack, pair{b.To, nb.To})
			}
			pr.to.Branches[i] = nb
		}
	}
	return root
}

// probabilityCheck remembers a chance node's last valid constant probabilities.
type probabilityCheck struct {
	valid    bool
	gen      uint64     // variable generation the probabilities were computed under
	formulas []*Formula // nil for the rest branch
	probs    []Decimal
	smalls   []small
}
