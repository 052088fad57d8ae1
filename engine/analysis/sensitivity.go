package analysis

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// Field names of a tree field that sensitivity analysis can vary.
const (
	FieldProbability = "probability"
	FieldCash        = "cash"
	FieldPayoff      = "payoff"
)

// Input names one quantity a sensitivity analysis varies: a variable, or a
// single probability, cash or payoff field of the tree.
type Input struct {
	Variable string // a variable's name; empty for a tree field
	NodeID   string // the node of a tree field
	Branch   int    // branch index (from 0) for probability and cash; ignored for payoff
	Label    string // branch label, used instead of Branch when Branch < 0
	Field    string // FieldProbability, FieldCash or FieldPayoff
}

// VariableInput names a variable.
func VariableInput(name string) Input { return Input{Variable: name} }

// FieldInput names one field of the tree.
func FieldInput(nodeID string, branch int, field string) Input {
	return Input{NodeID: nodeID, Branch: branch, Field: field}
}

// IsVariable reports whether the input is a variable.
func (in Input) IsVariable() bool { return in.Variable != "" }

// String names the input the way messages do.
func (in Input) String() string {
	if in.IsVariable() {
		return fmt.Sprintf("variable %q", in.Variable)
	}
	if in.Field == FieldPayoff {
		return fmt.Sprintf("node %q payoff", in.NodeID)
	}
	if in.Branch < 0 {
		return fmt.Sprintf("node %q branch %q %s", in.NodeID, in.Label, in.Field)
	}
	return fmt.Sprintf("node %q branch %d %s", in.NodeID, in.Branch+1, in.Field)
}

// ParseInput reads an input as typed on the command line: a variable name, or a
// tree field as NODEID:BRANCH:FIELD (BRANCH counts from 1 or is the branch
// label; FIELD is probability or cash) or NODEID:payoff.
func ParseInput(text string) (Input, error) {
	text = strings.TrimSpace(text)
	if text == "" {
		return Input{}, fmt.Errorf("no input named")
	}
	if !strings.Contains(text, ":") {
		return VariableInput(text), nil
	}
	parts := strings.Split(text, ":")
	switch {
	case len(parts) == 2 && strings.EqualFold(parts[1], FieldPayoff):
		return FieldInput(parts[0], -1, FieldPayoff), nil
	case len(parts) == 3:
		field := strings.ToLower(strings.TrimSpace(parts[2]))
		if field != FieldProbability && field != FieldCash {
			return Input{}, fmt.Errorf("field %q: give probability or cash (or NODEID:payoff for an end node)", parts[2])
		}
		in := FieldInput(parts[0], -1, field)
		if k, err := strconv.Atoi(parts[1]); err == nil {
			if k < 1 {
				return Input{}, fmt.Errorf("branch %d: branches count from 1", k)
			}
			in.Branch = k - 1
		} else {
			in.Label = parts[1]
		}
		return in, nil
	}
	return Input{}, fmt.Errorf("%q: give a variable name, NODEID:BRANCH:probability, NODEID:BRANCH:cash or NODEID:payoff", text)
}

// Range is an input's span, low to high.
type Range struct{ Low, High decimal.Decimal }

// Rules that keep a chance node's distribution valid when one probability moves.
const (
	RuleRest  = "the rest branch takes up the change"
	RuleScale = "the other branches are scaled in proportion"
)

// Setting is an input resolved against a valid project: its range, its base
// value and, for a probability, the rule that keeps the node's distribution
// valid. Analyses never change the project: they apply settings to clones.
type Setting struct {
	Input           Input
	Low, High, Base decimal.Decimal
	Rule            string // RuleRest or RuleScale for a probability; "" otherwise

	branch    int   // resolved branch index
	rest      int   // the node's rest branch (RuleRest)
	others    []int // branches that scale (RuleScale)
	otherBase []decimal.Decimal
	otherSum  decimal.Decimal // total of the others at base
	absorb    int             // under RuleScale, the other branch written as rest so the total stays exactly 1
}

// Name is a short name for charts and tables: the variable's name, or the
// node, branch and field ("New unit delivery › On time probability").
func (s *Setting) Name(p *engine.Project) string {
	if s.Input.IsVariable() {
		return s.Input.Variable
	}
	n := p.FindNode(s.Input.NodeID)
	if n == nil {
		return s.Input.String()
	}
	if s.Input.Field == FieldPayoff {
		return engine.NodeTitle(n) + " payoff"
	}
	return engine.NodeTitle(n) + " › " + engine.BranchTitle(n, s.branch) + " " + s.Input.Field
}

// BranchIndex is the resolved branch of a probability or cash input, or -1.
func (s *Setting) BranchIndex() int {
	if s.Input.IsVariable() || s.Input.Field == FieldPayoff {
		return -1
	}
	return s.branch
}

// Prepare resolves an input against the project and its (valid) evaluation. rng
// may be nil: a variable then uses its low and high, a probability 0 to 1; cash
// and payoff need a range. Errors name the place (variable, node, branch, field).
func Prepare(p *engine.Project, r *engine.Result, in Input, rng *Range) (*Setting, error) {
	return prepare(p, r, in, rng, true)
}

// prepare is Prepare; checkEnds evaluates the project exactly at both ends.
func prepare(p *engine.Project, r *engine.Result, in Input, rng *Range, checkEnds bool) (*Setting, error) {
	if err := requireValid(r); err != nil {
		return nil, err
	}
	s := &Setting{Input: in, branch: -1, rest: -1, absorb: -1}
	if in.IsVariable() {
		if err := s.prepareVariable(p, r, rng); err != nil {
			return nil, err
		}
	} else if err := s.prepareField(p, r, rng); err != nil {
		return nil, err
	}
	place := in.String()
	if s.Low.GreaterThan(s.High) {
		return nil, fmt.Errorf("%s: low %s is above high %s", place, s.Low, s.High)
	}
	if s.Low.Equal(s.High) {
		return nil, fmt.Errorf("%s: low and high are both %s, so there is nothing to vary", place, s.Low)
	}
	if !checkEnds {
		return s, nil
	}
	// The ends must give a valid project: a variable may feed a probability.
	ex := newExact(p, s)
	for _, x := range []decimal.Decimal{s.Low, s.High} {
		if _, err := ex.eval(x); err != nil {
			return nil, err
		}
	}
	return s, nil
}

func requireValid(r *engine.Result) error {
	if r == nil {
		return fmt.Errorf("the project has not been evaluated")
	}
	if !r.Valid() {
		return fmt.Errorf("the project has %d problem(s); fix them first (the first: %s)", len(r.Problems), r.Problems[0].Msg)
	}
	return nil
}

func (s *Setting) prepareVariable(p *engine.Project, r *engine.Result, rng *Range) error {
	name := s.Input.Variable
	v := p.Variable(name)
	if v == nil {
		var names []string
		for _, v := range p.Variables {
			names = append(names, v.Name)
		}
		if len(names) == 0 {
			return fmt.Errorf("unknown variable %q: the project has no variables", name)
		}
		return fmt.Errorf("unknown variable %q (the project has %s)", name, strings.Join(names, ", "))
	}
	s.Base = r.Vars[name]
	if rng != nil {
		s.Low, s.High = rng.Low, rng.High
		return nil
	}
	if strings.TrimSpace(v.Low) == "" || strings.TrimSpace(v.High) == "" {
		return fmt.Errorf("variable %q has no low/high range; give one in the variables table or type a range", name)
	}
	var err error
	if s.Low, err = evalText(v.Low, r.Vars); err != nil {
		return fmt.Errorf("variable %q low: %w", name, err)
	}
	if s.High, err = evalText(v.High, r.Vars); err != nil {
		return fmt.Errorf("variable %q high: %w", name, err)
	}
	return nil
}

func evalText(src string, env engine.MapEnv) (decimal.Decimal, error) {
	f, err := engine.ParseFormula(src)
	if err != nil {
		return decimal.Zero, err
	}
	return f.Eval(env)
}

func (s *Setting) prepareField(p *engine.Project, r *engine.Result, rng *Range) error {
	in := s.Input
	n := p.FindNode(in.NodeID)
	if n == nil {
		return fmt.Errorf("unknown node %q", in.NodeID)
	}
	if in.Field == FieldPayoff {
		if n.Kind != engine.End {
			return fmt.Errorf("node %q is a %s node; only end nodes have a payoff", n.ID, n.Kind)
		}
		if rng == nil {
			return fmt.Errorf("node %q payoff: give a range (from and to)", n.ID)
		}
		s.Base, s.Low, s.High = r.Payoff(n), rng.Low, rng.High
		return nil
	}
	if in.Field != FieldProbability && in.Field != FieldCash {
		return fmt.Errorf("node %q: unknown field %q (use probability, cash or payoff)", n.ID, in.Field)
	}
	s.branch = in.Branch
	if in.Branch < 0 {
		for i := range n.Branches {
			if strings.EqualFold(strings.TrimSpace(n.Branches[i].Label), strings.TrimSpace(in.Label)) {
				s.branch = i
				break
			}
		}
		if s.branch < 0 {
			return fmt.Errorf("node %q has no branch labelled %q", n.ID, in.Label)
		}
	}
	if s.branch >= len(n.Branches) {
		return fmt.Errorf("node %q has %d branch(es), not %d", n.ID, len(n.Branches), s.branch+1)
	}
	place := engine.Place(n, s.branch) + " " + in.Field
	if in.Field == FieldCash {
		if rng == nil {
			return fmt.Errorf("%s: give a range (from and to)", place)
		}
		s.Base, s.Low, s.High = r.Cash(n, s.branch), rng.Low, rng.High
		return nil
	}
	if n.Kind != engine.Chance {
		return fmt.Errorf("%s: only chance branches have a probability", place)
	}
	s.Base = r.Probability(n, s.branch)
	s.Low, s.High = decimal.Zero, decimal.NewFromInt(1)
	if rng != nil {
		s.Low, s.High = rng.Low, rng.High
	}
	if s.Low.IsNegative() || s.High.GreaterThan(decimal.NewFromInt(1)) {
		return fmt.Errorf("%s: the range %s to %s leaves 0 to 1", place, s.Low, s.High)
	}
	for i, b := range n.Branches {
		if i != s.branch && strings.TrimSpace(b.Probability) == engine.RestProbability {
			s.rest = i
		}
	}
	if s.rest >= 0 {
		s.Rule = RuleRest
		fixed := decimal.Zero
		for i := range n.Branches {
			if i != s.branch && i != s.rest {
				fixed = fixed.Add(r.Probability(n, i))
			}
		}
		limit := decimal.NewFromInt(1).Sub(fixed)
		if rng == nil && s.High.GreaterThan(limit) {
			s.High = limit // the most the other branches leave
		}
		if s.High.GreaterThan(limit) {
			return fmt.Errorf("%s: at %s the rest branch %q would be negative; the other branches leave at most %s",
				place, s.High, engine.BranchTitle(n, s.rest), limit)
		}
		return nil
	}
	s.Rule = RuleScale
	s.otherSum = decimal.Zero
	for i := range n.Branches {
		if i == s.branch {
			continue
		}
		q := r.Probability(n, i)
		s.others = append(s.others, i)
		s.otherBase = append(s.otherBase, q)
		s.otherSum = s.otherSum.Add(q)
		if s.absorb < 0 || q.GreaterThan(r.Probability(n, s.absorb)) {
			s.absorb = i
		}
	}
	if len(s.others) == 0 {
		return fmt.Errorf("%s: the node has only this branch, so its probability must stay 1", place)
	}
	if s.otherSum.IsZero() && s.Low.LessThan(decimal.NewFromInt(1)) {
		return fmt.Errorf("%s: the other branches all have probability 0, so they cannot take up a change; give one of them the probability rest", place)
	}
	return nil
}

// applyExact writes value x into the clone c (whose node for this setting is n).
func (s *Setting) applyExact(c *engine.Project, n *engine.Node, x decimal.Decimal) {
	text := x.String()
	if s.Input.IsVariable() {
		c.Variable(s.Input.Variable).Value = text
		return
	}
	switch s.Input.Field {
	case FieldPayoff:
		n.Payoff = text
	case FieldCash:
		n.Branches[s.branch].Cash = text
	case FieldProbability:
		n.Branches[s.branch].Probability = text
		if s.Rule != RuleScale {
			return
		}
		left := decimal.NewFromInt(1).Sub(x)
		for k, i := range s.others {
			if i == s.absorb {
				n.Branches[i].Probability = engine.RestProbability
				continue
			}
			n.Branches[i].Probability = engine.Divide(s.otherBase[k].Mul(left), s.otherSum).String()
		}
	}
}

// scaledFloat is the float form of the RuleScale probabilities at x.
func (s *Setting) scaledFloat(x float64) []float64 {
	out := make([]float64, len(s.others))
	sum := s.otherSum.InexactFloat64()
	for k := range s.others {
		out[k] = s.otherBase[k].InexactFloat64() * (1 - x) / sum
	}
	return out
}

// exactModel evaluates one private clone of a project with settings applied
// exactly. The clone keeps its compiled formulas between evaluations, so only
// the fields a setting writes are parsed again.
type exactModel struct {
	clone    *engine.Project
	settings []*Setting
	nodes    []*engine.Node
}

func newExact(p *engine.Project, settings ...*Setting) *exactModel {
	return newExactOn(p.Clone(), settings...)
}

// newExactOn evaluates the given private copy (already cloned or reduced).
func newExactOn(clone *engine.Project, settings ...*Setting) *exactModel {
	e := &exactModel{clone: clone, settings: settings}
	for _, s := range settings {
		var n *engine.Node
		if !s.Input.IsVariable() {
			n = e.clone.FindNode(s.Input.NodeID)
		}
		e.nodes = append(e.nodes, n)
	}
	return e
}

// eval applies xs (one per setting) and evaluates; the first problem is the error,
// naming the input values that caused it.
func (e *exactModel) eval(xs ...decimal.Decimal) (*engine.Result, error) {
	for i, s := range e.settings {
		s.applyExact(e.clone, e.nodes[i], xs[i])
	}
	r := engine.Evaluate(e.clone)
	if !r.Valid() {
		var at []string
		for i, s := range e.settings {
			at = append(at, fmt.Sprintf("%s = %s", s.Input, xs[i]))
		}
		return r, fmt.Errorf("at %s: %s", strings.Join(at, ", "), r.Problems[0].Msg)
	}
	return r, nil
}

// node returns the clone's node with the given id.
func (e *exactModel) node(id string) *engine.Node { return e.clone.FindNode(id) }

// fastInput writes a setting's value into a FastModel compiled from the
// original project.
type fastInput struct {
	s      *Setting
	varIdx int   // the variable's slot, or -1
	field  int   // the field's slot, or -1 (a rest branch is computed by Roll)
	others []int // field slots of RuleScale's other branches
}

func (s *Setting) bindFast(m *engine.FastModel, p *engine.Project) (fastInput, error) {
	b := fastInput{s: s, varIdx: -1, field: -1}
	if s.Input.IsVariable() {
		i, ok := m.VarIndex(s.Input.Variable)
		if !ok {
			return b, fmt.Errorf("unknown variable %q", s.Input.Variable)
		}
		b.varIdx = i
		return b, nil
	}
	n := p.FindNode(s.Input.NodeID)
	if n == nil {
		return b, fmt.Errorf("unknown node %q", s.Input.NodeID)
	}
	branch := s.branch
	if s.Input.Field == FieldPayoff {
		branch = -1
	}
	isRest := branch >= 0 && strings.TrimSpace(n.Branches[branch].Probability) == engine.RestProbability
	if !(s.Input.Field == FieldProbability && isRest) {
		i, ok := m.FieldIndex(n, branch, s.Input.Field)
		if !ok {
			return b, fmt.Errorf("%s: not found in the compiled model", s.Input)
		}
		b.field = i
	}
	if s.Rule == RuleScale {
		for _, j := range s.others {
			i, ok := m.FieldIndex(n, j, FieldProbability)
			if !ok {
				return b, fmt.Errorf("%s: not found in the compiled model", engine.Place(n, j))
			}
			b.others = append(b.others, i)
		}
	}
	return b, nil
}

// set writes x; the caller rolls the model back afterwards.
func (b fastInput) set(m *engine.FastModel, x float64) {
	if b.varIdx >= 0 {
		m.SetVar(b.varIdx, x)
		return
	}
	if b.field >= 0 {
		m.SetField(b.field, x)
	}
	if len(b.others) > 0 {
		for k, q := range b.s.scaledFloat(x) {
			m.SetField(b.others[k], q)
		}
	}
}

// writeRows writes a table as CSV.
func writeRows(w io.Writer, rows [][]string) error {
	cw := csv.NewWriter(w)
	if err := cw.WriteAll(rows); err != nil {
		return err
	}
	return cw.Error()
}
