package engine

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"sync/atomic"

	"github.com/shopspring/decimal"
)

var one = decimal.NewFromInt(1)

// evaluationStamp marks the nodes one evaluation has visited, so finding a node
// reached twice needs no map.
var evaluationStamp atomic.Uint64

// variableGeneration numbers distinct sets of variable values across projects.
var variableGeneration atomic.Uint64

// Evaluate validates the project and rolls the tree back exactly. It never fails:
// every problem is listed in Result.Problems with its place, and the parts of the
// tree that can be computed still are. Evaluate keeps compiled formulas and an
// index inside the nodes, so one project must not be evaluated from two goroutines
// at once (analyses work on clones).
func Evaluate(p *Project) *Result {
	r := &Result{Project: p}
	r.Vars = evaluateVariables(p, &r.Problems)
	r.varsGen = p.noteVariables(r.Vars)
	if p.Root == nil {
		r.addProblem("", -1, "root", "the project has no root node")
		return r
	}
	r.index()
	r.evaluateFields()
	r.rollBack()
	r.evaluateRisk()
	r.markPolicy()
	return r
}

func (r *Result) addProblem(nodeID string, branch int, field, msg string) {
	r.Problems = append(r.Problems, Problem{NodeID: nodeID, Branch: branch, Field: field, Msg: msg})
}

// Place names a node (and branch) the way every message does: node "n7" branch "Long delay".
func Place(n *Node, branch int) string {
	s := fmt.Sprintf("node %q", n.ID)
	if branch >= 0 && branch < len(n.Branches) {
		label := n.Branches[branch].Label
		if label == "" {
			label = fmt.Sprintf("#%d", branch+1)
		}
		s += fmt.Sprintf(" branch %q", label)
	}
	return s
}

func (r *Result) nodeProblem(n *Node, branch int, field, msg string) {
	place := Place(n, branch)
	if field != "" {
		place += " " + field
	}
	r.addProblem(n.ID, branch, field, place+": "+msg)
}

// evaluateVariables computes every variable in dependency order; cycles and
// unknown names are problems, and the variables involved are left out.
func evaluateVariables(p *Project, problems *[]Problem) MapEnv {
	env := MapEnv{}
	formulas := map[string]*Formula{}
	seen := map[string]bool{}
	for _, v := range p.Variables {
		place := fmt.Sprintf("variable %q", v.Name)
		if !ValidName(v.Name) {
			*problems = append(*problems, Problem{Branch: -1, Field: "name", Msg: place + ": not a valid name (letters, digits and _, not starting with a digit)"})
			continue
		}
		if seen[v.Name] {
			*problems = append(*problems, Problem{Branch: -1, Field: "name", Msg: place + ": defined twice"})
			continue
		}
		seen[v.Name] = true
		f, err := ParseFormula(v.Value)
		if err != nil {
			*problems = append(*problems, Problem{Branch: -1, Field: "variable " + v.Name, Msg: place + " value: " + err.Error()})
			continue
		}
		formulas[v.Name] = f
	}
	// Depth-first in declaration order, with an explicit stack, so cycles can be named.
	const (
		unvisited = iota
		active
		done
	)
	state := map[string]int{}
	for _, v := range p.Variables {
		if formulas[v.Name] == nil || state[v.Name] != unvisited {
			continue
		}
		type frame struct {
			name string
			next int
		}
		stack := []frame{{v.Name, 0}}
		state[v.Name] = active
		for len(stack) > 0 {
			top := &stack[len(stack)-1]
			f := formulas[top.name]
			if f == nil { // dropped as part of a cycle
				stack = stack[:len(stack)-1]
				continue
			}
			if top.next < len(f.names) {
				dep := f.names[top.next]
				top.next++
				if formulas[dep] == nil {
					continue // reported when the formula is evaluated
				}
				switch state[dep] {
				case unvisited:
					state[dep] = active
					stack = append(stack, frame{dep, 0})
				case active:
					var cycle []string
					for i := range stack {
						if stack[i].name == dep {
							for _, fr := range stack[i:] {
								cycle = append(cycle, fr.name)
							}
						}
					}
					cycle = append(cycle, dep)
					*problems = append(*problems, Problem{Branch: -1, Field: "variable " + dep,
						Msg: fmt.Sprintf("variables refer to each other in a cycle: %s", strings.Join(cycle, " → "))})
					for _, c := range cycle {
						delete(formulas, c)
						state[c] = done
					}
				}
				continue
			}
			name := top.name
			stack = stack[:len(stack)-1]
			state[name] = done
			if f == nil || formulas[name] == nil {
				continue
			}
			val, err := f.Eval(env)
			if err != nil {
				*problems = append(*problems, Problem{Branch: -1, Field: "variable " + name,
					Msg: fmt.Sprintf("variable %q value: %s", name, err)})
				continue
			}
			env[name] = val
		}
	}
	return env
}

// index lists the nodes in preorder and sizes the result slices. A node that
// appears twice (the tree is not a tree) is reported and not descended again.
func (r *Result) index() {
	stamp := evaluationStamp.Add(1)
	hint := r.Project.sizeHint
	r.Nodes = make([]*Node, 0, hint)
	r.parent = make([]int32, 0, hint)
	r.parentBranch = make([]int32, 0, hint)
	r.first = make([]int32, 0, hint+1)
	r.child = make([]int32, 0, hint)
	// The stack carries where each node hangs, so parents and child slots are
	// filled in one pass, and the roll-back never has to look into a child node.
	type item struct {
		n              *Node
		parent, branch int32
	}
	stack := []item{{r.Project.Root, -1, -1}}
	for len(stack) > 0 {
		it := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		n := it.n
		if n.stamp == stamp {
			r.nodeProblem(n, -1, "", "this node appears in two places; a tree node has one parent")
			continue // its second place keeps child slot -1, which breaks that parent
		}
		n.stamp = stamp
		i := int32(len(r.Nodes))
		n.index = int(i)
		r.Nodes = append(r.Nodes, n)
		r.parent = append(r.parent, it.parent)
		r.parentBranch = append(r.parentBranch, it.branch)
		if it.parent >= 0 {
			r.child[r.first[it.parent]+it.branch] = i
		}
		r.first = append(r.first, int32(len(r.child)))
		for range n.Branches {
			r.child = append(r.child, -1)
		}
		for bi := len(n.Branches) - 1; bi >= 0; bi-- {
			if c := n.Branches[bi].To; c != nil {
				stack = append(stack, item{c, i, int32(bi)})
			}
		}
	}
	r.first = append(r.first, int32(len(r.child)))
	r.checkIDs()
	count, slots := len(r.Nodes), len(r.child)
	r.Project.sizeHint = count
	r.value = make([]decimal.Decimal, count)
	r.choice = make([]int, count)
	for i := range r.choice {
		r.choice[i] = -1
	}
	r.onPolicy = make([]bool, count)
	r.payoff = make([]decimal.Decimal, count)
	r.broken = make([]bool, count)
	r.probFlat, r.cashFlat = make([]decimal.Decimal, slots), make([]decimal.Decimal, slots)
	r.probS, r.cashS = make([]small, slots), make([]small, slots)
	r.payoffS = make([]small, count)
}

// probsOf and cashOf are node i's evaluated branch probabilities and cash, as
// views into one flat slice each (one allocation for the whole tree).
func (r *Result) probsOf(i int) []decimal.Decimal { return r.probFlat[r.first[i]:r.first[i+1]] }
func (r *Result) cashOf(i int) []decimal.Decimal  { return r.cashFlat[r.first[i]:r.first[i+1]] }
func (r *Result) probSOf(i int) []small           { return r.probS[r.first[i]:r.first[i+1]] }
func (r *Result) cashSOf(i int) []small           { return r.cashS[r.first[i]:r.first[i+1]] }

// setTies records the branches tied with node i's choice; ties are rare, so a map.
func (r *Result) setTies(i int, ties []int) {
	if len(ties) == 0 {
		delete(r.ties, i)
		return
	}
	if r.ties == nil {
		r.ties = map[int][]int{}
	}
	r.ties[i] = ties
}

// checkIDs reports ids used twice. The project keeps the id → node map of its
// last evaluation; when every node still sits under its own id (the usual case
// after an edit) look-ups suffice and the map is not rebuilt.
func (r *Result) checkIDs() {
	p := r.Project
	// Fast path: the same number of nodes, each still carrying the id it had when
	// the ids were last found unique (new nodes carry none), so nothing can clash.
	if p.idsChecked == len(r.Nodes) {
		same := true
		for _, n := range r.Nodes {
			if n.checkedID != n.ID || n.checkedID == "" {
				same = false
				break
			}
		}
		if same {
			return
		}
	}
	p.idsChecked = -1
	ids := make(map[string]*Node, len(r.Nodes))
	unique := true
	for _, n := range r.Nodes {
		if _, dup := ids[n.ID]; dup {
			r.nodeProblem(n, -1, "id", "the id is used by another node")
			unique = false
			continue
		}
		ids[n.ID] = n
	}
	for _, n := range r.Nodes {
		n.checkedID = ""
		if unique {
			n.checkedID = n.ID
		}
	}
	if unique {
		p.idsChecked = len(r.Nodes)
	}
}

// evalField evaluates an optional formula field; empty means zero.
// Its int64 form comes along, worked out once per value and cached with it.
func (r *Result) evalField(cache *cachedFormula, src string, n *Node, branch int, field string) (decimal.Decimal, small, bool) {
	if strings.TrimSpace(src) == "" {
		return decimal.Zero, small{ok: true}, true
	}
	f, err := cache.get(src)
	if err == nil {
		if f.constant {
			return f.cval, f.csmall, true
		}
		if cache.gen == r.varsGen { // same text, same variable values: same result
			return cache.val, cache.sval, true
		}
		var v decimal.Decimal
		if v, err = f.Eval(r.Vars); err == nil {
			cache.val, cache.sval, cache.gen = v, smallOf(v), r.varsGen
			return v, cache.sval, true
		}
	}
	r.nodeProblem(n, branch, field, err.Error())
	return decimal.Zero, small{}, false
}

// noteVariables returns a number that changes whenever the evaluated variable
// values differ from the previous evaluation's, so cached field values computed
// under the same values can be reused.
func (p *Project) noteVariables(vars MapEnv) uint64 {
	same := p.varsGen != 0 && len(vars) == len(p.lastVars)
	if same {
		for k, v := range vars {
			if old, ok := p.lastVars[k]; !ok || !old.Equal(v) {
				same = false
				break
			}
		}
	}
	if !same {
		p.varsGen = variableGeneration.Add(1)
		p.lastVars = vars
	}
	return p.varsGen
}

func (r *Result) evaluateFields() {
	for i, n := range r.Nodes {
		switch n.Kind {
		case End:
			if len(n.Branches) > 0 {
				r.nodeProblem(n, -1, "", "an end node cannot have branches")
				r.broken[i] = true
			}
			v, sv, ok := r.evalField(&n.payoffF, n.Payoff, n, -1, "payoff")
			r.payoff[i], r.payoffS[i] = v, sv
			r.broken[i] = r.broken[i] || !ok
			continue
		case Decision, Chance:
			if len(n.Branches) == 0 {
				r.nodeProblem(n, -1, "", fmt.Sprintf("a %s node needs at least one branch", n.Kind))
				r.broken[i] = true
			}
			if strings.TrimSpace(n.Payoff) != "" {
				r.nodeProblem(n, -1, "payoff", "only end nodes have a payoff; put the value on a branch's cash")
				r.broken[i] = true
			}
		default:
			r.nodeProblem(n, -1, "kind", fmt.Sprintf("unknown kind %q (use decision, chance or end)", n.Kind))
			r.broken[i] = true
			continue
		}
		for bi, b := range n.Branches {
			if b.To == nil {
				r.nodeProblem(n, bi, "", "the branch leads nowhere")
				r.broken[i] = true
			}
			v, sv, ok := r.evalField(&b.cashF, b.Cash, n, bi, "cash")
			r.cashOf(i)[bi], r.cashSOf(i)[bi] = v, sv
			r.broken[i] = r.broken[i] || !ok
		}
		if n.Kind == Decision {
			for bi, b := range n.Branches {
				if strings.TrimSpace(b.Probability) != "" {
					r.nodeProblem(n, bi, "probability", "a decision branch has no probability; make the node a chance node or clear the field")
					r.broken[i] = true
				}
			}
			continue
		}
		if !r.evaluateProbabilities(n) {
			r.broken[i] = true
		}
	}
}

// evaluateProbabilities checks a chance node's distribution: each in [0, 1],
// at most one "rest", and a total of exactly 1.
func (r *Result) evaluateProbabilities(n *Node) bool {
	if r.reuseProbabilities(n) {
		return true
	}
	ok := r.checkProbabilities(n)
	r.rememberProbabilities(n, ok)
	return ok
}

// reuseProbabilities skips the exact checks when a node's probability formulas
// are unchanged since a previous valid check and so are the variable values
// (or the formulas use none).
func (r *Result) reuseProbabilities(n *Node) bool {
	c := &n.probCheck
	if !c.valid || len(c.formulas) != len(n.Branches) {
		return false
	}
	for bi, b := range n.Branches {
		if strings.TrimSpace(b.Probability) == RestProbability {
			if c.formulas[bi] != nil {
				return false
			}
			continue
		}
		f, err := b.probF.get(b.Probability)
		if err != nil || f != c.formulas[bi] || (!f.constant && c.gen != r.varsGen) {
			return false
		}
	}
	copy(r.probsOf(n.index), c.probs)
	copy(r.probSOf(n.index), c.smalls)
	return true
}

func (r *Result) rememberProbabilities(n *Node, ok bool) {
	c := &n.probCheck
	c.valid = false
	if !ok {
		return
	}
	c.formulas = c.formulas[:0]
	for _, b := range n.Branches {
		if strings.TrimSpace(b.Probability) == RestProbability {
			c.formulas = append(c.formulas, nil)
			continue
		}
		f, _ := b.probF.get(b.Probability)
		c.formulas = append(c.formulas, f)
	}
	c.probs = append(c.probs[:0], r.probsOf(n.index)...)
	c.smalls = append(c.smalls[:0], r.probSOf(n.index)...)
	c.gen = r.varsGen
	c.valid = true
}

func (r *Result) checkProbabilities(n *Node) bool {
	i := n.index
	ok := true
	rest := -1
	sum := decimal.Zero
	for bi, b := range n.Branches {
		src := strings.TrimSpace(b.Probability)
		switch {
		case src == RestProbability:
			if rest >= 0 {
				r.nodeProblem(n, bi, "probability", `only one branch of a node may be "rest"`)
				ok = false
			}
			rest = bi
			continue
		case src == "":
			r.nodeProblem(n, bi, "probability", "missing (give a number, a formula or rest)")
			ok = false
			continue
		}
		v, sv, good := r.evalField(&b.probF, b.Probability, n, bi, "probability")
		if !good {
			ok = false
			continue
		}
		if v.IsNegative() || v.GreaterThan(one) {
			r.nodeProblem(n, bi, "probability", fmt.Sprintf("%s is outside 0 to 1", v.String()))
			ok = false
		}
		r.probsOf(i)[bi], r.probSOf(i)[bi] = v, sv
		sum = sum.Add(v)
	}
	if !ok {
		return false
	}
	if rest >= 0 {
		left := one.Sub(sum)
		if left.IsNegative() {
			r.nodeProblem(n, rest, "probability", fmt.Sprintf("the other branches already add up to %s, so rest would be negative", sum.String()))
			return false
		}
		r.probsOf(i)[rest], r.probSOf(i)[rest] = left, smallOf(left)
		return true
	}
	if !sum.Equal(one) {
		r.nodeProblem(n, -1, "probability", fmt.Sprintf("the branch probabilities add up to %s, not 1 (give one branch the probability rest to take up the difference)", sum.String()))
		return false
	}
	return true
}

// rollBack computes values from the ends to the root: reverse preorder visits
// every child before its parent, so no recursion is needed at any depth.
func (r *Result) rollBack() {
	maximize := r.Project.Objective != Minimize
	// fast holds the int64 form of each value when it fits; the decimal form is
	// then made only when asked for (see val), which spares an allocation per node.
	r.valueS = make([]small, len(r.Nodes))
	fast := r.valueS
	for i := len(r.Nodes) - 1; i >= 0; i-- {
		n := r.Nodes[i]
		if n.Kind == End {
			r.value[i] = r.payoff[i]
			fast[i] = r.payoffS[i]
			continue
		}
		for bi, b := range n.Branches {
			if c := r.child[int(r.first[i])+bi]; b.To != nil && (c < 0 || r.broken[c]) {
				r.broken[i] = true
			}
		}
		if r.broken[i] {
			continue
		}
		switch n.Kind {
		case Chance:
			if acc, ok := r.chanceFast(i, n, fast); ok {
				fast[i] = acc
				continue
			}
			sum := decimal.Zero
			for bi, b := range n.Branches {
				p := r.probsOf(i)[bi]
				if p.IsZero() {
					continue
				}
				v := r.branchValue(i, bi, b)
				if !p.Equal(one) {
					v = p.Mul(v)
				}
				sum = sum.Add(v)
			}
			r.value[i], fast[i] = sum, smallOf(sum)
		case Decision:
			best, ties, bestS, ok := r.decideFast(i, n, fast, maximize)
			if ok {
				r.choice[i], fast[i] = best, bestS
				r.setTies(i, ties)
				continue
			}
			var bestV decimal.Decimal
			best, ties = -1, nil
			for bi, b := range n.Branches {
				v := r.branchValue(i, bi, b)
				switch {
				case best < 0:
					best, bestV = bi, v
				case v.Equal(bestV):
					ties = append(ties, bi)
				case (maximize && v.GreaterThan(bestV)) || (!maximize && v.LessThan(bestV)):
					best, bestV, ties = bi, v, nil
				}
			}
			r.choice[i], r.value[i], fast[i] = best, bestV, smallOf(bestV)
			r.setTies(i, ties)
		}
	}
}

// decideFast picks the best branch in int64 arithmetic; ok is false when any
// value does not fit, and the caller then uses decimal.Decimal.
func (r *Result) decideFast(i int, n *Node, fast []small, maximize bool) (int, []int, small, bool) {
	best := -1
	var bestS small
	var ties []int
	for bi := range n.Branches {
		vs := fast[r.child[int(r.first[i])+bi]].add(r.cashSOf(i)[bi])
		if !vs.ok {
			return 0, nil, small{}, false
		}
		if best < 0 {
			best, bestS = bi, vs
			continue
		}
		c, ok := vs.cmp(bestS)
		if !ok {
			return 0, nil, small{}, false
		}
		switch {
		case c == 0:
			ties = append(ties, bi)
		case (maximize && c > 0) || (!maximize && c < 0):
			best, bestS, ties = bi, vs, nil
		}
	}
	return best, ties, bestS, true
}

// chanceFast is the chance-node sum in int64 arithmetic; ok is false when any
// step would not fit, and the caller then uses decimal.Decimal.
func (r *Result) chanceFast(i int, n *Node, fast []small) (small, bool) {
	acc := small{ok: true}
	for bi := range n.Branches {
		p := r.probsOf(i)[bi]
		if p.IsZero() {
			continue
		}
		v := fast[r.child[int(r.first[i])+bi]].add(r.cashSOf(i)[bi])
		acc = acc.add(r.probSOf(i)[bi].mul(v))
		if !acc.ok {
			return acc, false
		}
	}
	return acc, true
}

// val is node i's value: the int64 form when the roll-back kept one, else the decimal.
func (r *Result) val(i int) decimal.Decimal {
	if s := r.valueS[i]; s.ok {
		return s.dec()
	}
	return r.value[i]
}

// setValue replaces node i's value with a decimal (the risk pass re-rolls chance nodes).
func (r *Result) setValue(i int, d decimal.Decimal) {
	r.value[i], r.valueS[i] = d, small{}
}

func (r *Result) branchValue(i, bi int, b *Branch) decimal.Decimal {
	v := r.val(int(r.child[int(r.first[i])+bi]))
	if c := r.cashOf(i)[bi]; !c.IsZero() {
		v = v.Add(c)
	}
	return v
}

// evaluateRisk rolls back certainty equivalents under exponential utility and lets
// decisions follow them. For a cost objective the utility is applied to the
// negated cost and the CE is reported back as a cost.
func (r *Result) evaluateRisk() {
	risk := r.Project.Risk
	if risk.Mode == RiskNeutral {
		return
	}
	if risk.Mode != RiskExponential {
		r.addProblem("", -1, "risk", fmt.Sprintf("risk attitude %q is unknown (use exponential, or leave it empty for risk-neutral)", risk.Mode))
		return
	}
	R, err := ParseTolerance(risk.Tolerance, r.Vars)
	if err != nil {
		r.addProblem("", -1, "risk tolerance", "risk tolerance: "+err.Error())
		return
	}
	r.riskOn, r.tolerance = true, R
	sign := 1.0
	if r.Project.Objective == Minimize {
		sign = -1
	}
	ce := make([]float64, len(r.Nodes)) // in benefit terms (sign applied)
	r.ce = make([]decimal.Decimal, len(r.Nodes))
	terms := make([]float64, 0, 8)
	for i := len(r.Nodes) - 1; i >= 0; i-- {
		n := r.Nodes[i]
		if r.broken[i] {
			continue
		}
		branchCE := func(bi int, b *Branch) float64 {
			return ce[r.child[int(r.first[i])+bi]] + sign*r.cashOf(i)[bi].InexactFloat64()
		}
		switch n.Kind {
		case End:
			ce[i] = sign * r.payoff[i].InexactFloat64()
		case Chance:
			terms = terms[:0]
			ps := make([]float64, 0, len(n.Branches))
			for bi, b := range n.Branches {
				p := r.probsOf(i)[bi].InexactFloat64()
				if p == 0 {
					continue
				}
				terms = append(terms, branchCE(bi, b))
				ps = append(ps, p)
			}
			ce[i] = CertaintyEquivalent(ps, terms, R)
		case Decision:
			best, ties := -1, []int(nil)
			for bi, b := range n.Branches {
				v := branchCE(bi, b)
				switch {
				case best < 0 || v > ce[i]:
					best, ce[i], ties = bi, v, nil
				case v == ce[i]:
					ties = append(ties, bi)
				}
			}
			r.choice[i] = best
			r.setTies(i, ties)
			// The EV shown at a decision is that of the branch chosen under the attitude.
			r.setValue(i, r.branchValue(i, best, n.Branches[best]))
		}
		r.ce[i] = decimal.NewFromFloat(sign * ce[i])
	}
	// Values of ancestors must follow the new choices.
	r.reRollChance()
}

// reRollChance recomputes chance-node EVs after risk-attitude choices changed decisions.
func (r *Result) reRollChance() {
	for i := len(r.Nodes) - 1; i >= 0; i-- {
		n := r.Nodes[i]
		if r.broken[i] {
			continue
		}
		switch n.Kind {
		case Chance:
			sum := decimal.Zero
			for bi, b := range n.Branches {
				if p := r.probsOf(i)[bi]; !p.IsZero() {
					sum = sum.Add(p.Mul(r.branchValue(i, bi, b)))
				}
			}
			r.setValue(i, sum)
		case Decision:
			if c := r.choice[i]; c >= 0 {
				r.setValue(i, r.branchValue(i, c, n.Branches[c]))
			}
		}
	}
}

// CertaintyEquivalent of a discrete gamble under U(x) = 1 − exp(−x/R):
// CE = −R ln Σ p·exp(−x/R), computed with the largest exponent factored out so
// large payoffs do not overflow. R < 0 gives the risk-seeking form
// U(x) = exp(x/|R|) − 1, which has the same CE expression.
func CertaintyEquivalent(probs, values []float64, R float64) float64 {
	if len(values) == 0 {
		return 0
	}
	m := math.Inf(-1)
	for k, x := range values {
		if probs[k] > 0 { // an impossible outcome must not set the shift (it would underflow the sum to 0)
			m = math.Max(m, -x/R)
		}
	}
	if math.IsInf(m, -1) {
		return 0
	}
	if math.IsInf(R, 0) || math.IsInf(m, 1) {
		return ceLimit(probs, values, R) // R so large or so small that the exponents overflow
	}
	s := 0.0
	for k, x := range values {
		if probs[k] > 0 {
			s += probs[k] * math.Exp(-x/R-m)
		}
	}
	return -R * (m + math.Log(s))
}

// ceLimit is the CE at the limits of R: the EV as |R| → ∞, the worst possible
// outcome as R → 0⁺ and the best as R → 0⁻.
func ceLimit(probs, values []float64, R float64) float64 {
	ev, lo, hi := 0.0, math.Inf(1), math.Inf(-1)
	for k, x := range values {
		if probs[k] > 0 {
			ev += probs[k] * x
			lo, hi = math.Min(lo, x), math.Max(hi, x)
		}
	}
	switch {
	case math.IsInf(R, 0):
		return ev
	case R > 0:
		return lo
	}
	return hi
}

// ParseTolerance evaluates a risk tolerance text: a non-zero finite number.
func ParseTolerance(src string, vars MapEnv) (float64, error) {
	if strings.TrimSpace(src) == "" {
		return 0, fmt.Errorf("missing (give R, the risk tolerance, in the project's units)")
	}
	f, err := ParseFormula(src)
	if err != nil {
		return 0, err
	}
	v, err := f.Eval(vars)
	if err != nil {
		return 0, err
	}
	if v.IsZero() {
		return 0, fmt.Errorf("R cannot be 0 (a very large R means nearly risk-neutral; leave the attitude off for exactly risk-neutral)")
	}
	return v.InexactFloat64(), nil
}

// markPolicy follows the recommended choice at each decision from the root.
func (r *Result) markPolicy() {
	if len(r.Nodes) == 0 {
		return
	}
	r.onPolicy[0] = true
	for i, n := range r.Nodes {
		if !r.onPolicy[i] {
			continue
		}
		for bi := range n.Branches {
			c := r.child[int(r.first[i])+bi]
			if c < 0 {
				continue
			}
			if n.Kind == Decision && bi != r.choice[i] {
				continue
			}
			r.onPolicy[c] = true
		}
	}
}

// forward computes path probability and accumulated cash from the root down.
// It runs on first use: the roll-back itself does not need it.
func (r *Result) forward() {
	r.forwardOnce.Do(r.computeForward)
}

func (r *Result) computeForward() {
	count := len(r.Nodes)
	r.pathValue = make([]decimal.Decimal, count)
	r.pathProb = make([]decimal.Decimal, count)
	if count == 0 {
		return
	}
	// As in the roll-back, int64 arithmetic where it fits, decimal where it does not.
	sv, sp := make([]small, count), make([]small, count)
	r.pathProb[0], sp[0] = one, small{c: 1, ok: true}
	r.pathValue[0], sv[0] = decimal.Zero, small{ok: true}
	for i := 1; i < count; i++ {
		pi, bi := int(r.parent[i]), int(r.parentBranch[i])
		pn := r.Nodes[pi]
		var cash, prob decimal.Decimal
		hasCash, hasProb := false, false
		if pn.Kind == Decision || pn.Kind == Chance {
			cash = r.cashOf(pi)[bi]
			hasCash = !cash.IsZero()
		}
		if pn.Kind == Chance {
			prob, hasProb = r.probsOf(pi)[bi], true
		}
		sv[i], sp[i] = sv[pi], sp[pi]
		if hasCash {
			sv[i] = sv[pi].add(r.cashSOf(pi)[bi])
		}
		if hasProb {
			sp[i] = sp[pi].mul(r.probSOf(pi)[bi])
		}
		if sv[i].ok {
			r.pathValue[i] = sv[i].dec()
		} else {
			r.pathValue[i] = r.pathValue[pi]
			if hasCash {
				r.pathValue[i] = r.pathValue[i].Add(cash)
			}
			sv[i] = smallOf(r.pathValue[i])
		}
		if sp[i].ok {
			r.pathProb[i] = sp[i].dec()
		} else {
			r.pathProb[i] = r.pathProb[pi]
			if hasProb {
				r.pathProb[i] = r.pathProb[i].Mul(prob)
			}
			sp[i] = smallOf(r.pathProb[i])
		}
	}
	for i, n := range r.Nodes {
		if n.Kind == End {
			if s := sv[i].add(r.payoffS[i]); s.ok {
				r.pathValue[i], sv[i] = s.dec(), s
			} else {
				r.pathValue[i] = r.pathValue[i].Add(r.payoff[i])
				sv[i] = smallOf(r.pathValue[i])
			}
		}
	}
	r.pathValueS = sv
}

// PathRow is one line of the path table: an end node and how it is reached.
type PathRow struct {
	End          *Node
	Labels       []string // branch labels from the root
	Probability  decimal.Decimal
	Payoff       decimal.Decimal // cash along the path plus the end payoff
	Contribution decimal.Decimal // Probability × Payoff
	Optimal      bool            // on the recommended policy
}

// Paths lists every end node in tree order with its path figures.
func (r *Result) Paths() []PathRow {
	var rows []PathRow
	for i, n := range r.Nodes {
		if n.Kind != End {
			continue
		}
		r.forward()
		rows = append(rows, PathRow{
			End: n, Labels: r.Labels(n), Probability: r.pathProb[i], Payoff: r.pathValue[i],
			Contribution: r.pathProb[i].Mul(r.pathValue[i]), Optimal: r.onPolicy[i],
		})
	}
	return rows
}

// Labels is the list of branch labels from the root to n.
func (r *Result) Labels(n *Node) []string {
	if !r.has(n) {
		return nil
	}
	var labels []string
	for i := n.index; i > 0; i = int(r.parent[i]) {
		labels = append(labels, r.Nodes[r.parent[i]].Branches[r.parentBranch[i]].Label)
	}
	for a, b := 0, len(labels)-1; a < b; a, b = a+1, b-1 {
		labels[a], labels[b] = labels[b], labels[a]
	}
	return labels
}

// ParentOf returns the parent node and branch index of n from the last evaluation.
func (r *Result) ParentOf(n *Node) (*Node, int) {
	if !r.has(n) || n.index == 0 {
		return nil, -1
	}
	return r.Nodes[r.parent[n.index]], int(r.parentBranch[n.index])
}

// PolicyStep is one decision on the recommended path.
type PolicyStep struct {
	Node   *Node
	Choice int
	Ties   []int
}

// Policy lists the decisions reached under the recommended policy, in tree order.
func (r *Result) Policy() []PolicyStep {
	var steps []PolicyStep
	for i, n := range r.Nodes {
		if n.Kind == Decision && r.onPolicy[i] && r.choice[i] >= 0 {
			steps = append(steps, PolicyStep{Node: n, Choice: r.choice[i], Ties: r.ties[i]})
		}
	}
	return steps
}

// Depth is the number of branches from the root to n.
func (r *Result) Depth(n *Node) int {
	d := 0
	if !r.has(n) {
		return 0
	}
	for i := n.index; i > 0; i = int(r.parent[i]) {
		d++
	}
	return d
}

// SortProblems orders problems by their place in the tree (project-level first).
func (r *Result) SortProblems() {
	pos := map[string]int{}
	for i, n := range r.Nodes {
		if _, ok := pos[n.ID]; !ok {
			pos[n.ID] = i + 1
		}
	}
	sort.SliceStable(r.Problems, func(a, b int) bool { return pos[r.Problems[a].NodeID] < pos[r.Problems[b].NodeID] })
}
