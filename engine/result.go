package engine

import (
	"sync"

	"github.com/shopspring/decimal"
)

// Result is what Evaluate computes for a project: values, choices, paths and
// problems. It is read-only data; renderers and analyses read it, never the
// other way round. Node-indexed slices follow Nodes (preorder).
type Result struct {
	Project  *Project
	Problems []Problem
	Nodes    []*Node // preorder; Nodes[i].index == i

	Vars MapEnv // evaluated variable values

	value        []decimal.Decimal // expected value of the subtree at each node
	ce           []decimal.Decimal // certainty equivalent (risk attitude active only)
	choice       []int             // chosen branch at decisions, -1 elsewhere
	ties         map[int][]int     // other branches tied with the choice, by node
	onPolicy     []bool            // reached when following the recommended choices
	pathValue    []decimal.Decimal // cash from the root to the node (plus payoff at ends)
	pathValueS   []small           // int64 form of pathValue where it fits
	pathProb     []decimal.Decimal // product of chance probabilities from the root
	payoff       []decimal.Decimal // end payoff as evaluated
	probFlat     []decimal.Decimal // branch probabilities, node i at first[i]:first[i+1]
	cashFlat     []decimal.Decimal
	first        []int32 // node i's branch slots are first[i] .. first[i+1]-1
	child        []int32 // node index each branch slot leads to, -1 when none
	probS, cashS []small // int64 forms of the above, for the roll-back's fast path
	payoffS      []small
	valueS       []small // int64 form of value where it fits (then value itself is unset)
	broken       []bool  // node's own fields or subtree could not be evaluated
	parent       []int32 // parent index, -1 at the root
	parentBranch []int32
	forwardOnce  sync.Once
	varsGen      uint64
	riskOn       bool
	tolerance    float64
}

// Problem is one validation or evaluation problem, with its place.
type Problem struct {
	NodeID string // "" for project-level problems
	Branch int    // branch index, -1 when the problem is about the node itself
	Field  string // "probability", "cash", "payoff", "variable x value", ...
	Msg    string // full message naming the place
}

func (p Problem) Error() string { return p.Msg }

func (r *Result) has(n *Node) bool {
	return n != nil && n.index >= 0 && n.index < len(r.Nodes) && r.Nodes[n.index] == n
}

// Valid reports whether the project evaluated with no problems.
func (r *Result) Valid() bool { return len(r.Problems) == 0 }

// Value is the root's expected value (or certainty equivalent with a risk attitude).
func (r *Result) Value() decimal.Decimal { return r.DisplayValue(r.Project.Root) }

// ValueOf is the expected value of the subtree at n (cash below n plus payoffs).
func (r *Result) ValueOf(n *Node) decimal.Decimal {
	if !r.has(n) {
		return decimal.Zero
	}
	return r.val(n.index)
}

// CertaintyEquivalent is the CE at n when a risk attitude is active; ok is false otherwise.
func (r *Result) CertaintyEquivalent(n *Node) (decimal.Decimal, bool) {
	if !r.riskOn || !r.has(n) {
		return decimal.Zero, false
	}
	return r.ce[n.index], true
}

// RiskActive reports whether decisions follow an exponential utility.
func (r *Result) RiskActive() bool { return r.riskOn }

// Tolerance is the evaluated risk tolerance R (0 when risk-neutral).
func (r *Result) Tolerance() float64 { return r.tolerance }

// DisplayValue is the value decisions are made on: CE with a risk attitude, EV otherwise.
func (r *Result) DisplayValue(n *Node) decimal.Decimal {
	if ce, ok := r.CertaintyEquivalent(n); ok {
		return ce
	}
	return r.ValueOf(n)
}

// Choice is the recommended branch index at a decision node, or -1.
func (r *Result) Choice(n *Node) int {
	if !r.has(n) {
		return -1
	}
	return r.choice[n.index]
}

// Ties lists the other branch indexes whose value equals the chosen one.
func (r *Result) Ties(n *Node) []int {
	if !r.has(n) {
		return nil
	}
	return r.ties[n.index]
}

// OnPolicy reports whether n is reached when every decision follows its recommendation.
func (r *Result) OnPolicy(n *Node) bool { return r.has(n) && r.onPolicy[n.index] }

// Broken reports whether n or its subtree could not be evaluated (bad formula, bad probabilities).
func (r *Result) Broken(n *Node) bool { return r.has(n) && r.broken[n.index] }

// Probability is the evaluated probability of branch i of n ("rest" resolved).
func (r *Result) Probability(n *Node, i int) decimal.Decimal {
	if !r.has(n) || i < 0 || i >= len(r.probsOf(n.index)) {
		return decimal.Zero
	}
	return r.probsOf(n.index)[i]
}

// Cash is the evaluated cash of branch i of n.
func (r *Result) Cash(n *Node, i int) decimal.Decimal {
	if !r.has(n) || i < 0 || i >= len(r.cashOf(n.index)) {
		return decimal.Zero
	}
	return r.cashOf(n.index)[i]
}

// Payoff is the evaluated payoff of an end node.
func (r *Result) Payoff(n *Node) decimal.Decimal {
	if !r.has(n) {
		return decimal.Zero
	}
	return r.payoff[n.index]
}

// PathValue is the cash collected from the root to n; at an end it includes the payoff,
// so it is the path payoff.
func (r *Result) PathValue(n *Node) decimal.Decimal {
	if !r.has(n) {
		return decimal.Zero
	}
	r.forward()
	return r.pathValue[n.index]
}

// The texts below print a result's numbers exactly as FormatProbability and
// Format print them, but from the int64 forms the roll-back keeps, so a
// layout of a large tree need not read every decimal's digits.

// ProbabilityText is FormatProbability(r.Probability(n, i)).
func (r *Result) ProbabilityText(n *Node, i int) string {
	if !r.has(n) || i < 0 || i >= len(r.probsOf(n.index)) {
		return FormatProbability(decimal.Zero)
	}
	return formatProbability(r.probsOf(n.index)[i], r.probSOf(n.index)[i])
}

// CashText is r.Format(r.Cash(n, i)).
func (r *Result) CashText(n *Node, i int) string {
	if !r.has(n) || i < 0 || i >= len(r.cashOf(n.index)) {
		return r.Format(decimal.Zero)
	}
	return r.format(r.cashOf(n.index)[i], r.cashSOf(n.index)[i])
}

// ValueText is r.Format(r.ValueOf(n)).
func (r *Result) ValueText(n *Node) string {
	if !r.has(n) {
		return r.Format(decimal.Zero)
	}
	if s, ok := formatSmall(r.valueS[n.index], r.Project.Decimals, r.Project.Currency); ok {
		return s
	}
	return r.Format(r.val(n.index))
}

// PathValueText is r.Format(r.PathValue(n)).
func (r *Result) PathValueText(n *Node) string {
	if !r.has(n) {
		return r.Format(decimal.Zero)
	}
	r.forward()
	return r.format(r.pathValue[n.index], r.pathValueS[n.index])
}

// The Append forms below append the same texts to b, so a caller printing
// many numbers can keep them in a few shared buffers.

// AppendProbabilityText appends ProbabilityText(n, i) to b.
func (r *Result) AppendProbabilityText(b []byte, n *Node, i int) []byte {
	if !r.has(n) || i < 0 || i >= len(r.probsOf(n.index)) {
		return append(b, FormatProbability(decimal.Zero)...)
	}
	return appendProbability(b, r.probsOf(n.index)[i], r.probSOf(n.index)[i])
}

// AppendCashText appends CashText(n, i) to b.
func (r *Result) AppendCashText(b []byte, n *Node, i int) []byte {
	if !r.has(n) || i < 0 || i >= len(r.cashOf(n.index)) {
		return append(b, r.Format(decimal.Zero)...)
	}
	return appendValue(b, r.cashOf(n.index)[i], r.cashSOf(n.index)[i], r.Project.Decimals, r.Project.Currency)
}

// AppendValueText appends ValueText(n) to b.
func (r *Result) AppendValueText(b []byte, n *Node) []byte {
	if !r.has(n) {
		return append(b, r.Format(decimal.Zero)...)
	}
	if out, ok := appendSmall(b, r.valueS[n.index], r.Project.Decimals, r.Project.Currency); ok {
		return out
	}
	return append(b, r.Format(r.val(n.index))...)
}

// AppendPathValueText appends PathValueText(n) to b.
func (r *Result) AppendPathValueText(b []byte, n *Node) []byte {
	if !r.has(n) {
		return append(b, r.Format(decimal.Zero)...)
	}
	r.forward()
	return appendValue(b, r.pathValue[n.index], r.pathValueS[n.index], r.Project.Decimals, r.Project.Currency)
}

func (r *Result) format(d decimal.Decimal, s small) string {
	return formatValue(d, s, r.Project.Decimals, r.Project.Currency)
}

// PathProbability is the product of the chance probabilities from the root to n.
func (r *Result) PathProbability(n *Node) decimal.Decimal {
	if !r.has(n) {
		return decimal.Zero
	}
	r.forward()
	return r.pathProb[n.index]
}

// ProblemsAt lists the problems located at node n.
func (r *Result) ProblemsAt(n *Node) []Problem {
	var out []Problem
	for _, p := range r.Problems {
		if n != nil && p.NodeID == n.ID {
			out = append(out, p)
		}
	}
	return out
}

// Format prints a value the one way every renderer and the CLI print it.
func (r *Result) Format(d decimal.Decimal) string {
	return FormatValue(d, r.Project.Decimals, r.Project.Currency)
}

// Decimal is the exact decimal type every value uses.
type Decimal = decimal.Decimal

// ValueKey stands for ValueOf(n) without its digits, so a caller that keeps
// texts (the canvas layout) can tell whether a value changed without making
// the decimal. Two set keys that are equal hold equal values; unequal keys
// may still hold equal values. A key that is not set (the value needs the
// decimal) matches nothing: compare ValueOf then.
type ValueKey struct {
	c  int64
	e  int32
	ok bool
}

// Set reports whether k stands for a value (see ValueKey).
func (k ValueKey) Set() bool { return k.ok }

// ValueKey is the key of ValueOf(n); it does not allocate.
func (r *Result) ValueKey(n *Node) ValueKey {
	if !r.has(n) {
		return ValueKey{}
	}
	s := r.valueS[n.index]
	return ValueKey{c: s.c, e: s.e, ok: s.ok}
}
