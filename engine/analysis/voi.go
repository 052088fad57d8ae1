package analysis

import (
	"fmt"
	"strings"

	"github.com/ramify-app/ramify/engine"
	"github.com/shopspring/decimal"
)

// Value of perfect information (EVPI).
//
// The tree is restructured, never approximated: to learn uncertainty U before
// the first decision, a clone of the tree gets a new root chance node over U's
// outcomes, and under each outcome a copy of the whole tree in which every
// occurrence of U is replaced by that outcome's subtree (the outcome's cash is
// added to the cash of the branch leading into U, so no money moves). The
// restructured project is evaluated exactly with engine.Evaluate, and
// EVPI = value with the information − value without, turned so that it is a
// gain: for a cost objective it is the saving (without − with).
//
// "The same uncertainty". One uncertainty often appears in several places (the
// same market on every alternative). Chance nodes are the same uncertainty when
// their names are equal, ignoring case and repeated spaces; an unnamed chance node
// is an uncertainty of its own. All occurrences must have the same branches
// (labels, same order, ignoring case) and the same evaluated probabilities;
// otherwise no number is given, with the reason.
//
// Moving U in front of a decision D is not valid, and is reported instead of a
// number, when:
//   - its occurrences differ in form or in probabilities (the probabilities then
//     depend on which earlier branch was taken);
//   - it appears twice on one path;
//   - it lies below D on some of D's branches only: resolving it first would
//     assume it happens whatever is chosen. VOIOptions.AnyBranch accepts that
//     assumption explicitly (the outcome is then simply irrelevant on the other
//     branches).

// VOIOptions tune the value-of-information analyses.
type VOIOptions struct {
	// AnyBranch treats an uncertainty found below only some branches of a
	// decision as one that happens whatever is chosen.
	AnyBranch bool
	// MaxNodes caps the size of a restructured tree (default 200,000).
	MaxNodes int
}

func (o VOIOptions) maxNodes() int {
	if o.MaxNodes <= 0 {
		return 200_000
	}
	return o.MaxNodes
}

// Uncertainty is one uncertainty of the tree: the chance nodes that share a name.
type Uncertainty struct {
	Key   string
	Name  string         // title of the first occurrence
	Nodes []*engine.Node // occurrences in preorder
}

// UncertaintyKey is the key under which chance nodes count as the same uncertainty.
func UncertaintyKey(n *engine.Node) string {
	name := strings.ToLower(strings.Join(strings.Fields(n.Name), " "))
	if name == "" {
		return "#" + n.ID
	}
	return name
}

// FindUncertainties groups the chance nodes below root, in order of first appearance.
func FindUncertainties(root *engine.Node) []*Uncertainty {
	var out []*Uncertainty
	byKey := map[string]*Uncertainty{}
	engine.Walk(root, func(n *engine.Node, _ int) bool {
		if n.Kind != engine.Chance {
			return true
		}
		k := UncertaintyKey(n)
		u := byKey[k]
		if u == nil {
			u = &Uncertainty{Key: k, Name: engine.NodeTitle(n)}
			byKey[k] = u
			out = append(out, u)
		}
		u.Nodes = append(u.Nodes, n)
		return true
	})
	return out
}

func (u *Uncertainty) ids() []string {
	out := make([]string, len(u.Nodes))
	for i, n := range u.Nodes {
		out[i] = n.ID
	}
	return out
}

func (u *Uncertainty) is(n *engine.Node) bool {
	return n != nil && n.Kind == engine.Chance && UncertaintyKey(n) == u.Key
}

func sameLabel(a, b string) bool {
	return strings.EqualFold(strings.Join(strings.Fields(a), " "), strings.Join(strings.Fields(b), " "))
}

func probList(r *engine.Result, n *engine.Node) string {
	var ps []string
	for i := range n.Branches {
		ps = append(ps, engine.FormatProbability(r.Probability(n, i)))
	}
	return strings.Join(ps, ", ")
}

// consistent checks that every occurrence has the same branches and probabilities,
// and that no path meets the uncertainty twice. It returns the probabilities.
func (u *Uncertainty) consistent(r *engine.Result, root *engine.Node) ([]decimal.Decimal, string) {
	first := u.Nodes[0]
	for _, n := range u.Nodes[1:] {
		same := len(n.Branches) == len(first.Branches)
		for i := 0; same && i < len(n.Branches); i++ {
			same = sameLabel(n.Branches[i].Label, first.Branches[i].Label)
		}
		if !same {
			return nil, fmt.Sprintf("%q appears in different forms: node %q has branches %s, node %q has %s; give them the same branches or different names",
				u.Name, first.ID, branchNames(first), n.ID, branchNames(n))
		}
		for i := range n.Branches {
			if !r.Probability(n, i).Equal(r.Probability(first, i)) {
				return nil, fmt.Sprintf("the probabilities of %q differ between node %q (%s) and node %q (%s): they depend on an earlier branch, so it cannot be learnt first on its own",
					u.Name, first.ID, probList(r, first), n.ID, probList(r, n))
			}
		}
	}
	probs := make([]decimal.Decimal, len(first.Branches))
	for i := range probs {
		probs[i] = r.Probability(first, i)
	}
	twice := ""
	u.occurrencesBelow(root, func(n *engine.Node, below map[*engine.Node]int) bool {
		if u.is(n) && below[n] > 1 {
			twice = fmt.Sprintf("%q appears twice on one path (node %q lies below another node of that name)", u.Name, n.ID)
			return false
		}
		return true
	})
	if twice != "" {
		return nil, twice
	}
	return probs, ""
}

// occurrencesBelow visits the nodes under root, children before parents, with
// below counting the nodes of U at or below each node visited so far; it stops
// at the first visit that returns false.
func (u *Uncertainty) occurrencesBelow(root *engine.Node, visit func(n *engine.Node, below map[*engine.Node]int) bool) {
	below := map[*engine.Node]int{}
	nodes := preorder(root)
	for i := len(nodes) - 1; i >= 0; i-- {
		n := nodes[i]
		c := 0
		for _, b := range n.Branches {
			c += below[b.To]
		}
		if u.is(n) {
			c++
		}
		below[n] = c
		if !visit(n, below) {
			return
		}
	}
}

// crossesDecision reports why U cannot be moved in front of the decisions above
// it ("" when it can), and whether any decision lies above an occurrence at all.
func (u *Uncertainty) crossesDecision(root *engine.Node, anyBranch bool) (reason string, crosses bool) {
	u.occurrencesBelow(root, func(n *engine.Node, below map[*engine.Node]int) bool {
		if n.Kind != engine.Decision || below[n] == 0 {
			return true
		}
		crosses = true
		var without []string
		for bi, b := range n.Branches {
			if below[b.To] == 0 {
				without = append(without, fmt.Sprintf("%q", engine.BranchTitle(n, bi)))
			}
		}
		if len(without) > 0 && !anyBranch && reason == "" {
			reason = fmt.Sprintf("%q lies after decision %q only on some branches (not on %s); learning it first would assume it happens whatever is chosen there. Add a chance node of the same name to those branches, or allow it with the any-branch option",
				u.Name, engine.NodeTitle(n), strings.Join(without, ", "))
		}
		return true
	})
	return reason, crosses
}

func branchNames(n *engine.Node) string {
	var out []string
	for i := range n.Branches {
		out = append(out, engine.BranchTitle(n, i))
	}
	return strings.Join(out, " / ")
}

func preorder(root *engine.Node) []*engine.Node {
	var out []*engine.Node
	engine.Walk(root, func(n *engine.Node, _ int) bool { out = append(out, n); return true })
	return out
}

// addCash joins two cash texts into one formula.
func addCash(a, b string) string {
	a, b = strings.TrimSpace(a), strings.TrimSpace(b)
	switch {
	case a == "":
		return b
	case b == "":
		return a
	}
	return "(" + a + ") + (" + b + ")"
}

// without returns a copy of the subtree at n in which every occurrence of u is
// replaced by its branch k (the branch's cash joins the cash leading in).
func (u *Uncertainty) without(n *engine.Node, k int) *engine.Node {
	c := &engine.Node{ID: n.ID, Kind: n.Kind, Name: n.Name, Note: n.Note, Payoff: n.Payoff, Collapsed: n.Collapsed}
	for _, b := range n.Branches {
		nb := &engine.Branch{Label: b.Label, Probability: b.Probability, Cash: b.Cash}
		to := b.To
		for u.is(to) {
			nb.Cash = addCash(nb.Cash, to.Branches[k].Cash)
			to = to.Branches[k].To
		}
		nb.To = u.without(to, k)
		c.Branches = append(c.Branches, nb)
	}
	return c
}

// learnFirst builds the tree in which u is resolved before everything else.
func (u *Uncertainty) learnFirst(root *engine.Node, probs []decimal.Decimal, maxNodes int) (*engine.Node, error) {
	first := u.Nodes[0]
	size := len(preorder(root))
	if size*len(first.Branches) > maxNodes {
		return nil, fmt.Errorf("learning %q first would need about %d nodes, more than the limit of %d", u.Name, size*len(first.Branches), maxNodes)
	}
	front := &engine.Node{ID: "learnt-" + first.ID, Kind: engine.Chance, Name: first.Name}
	texts := probabilityTexts(probs, 28)
	for k, b := range first.Branches {
		nb := &engine.Branch{Label: b.Label, Probability: texts[k]}
		to := root
		for u.is(to) {
			nb.Cash = addCash(nb.Cash, to.Branches[k].Cash)
			to = to.Branches[k].To
		}
		nb.To = u.without(to, k)
		front.Branches = append(front.Branches, nb)
	}
	return front, nil
}

// uniqueIDs renames repeated ids below root (copies keep their originals' ids
// while a tree is restructured) and ids already in taken.
func uniqueIDs(root *engine.Node, taken map[string]bool) {
	counter := 1
	engine.Walk(root, func(n *engine.Node, _ int) bool {
		if taken[n.ID] {
			base := n.ID
			for taken[n.ID] {
				counter++
				n.ID = fmt.Sprintf("%s~%d", base, counter)
			}
		}
		taken[n.ID] = true
		return true
	})
}

// gain turns "with − without" into a gain under the objective (a saving for costs).
func gain(obj engine.Objective, with, without decimal.Decimal) decimal.Decimal {
	if obj == engine.Minimize {
		return without.Sub(with)
	}
	return with.Sub(without)
}

// EVPIFigure is the value of learning one uncertainty (or all) before deciding.
type EVPIFigure struct {
	Name    string
	NodeIDs []string
	Valid   bool
	Reason  string          // why there is no number, when !Valid
	With    decimal.Decimal // value with the information
	EVPI    decimal.Decimal // the gain; never negative
}

// VOIReport holds EVPI for the whole project and for each uncertainty.
type VOIReport struct {
	Objective engine.Objective
	ValueWord string          // "expected cost", "certainty equivalent", …
	Without   decimal.Decimal // the project's value as it stands
	Whole     EVPIFigure
	Nodes     []EVPIFigure
	result    *engine.Result
}

// Format prints a value the way the project prints values.
func (v *VOIReport) Format(d decimal.Decimal) string { return v.result.Format(d) }

// evaluateValid evaluates a restructured project and returns its value.
func evaluateValid(q *engine.Project, what string) (decimal.Decimal, error) {
	r := engine.Evaluate(q)
	if !r.Valid() {
		return decimal.Zero, fmt.Errorf("%s: the restructured tree has a problem: %s", what, r.Problems[0].Msg)
	}
	return r.DisplayValue(q.Root), nil
}

// settle guards EVPI against float noise: with a risk attitude the certainty
// equivalents are float-based, so a gain within 1e-9 of zero (relative) is zero.
// Without one the arithmetic is exact and nothing is changed.
func settle(r *engine.Result, g, scale decimal.Decimal) decimal.Decimal {
	if r.RiskActive() && g.IsNegative() && g.Abs().InexactFloat64() <= 1e-9*maxf(1, scale.Abs().InexactFloat64()) {
		return decimal.Zero
	}
	return g
}

func maxf(a, b float64) float64 {
	if a > b {
		return a
	}
	return b
}

// figure computes EVPI for u in front of the root of base (which r evaluates).
func figure(base *engine.Project, r *engine.Result, u *Uncertainty, opt VOIOptions) EVPIFigure {
	f := EVPIFigure{Name: u.Name, NodeIDs: u.ids()}
	probs, reason := u.consistent(r, base.Root)
	if reason == "" {
		reason, _ = u.crossesDecision(base.Root, opt.AnyBranch)
	}
	if reason != "" {
		f.Reason = reason
		return f
	}
	front, err := u.learnFirst(base.Root, probs, opt.maxNodes())
	if err != nil {
		f.Reason = err.Error()
		return f
	}
	uniqueIDs(front, map[string]bool{})
	q := base.Clone()
	q.Root = front
	with, err := evaluateValid(q, fmt.Sprintf("learning %q first", u.Name))
	if err != nil {
		f.Reason = err.Error()
		return f
	}
	without := r.DisplayValue(base.Root)
	f.Valid, f.With, f.EVPI = true, with, settle(r, gain(base.Objective, with, without), without)
	return f
}

// EVPI computes the value of perfect information for the whole project (every
// uncertainty learnt before the first decision) and for each uncertainty alone.
// The project must evaluate without problems; it is not changed.
func EVPI(p *engine.Project, opt VOIOptions) (*VOIReport, error) {
	base := p.Clone()
	r := engine.Evaluate(base)
	if !r.Valid() {
		return nil, fmt.Errorf("the project has %d problem(s) to fix first; the first: %s", len(r.Problems), r.Problems[0].Msg)
	}
	rep := &VOIReport{Objective: base.Objective, ValueWord: r.ValueWord(), Without: r.DisplayValue(base.Root), result: r}
	us := FindUncertainties(base.Root)
	for _, u := range us {
		rep.Nodes = append(rep.Nodes, figure(base, r, u, opt))
	}
	rep.Whole = wholeEVPI(base, r, us, opt)
	return rep, nil
}

// wholeEVPI learns every uncertainty that lies after some decision, one after
// the other (their order among themselves does not matter: they are independent
// chance events and all end up in front of every decision).
func wholeEVPI(base *engine.Project, r *engine.Result, us []*Uncertainty, opt VOIOptions) EVPIFigure {
	f := EVPIFigure{Name: "all uncertainties"}
	var reasons []string
	var move []*Uncertainty
	probs := map[*Uncertainty][]decimal.Decimal{}
	for _, u := range us {
		f.NodeIDs = append(f.NodeIDs, u.ids()...)
		ps, reason := u.consistent(r, base.Root)
		crosses := false
		if reason == "" {
			reason, crosses = u.crossesDecision(base.Root, opt.AnyBranch)
		}
		if reason != "" {
			reasons = append(reasons, fmt.Sprintf("%q", u.Name))
			continue
		}
		if crosses {
			move = append(move, u)
			probs[u] = ps
		}
	}
	if len(reasons) > 0 {
		f.Reason = fmt.Sprintf("not every uncertainty can be learnt first: %s (see each one's reason)", strings.Join(reasons, ", "))
		return f
	}
	tree := base.Root
	for _, u := range move {
		next, err := u.learnFirst(tree, probs[u], opt.maxNodes())
		if err != nil {
			f.Reason = err.Error()
			return f
		}
		tree = next
	}
	uniqueIDs(tree, map[string]bool{})
	q := base.Clone()
	q.Root = tree
	with, err := evaluateValid(q, "learning everything first")
	if err != nil {
		f.Reason = err.Error()
		return f
	}
	without := r.DisplayValue(base.Root)
	f.Valid, f.With, f.EVPI = true, with, settle(r, gain(base.Objective, with, without), without)
	return f
}
