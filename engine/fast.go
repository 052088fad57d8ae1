package engine

import (
	"fmt"
	"math"
	"strings"
)

// FastModel is a float64 copy of a valid project, compiled once so sweeps,
// tornado diagrams, two-way maps and simulations can roll the tree back many
// times cheaply. It is checked against the exact engine in tests; every figure
// a user reads as a result is confirmed with Evaluate.
//
// The tree is flattened in preorder: node i's branches occupy slots
// First[i] .. First[i]+Count[i]-1, and Child[slot] is the node a branch leads to.
type FastModel struct {
	shared *fastShared

	varVal   []float64
	varOver  []bool
	fieldVal []float64 // current value of each field (see fastShared.fields)
	fieldOvr []bool

	Prob    []float64 // per branch slot
	Cash    []float64 // per branch slot
	PayoffV []float64 // per node (end payoff)
	Value   []float64 // per node, on the decision scale (CE when the risk attitude is on)
	Choice  []int32   // per node, chosen branch at decisions, -1 elsewhere
}

// fastShared is the read-only part, shared between clones.
type fastShared struct {
	Nodes   []*Node
	index   map[*Node]int32
	Kind    []Kind
	First   []int32
	Count   []int32
	Child   []int32
	restOf  []int32 // per chance node: slot of its rest branch, or -1
	varName []string
	varIdx  map[string]int
	varF    []floatFn // in dependency order; nil for variables that failed
	order   []int     // variable evaluation order
	fields  []fastField
	dynamic []int // fields whose formulas use variables
	fieldOf map[fieldKey]int
	sign    float64 // +1 maximize, −1 minimize
	riskOn  bool
	R       float64
}

type floatFn func(vars []float64) float64

type fastField struct {
	kind   byte // 'p' probability, 'c' cash, 'y' payoff
	target int32
	fn     floatFn // nil when constant
	base   float64
	rest   bool
	node   int32
	branch int32
}

type fieldKey struct {
	node   *Node
	branch int
	field  string
}

// CompileFast builds a FastModel from a project that evaluates without problems.
func CompileFast(p *Project) (*FastModel, error) {
	r := Evaluate(p)
	if !r.Valid() {
		return nil, fmt.Errorf("the project has %d problem(s); the first: %s", len(r.Problems), r.Problems[0].Msg)
	}
	s := &fastShared{Nodes: r.Nodes, index: make(map[*Node]int32, len(r.Nodes)), varIdx: map[string]int{}, fieldOf: map[fieldKey]int{}, sign: 1}
	if p.Objective == Minimize {
		s.sign = -1
	}
	s.riskOn, s.R = r.riskOn, r.tolerance
	// Variables in an order where every variable comes after those it uses.
	for _, v := range p.Variables {
		s.varIdx[v.Name] = len(s.varName)
		s.varName = append(s.varName, v.Name)
	}
	s.varF = make([]floatFn, len(s.varName))
	state := make([]int, len(s.varName))
	var visit func(i int)
	visit = func(i int) {
		if state[i] != 0 {
			return
		}
		state[i] = 1
		f, _ := ParseFormula(p.Variables[i].Value) // valid: Evaluate succeeded
		for _, name := range f.Names() {
			visit(s.varIdx[name])
		}
		s.varF[i] = compileFloat(f.root, s.varIdx)
		s.order = append(s.order, i)
	}
	for i := range s.varName {
		visit(i)
	}
	n := len(r.Nodes)
	s.Kind = make([]Kind, n)
	s.First = make([]int32, n)
	s.Count = make([]int32, n)
	s.restOf = make([]int32, n)
	slots := 0
	for i, node := range r.Nodes {
		s.index[node] = int32(i)
		s.Kind[i] = node.Kind
		s.First[i] = int32(slots)
		s.Count[i] = int32(len(node.Branches))
		s.restOf[i] = -1
		slots += len(node.Branches)
	}
	s.Child = make([]int32, slots)
	addField := func(kind byte, target int32, src string, node *Node, ni, bi int, field string) {
		fld := fastField{kind: kind, target: target, node: int32(ni), branch: int32(bi)}
		if strings.TrimSpace(src) == RestProbability {
			fld.rest = true
		} else if strings.TrimSpace(src) != "" {
			f, _ := ParseFormula(src)
			if f.IsConstant() {
				fld.base = f.cval.InexactFloat64()
			} else {
				fld.fn = compileFloat(f.root, s.varIdx)
			}
		}
		s.fieldOf[fieldKey{node, bi, field}] = len(s.fields)
		s.fields = append(s.fields, fld)
	}
	for i, node := range r.Nodes {
		if node.Kind == End {
			addField('y', int32(i), node.Payoff, node, i, -1, "payoff")
			continue
		}
		for bi, b := range node.Branches {
			slot := s.First[i] + int32(bi)
			s.Child[slot] = int32(b.To.index)
			addField('c', slot, b.Cash, node, i, bi, "cash")
			if node.Kind == Chance {
				if strings.TrimSpace(b.Probability) == RestProbability {
					s.restOf[i] = slot
				}
				addField('p', slot, b.Probability, node, i, bi, "probability")
			}
		}
	}
	for fi, f := range s.fields {
		if f.fn != nil {
			s.dynamic = append(s.dynamic, fi)
		}
	}
	m := &FastModel{shared: s}
	m.alloc()
	m.resetConstants()
	return m, m.Roll()
}

func (m *FastModel) alloc() {
	s := m.shared
	m.varVal = make([]float64, len(s.varName))
	m.varOver = make([]bool, len(s.varName))
	m.fieldVal = make([]float64, len(s.fields))
	m.fieldOvr = make([]bool, len(s.fields))
	m.Prob = make([]float64, len(s.Child))
	m.Cash = make([]float64, len(s.Child))
	m.PayoffV = make([]float64, len(s.Nodes))
	m.Value = make([]float64, len(s.Nodes))
	m.Choice = make([]int32, len(s.Nodes))
}

// Clone returns an independent model for another goroutine; overrides are copied.
func (m *FastModel) Clone() *FastModel {
	c := &FastModel{shared: m.shared}
	c.alloc()
	copy(c.varVal, m.varVal)
	copy(c.varOver, m.varOver)
	copy(c.fieldVal, m.fieldVal)
	copy(c.fieldOvr, m.fieldOvr)
	copy(c.Prob, m.Prob)
	copy(c.Cash, m.Cash)
	copy(c.PayoffV, m.PayoffV)
	copy(c.Value, m.Value)
	copy(c.Choice, m.Choice)
	return c
}

// Nodes lists the nodes in the model's preorder; Kind, First, Count and Child describe the tree.
func (m *FastModel) Nodes() []*Node     { return m.shared.Nodes }
func (m *FastModel) Kinds() []Kind      { return m.shared.Kind }
func (m *FastModel) First() []int32     { return m.shared.First }
func (m *FastModel) Count() []int32     { return m.shared.Count }
func (m *FastModel) Child() []int32     { return m.shared.Child }
func (m *FastModel) Maximize() bool     { return m.shared.sign > 0 }
func (m *FastModel) RiskOn() bool       { return m.shared.riskOn }
func (m *FastModel) VarNames() []string { return m.shared.varName }

// IndexOf is a node's position in the model, or -1.
func (m *FastModel) IndexOf(n *Node) int {
	if i, ok := m.shared.index[n]; ok {
		return int(i)
	}
	return -1
}

// VarIndex finds a variable by name.
func (m *FastModel) VarIndex(name string) (int, bool) {
	i, ok := m.shared.varIdx[name]
	return i, ok
}

// SetVar overrides a variable's value; variables computed from it follow on the next Roll.
func (m *FastModel) SetVar(i int, v float64) { m.varVal[i], m.varOver[i] = v, true }

// VarValue is a variable's value as of the last Roll (or override).
func (m *FastModel) VarValue(i int) float64 { return m.varVal[i] }

// ResetVars drops every variable override.
func (m *FastModel) ResetVars() {
	for i := range m.varOver {
		m.varOver[i] = false
	}
}

// FieldIndex finds a tree field: "probability" or "cash" of branch i of n, or "payoff" of an end (branch -1).
func (m *FastModel) FieldIndex(n *Node, branch int, field string) (int, bool) {
	if field == "payoff" {
		branch = -1
	}
	i, ok := m.shared.fieldOf[fieldKey{n, branch, field}]
	return i, ok
}

// SetField overrides one field's value until ResetFields.
func (m *FastModel) SetField(i int, v float64) {
	m.fieldVal[i], m.fieldOvr[i] = v, true
	m.writeField(i)
}

// writeField copies a field's current value to the slot the roll-back reads.
func (m *FastModel) writeField(fi int) {
	f := &m.shared.fields[fi]
	v := m.fieldVal[fi]
	switch f.kind {
	case 'p':
		m.Prob[f.target] = v
	case 'c':
		m.Cash[f.target] = v
	case 'y':
		m.PayoffV[f.target] = v
	}
}

// resetConstants writes every constant field's base value (and clears rest slots).
func (m *FastModel) resetConstants() {
	for fi := range m.shared.fields {
		f := &m.shared.fields[fi]
		if f.fn == nil && !m.fieldOvr[fi] {
			m.fieldVal[fi] = f.base
			m.writeField(fi)
		}
	}
}

// FieldValue is a field's value as of the last Roll.
func (m *FastModel) FieldValue(i int) float64 { return m.fieldVal[i] }

// ResetFields drops every field override.
func (m *FastModel) ResetFields() {
	for i := range m.fieldOvr {
		m.fieldOvr[i] = false
	}
	m.resetConstants()
}

// FastError names the place where a float roll-back found an invalid value.
type FastError struct {
	Node *Node
	Msg  string
}

func (e *FastError) Error() string { return Place(e.Node, -1) + ": " + e.Msg }

// probability tolerance for float sums (the exact engine checks exactly).
const probTolerance = 1e-9

// Roll re-evaluates the variables and fields and rolls the tree back.
func (m *FastModel) Roll() error {
	s := m.shared
	for _, i := range s.order {
		if !m.varOver[i] {
			m.varVal[i] = s.varF[i](m.varVal)
		}
	}
	// Constant fields were written once (see resetConstants); only formulas over
	// variables are computed again.
	for _, fi := range s.dynamic {
		if !m.fieldOvr[fi] {
			m.fieldVal[fi] = s.fields[fi].fn(m.varVal)
			m.writeField(fi)
		}
	}
	var firstErr error
	for i := len(s.Nodes) - 1; i >= 0; i-- {
		if err := m.rollNode(i); err != nil && firstErr == nil {
			firstErr = err
		}
	}
	if firstErr == nil && (math.IsNaN(m.Value[0]) || math.IsInf(m.Value[0], 0)) {
		firstErr = &FastError{s.Nodes[0], "a formula could not be computed (division by zero or overflow)"}
	}
	return firstErr
}

func (m *FastModel) rollNode(i int) error {
	s := m.shared
	first, count := s.First[i], s.Count[i]
	m.Choice[i] = -1
	switch s.Kind[i] {
	case End:
		v := m.PayoffV[i]
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return &FastError{s.Nodes[i], "payoff is not a finite number"}
		}
		m.Value[i] = v
	case Chance:
		if rest := s.restOf[i]; rest >= 0 {
			sum := 0.0
			for k := first; k < first+count; k++ {
				if k != rest {
					sum += m.Prob[k]
				}
			}
			m.Prob[rest] = 1 - sum
		}
		sum := 0.0
		var err error
		for k := first; k < first+count; k++ {
			p := m.Prob[k]
			if !(p >= -probTolerance && p <= 1+probTolerance) {
				err = &FastError{s.Nodes[i], fmt.Sprintf("a probability became %g, outside 0 to 1", p)}
			}
			sum += p
		}
		if err == nil && math.Abs(sum-1) > probTolerance {
			err = &FastError{s.Nodes[i], fmt.Sprintf("the probabilities add up to %g, not 1", sum)}
		}
		if s.riskOn {
			m.Value[i] = m.chanceCE(first, count)
		} else {
			v := 0.0
			for k := first; k < first+count; k++ {
				v += m.Prob[k] * (m.Cash[k] + m.Value[s.Child[k]])
			}
			m.Value[i] = v
		}
		return err
	case Decision:
		best := int32(-1)
		var bestV float64
		for k := first; k < first+count; k++ {
			v := m.Cash[k] + m.Value[s.Child[k]]
			if best < 0 || (s.sign > 0 && v > bestV) || (s.sign < 0 && v < bestV) {
				best, bestV = k-first, v
			}
		}
		m.Choice[i], m.Value[i] = best, bestV
	}
	return nil
}

// chanceCE is the certainty equivalent at a chance node, in the project's terms.
func (m *FastModel) chanceCE(first, count int32) float64 {
	s := m.shared
	var probs, vals [16]float64
	ps, vs := probs[:0], vals[:0]
	for k := first; k < first+count; k++ {
		if m.Prob[k] == 0 {
			continue
		}
		ps = append(ps, m.Prob[k])
		vs = append(vs, s.sign*(m.Cash[k]+m.Value[s.Child[k]]))
	}
	return s.sign * CertaintyEquivalent(ps, vs, s.R)
}

// RootValue is the root's value on the decision scale.
func (m *FastModel) RootValue() float64 { return m.Value[0] }

// ValueOf is a node's value on the decision scale.
func (m *FastModel) ValueOf(n *Node) float64 {
	if i := m.IndexOf(n); i >= 0 {
		return m.Value[i]
	}
	return math.NaN()
}

// ChoiceOf is the chosen branch at a decision node, or -1.
func (m *FastModel) ChoiceOf(n *Node) int {
	if i := m.IndexOf(n); i >= 0 {
		return int(m.Choice[i])
	}
	return -1
}

// BranchValue is cash plus the value below branch b of n, on the decision scale.
func (m *FastModel) BranchValue(n *Node, b int) float64 {
	i := m.IndexOf(n)
	if i < 0 || b < 0 || int32(b) >= m.shared.Count[i] {
		return math.NaN()
	}
	k := m.shared.First[i] + int32(b)
	return m.Cash[k] + m.Value[m.shared.Child[k]]
}

// compileFloat turns a parsed formula into a closure over variable slots, so the
// hot loop does no map look-ups. Errors become NaN, which Roll reports.
func compileFloat(e expr, slots map[string]int) floatFn {
	switch x := e.(type) {
	case *number:
		v := x.v.InexactFloat64()
		return func([]float64) float64 { return v }
	case *varRef:
		i, ok := slots[x.name]
		if !ok {
			return func([]float64) float64 { return math.NaN() }
		}
		return func(vars []float64) float64 { return vars[i] }
	case *neg:
		f := compileFloat(x.x, slots)
		return func(v []float64) float64 { return -f(v) }
	case *binary:
		l, r := compileFloat(x.l, slots), compileFloat(x.r, slots)
		switch x.op {
		case "+":
			return func(v []float64) float64 { return l(v) + r(v) }
		case "-":
			return func(v []float64) float64 { return l(v) - r(v) }
		case "*":
			return func(v []float64) float64 { return l(v) * r(v) }
		case "/":
			return func(v []float64) float64 {
				d := r(v)
				if d == 0 {
					return math.NaN()
				}
				return l(v) / d
			}
		case "^":
			return func(v []float64) float64 {
				ex := r(v)
				if ex != math.Trunc(ex) || math.Abs(ex) > maxPower {
					return math.NaN()
				}
				return math.Pow(l(v), ex)
			}
		case "<":
			return func(v []float64) float64 { return boolFloat(l(v) < r(v)) }
		case "<=":
			return func(v []float64) float64 { return boolFloat(l(v) <= r(v)) }
		case ">":
			return func(v []float64) float64 { return boolFloat(l(v) > r(v)) }
		case ">=":
			return func(v []float64) float64 { return boolFloat(l(v) >= r(v)) }
		case "==":
			return func(v []float64) float64 { return boolFloat(l(v) == r(v)) }
		case "!=":
			return func(v []float64) float64 { return boolFloat(l(v) != r(v)) }
		}
	case *call:
		args := make([]floatFn, len(x.args))
		for i, a := range x.args {
			args[i] = compileFloat(a, slots)
		}
		if x.name == "if" {
			return func(v []float64) float64 {
				if args[0](v) != 0 {
					return args[1](v)
				}
				return args[2](v)
			}
		}
		fn, c := x.fn, x
		return func(v []float64) float64 {
			var buf [8]float64
			vals := buf[:0]
			for _, a := range args {
				vals = append(vals, a(v))
			}
			out, err := fn.float(c, vals)
			if err != nil {
				return math.NaN()
			}
			return out
		}
	}
	return func([]float64) float64 { return math.NaN() }
}
