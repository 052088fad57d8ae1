package engine

import (
	"fmt"
	"strings"

	"github.com/shopspring/decimal"
)

// Explanation is the arithmetic behind one node's rolled-back value, in the
// project's units. Terms carry exact decimal strings: the terms marked InSum add
// up to Value exactly. Lines is the same arithmetic as text, rounded for display
// the way every other view rounds (FormatValue).
type Explanation struct {
	Node    string `json:"node"`
	Name    string `json:"name,omitempty"`
	Kind    Kind   `json:"kind"`
	What    string `json:"what"`    // "expected cost", "expected value", "path payoff"
	Value   string `json:"value"`   // exact; the InSum terms add up to it
	Display string `json:"display"` // Value as every view prints it
	// Rule is how a decision chooses (Result.RuleWord); Choice its chosen branch.
	Rule   string `json:"rule,omitempty"`
	Choice int    `json:"choice"`
	// CE is the certainty equivalent when a risk attitude is active ("" otherwise).
	CE        string        `json:"certaintyEquivalent,omitempty"`
	Terms     []ExplainTerm `json:"terms"`
	Formulas  []FormulaStep `json:"formulas,omitempty"`
	Lines     []string      `json:"lines"`
	Tolerance float64       `json:"riskTolerance,omitempty"`
}

// ExplainTerm is one term of an explanation, linked to the branch it follows.
type ExplainTerm struct {
	Node   string `json:"node"`   // node owning the branch
	Branch int    `json:"branch"` // branch index at Node; -1 for an end payoff
	Label  string `json:"label"`
	// Probability is the branch probability at a chance node ("" elsewhere).
	Probability string `json:"probability,omitempty"`
	// Cash is the branch's own cash, Below the value of the node it leads to; at a
	// chance or decision node Value = Cash + Below.
	Cash  string `json:"cash,omitempty"`
	Below string `json:"below,omitempty"`
	Value string `json:"value"`
	// Amount is what the term adds: Probability × Value at a chance node, Value elsewhere.
	Amount string `json:"amount"`
	// InSum marks the terms whose Amounts add up to the explanation's Value
	// (every term, except the alternatives not chosen at a decision).
	InSum  bool   `json:"inSum"`
	Chosen bool   `json:"chosen,omitempty"`
	CE     string `json:"certaintyEquivalent,omitempty"` // branch CE (cash + CE below) when risk is active
	Text   string `json:"text"`                          // display form of the term
}

// FormulaStep shows one field's formula with the variable values substituted:
// rent_week × 6 = 9,500 × 6 = 57,000.
type FormulaStep struct {
	Node        string `json:"node"`
	Branch      int    `json:"branch"`
	Field       string `json:"field"` // probability, cash, payoff
	Formula     string `json:"formula"`
	Substituted string `json:"substituted"`
	Value       string `json:"value"`
	Text        string `json:"text"`
}

// Explain builds the explanation of n's rolled-back value. At a chance node it is
// the probability-weighted sum of the branch values; at a decision the
// alternatives side by side and the rule; at an end the path payoff as the cash
// of each branch along the path plus the end payoff.
func Explain(r *Result, n *Node) (*Explanation, error) {
	if n == nil || !r.has(n) {
		return nil, fmt.Errorf("explain: the node is not part of the evaluated project")
	}
	if r.Broken(n) {
		msg := Place(n, -1) + " cannot be explained: it or a node below it has problems"
		if ps := r.ProblemsAt(n); len(ps) > 0 {
			msg += " (" + ps[0].Msg + ")"
		}
		return nil, fmt.Errorf("%s", msg)
	}
	e := &Explanation{Node: n.ID, Name: n.Name, Kind: n.Kind, Choice: -1}
	x := explainer{r: r, e: e, n: n}
	switch n.Kind {
	case Chance:
		x.chance(n)
	case Decision:
		x.decision(n)
	case End:
		x.end(n)
	default:
		return nil, fmt.Errorf("%s: unknown kind %q", Place(n, -1), n.Kind)
	}
	if len(e.Formulas) > 0 {
		e.Lines = append(e.Lines, "", "Formulas:")
		for _, f := range e.Formulas {
			e.Lines = append(e.Lines, "  "+f.Text)
		}
	}
	return e, nil
}

// ExplainID explains the node with the given id.
func ExplainID(r *Result, id string) (*Explanation, error) {
	n := r.Project.FindNode(id)
	if n == nil {
		return nil, fmt.Errorf("explain: no node has the id %q", id)
	}
	return Explain(r, n)
}

// Text is the explanation as printed by `ramify explain` and shown in the app.
func (e *Explanation) Text() string { return strings.Join(e.Lines, "\n") + "\n" }

type explainer struct {
	r *Result
	e *Explanation
	n *Node
}

func (x *explainer) num(d decimal.Decimal) string {
	return FormatNumber(d, x.r.Project.Decimals)
}

// paren wraps a negative display number so products read unambiguously.
func paren(s string) string {
	if strings.HasPrefix(s, "−") {
		return "(" + s + ")"
	}
	return s
}

func (x *explainer) title() string {
	k := string(x.n.Kind)
	k = strings.ToUpper(k[:1]) + k[1:]
	if NodeTitle(x.n) == x.n.ID {
		return fmt.Sprintf("%s %q", k, x.n.ID)
	}
	return fmt.Sprintf("%s %q (%s)", k, NodeTitle(x.n), x.n.ID)
}

func (x *explainer) branchTerm(n *Node, i int) ExplainTerm {
	r := x.r
	cash := r.Cash(n, i)
	below := r.ValueOf(n.Branches[i].To)
	t := ExplainTerm{Node: n.ID, Branch: i, Label: BranchTitle(n, i),
		Cash: cash.String(), Below: below.String(), Value: cash.Add(below).String()}
	if ce, ok := r.CertaintyEquivalent(n.Branches[i].To); ok {
		t.CE = ce.Add(cash).String()
	}
	x.formula(n, i, "cash", n.Branches[i].Cash, cash)
	return t
}

func (x *explainer) chance(n *Node) {
	r, e := x.r, x.e
	value := r.ValueOf(n)
	e.What, e.Value, e.Display = r.evWord(), value.String(), r.Format(value)
	var parts []string
	var details []string
	for i := range n.Branches {
		t := x.branchTerm(n, i)
		p := r.Probability(n, i)
		v := r.Cash(n, i).Add(r.ValueOf(n.Branches[i].To))
		t.Probability, t.Amount, t.InSum = p.String(), p.Mul(v).String(), true
		t.Text = FormatProbability(p) + " × " + paren(x.num(v))
		parts = append(parts, t.Text)
		if c := r.Cash(n, i); !c.IsZero() {
			details = append(details, fmt.Sprintf("  %s: cash %s + value below %s = %s", t.Label, x.num(c),
				paren(x.num(r.ValueOf(n.Branches[i].To))), x.num(v)))
		}
		if src := strings.TrimSpace(n.Branches[i].Probability); src == RestProbability {
			x.e.Formulas = append(x.e.Formulas, x.restStep(n, i, p))
		} else {
			x.formula(n, i, "probability", n.Branches[i].Probability, p)
		}
		e.Terms = append(e.Terms, t)
	}
	e.Lines = append(e.Lines, x.title()+", "+e.What+":")
	e.Lines = append(e.Lines, "  "+strings.Join(parts, " + ")+" = "+e.Display)
	if len(details) > 0 {
		e.Lines = append(e.Lines, "Branch values (cash on the branch plus the value below):")
		e.Lines = append(e.Lines, details...)
	}
	x.riskLine(n)
}

func (x *explainer) restStep(n *Node, i int, p decimal.Decimal) FormulaStep {
	var others []string
	for j := range n.Branches {
		if j != i {
			others = append(others, FormatProbability(x.r.Probability(n, j)))
		}
	}
	sub := "1"
	if len(others) > 0 {
		sub = "1 − " + strings.Join(others, " − ")
	}
	return FormulaStep{Node: n.ID, Branch: i, Field: "probability", Formula: RestProbability, Substituted: sub,
		Value: p.String(), Text: fmt.Sprintf("%s probability: rest = %s = %s", BranchTitle(n, i), sub, FormatProbability(p))}
}

// riskLine adds the certainty equivalent when a risk attitude is active.
func (x *explainer) riskLine(n *Node) {
	r, e := x.r, x.e
	ce, ok := r.CertaintyEquivalent(n)
	if !ok {
		return
	}
	e.CE, e.Tolerance = ce.String(), r.Tolerance()
	rule := "CE = −R ln Σ p·exp(−x/R)"
	if r.Project.Objective == Minimize {
		rule = "CE = R ln Σ p·exp(x/R) for costs"
	}
	e.Lines = append(e.Lines, fmt.Sprintf("Certainty equivalent with risk tolerance R = %s (%s): %s",
		x.num(decimal.NewFromFloat(r.Tolerance())), rule, r.Format(ce)))
}

func (r *Result) evWord() string {
	if r.Project.Objective == Minimize {
		return "expected cost"
	}
	return "expected value"
}

func (x *explainer) decision(n *Node) {
	r, e := x.r, x.e
	value := r.ValueOf(n)
	choice := r.Choice(n)
	e.What, e.Value, e.Display, e.Rule, e.Choice = r.evWord(), value.String(), r.Format(value), r.RuleWord(), choice
	e.Lines = append(e.Lines, fmt.Sprintf("%s: choose the alternative with the %s.", x.title(), e.Rule))
	width := 0
	for i := range n.Branches {
		width = max(width, len([]rune(BranchTitle(n, i))))
	}
	for i := range n.Branches {
		t := x.branchTerm(n, i)
		c, below := r.Cash(n, i), r.ValueOf(n.Branches[i].To)
		t.Amount, t.Chosen, t.InSum = t.Value, i == choice, i == choice
		t.Text = x.num(c.Add(below))
		if !c.IsZero() {
			t.Text = x.num(c) + " + " + paren(x.num(below)) + " = " + t.Text
		}
		line := fmt.Sprintf("  %-*s  %s", width, t.Label, t.Text)
		if ce, ok := r.CertaintyEquivalent(n.Branches[i].To); ok {
			line += "   CE " + x.num(ce.Add(c))
		}
		if t.Chosen {
			line += "   ← chosen"
		}
		for _, tie := range r.Ties(n) {
			if tie == i {
				line += "   (tied with the chosen one)"
			}
		}
		e.Lines = append(e.Lines, line)
		e.Terms = append(e.Terms, t)
	}
	e.Lines = append(e.Lines, fmt.Sprintf("Value of the decision (%s of %q): %s", e.What, BranchTitle(n, choice), e.Display))
	x.riskLine(n)
}

func (x *explainer) end(n *Node) {
	r, e := x.r, x.e
	total := r.PathValue(n)
	e.What, e.Value, e.Display = "path payoff", total.String(), r.Format(total)
	// Steps from the root down to n.
	type step struct {
		parent *Node
		branch int
	}
	var steps []step
	for m := n; ; {
		p, b := r.ParentOf(m)
		if p == nil {
			break
		}
		steps = append(steps, step{p, b})
		m = p
	}
	var parts []string
	for k := len(steps) - 1; k >= 0; k-- {
		s := steps[k]
		c := r.Cash(s.parent, s.branch)
		t := ExplainTerm{Node: s.parent.ID, Branch: s.branch, Label: BranchTitle(s.parent, s.branch),
			Cash: c.String(), Value: c.String(), Amount: c.String(), InSum: true, Text: x.num(c)}
		x.formula(s.parent, s.branch, "cash", s.parent.Branches[s.branch].Cash, c)
		parts = append(parts, fmt.Sprintf("%s (%s)", paren(t.Text), t.Label))
		e.Terms = append(e.Terms, t)
	}
	pay := r.Payoff(n)
	t := ExplainTerm{Node: n.ID, Branch: -1, Label: "end payoff", Value: pay.String(), Amount: pay.String(), InSum: true, Text: x.num(pay)}
	x.formula(n, -1, "payoff", n.Payoff, pay)
	parts = append(parts, fmt.Sprintf("%s (end payoff)", paren(t.Text)))
	e.Terms = append(e.Terms, t)
	e.Lines = append(e.Lines, x.title()+", path payoff: the cash of each branch from the root plus the end payoff:")
	e.Lines = append(e.Lines, "  "+strings.Join(parts, " + ")+" = "+e.Display)
	if prob := r.PathProbability(n); !prob.Equal(one) {
		e.Lines = append(e.Lines, fmt.Sprintf("Probability of reaching it: %s", FormatProbability(prob)))
	}
}

// formula records a field's formula with its variables substituted, unless the
// field is empty or a plain number (nothing to show).
func (x *explainer) formula(n *Node, branch int, field, src string, value decimal.Decimal) {
	if strings.TrimSpace(src) == "" {
		return
	}
	f, err := ParseFormula(src)
	if err != nil {
		return
	}
	if _, plain := f.root.(*number); plain {
		return
	}
	step := FormulaStep{Node: n.ID, Branch: branch, Field: field,
		Formula: renderExpr(f.root, nil), Substituted: renderExpr(f.root, x.r.Vars), Value: value.String()}
	where := field
	if branch >= 0 {
		where = BranchTitle(n, branch) + " " + field
	} else {
		where = NodeTitle(n) + " " + field
	}
	shown := FormatNumber(value, exactPlaces(value))
	if field != "probability" {
		shown = x.num(value)
	}
	step.Text = where + ": " + step.Formula
	if step.Substituted != step.Formula && step.Substituted != shown {
		step.Text += " = " + step.Substituted
	}
	step.Text += " = " + shown
	x.e.Formulas = append(x.e.Formulas, step)
}

// exactPlaces is the number of decimals d needs to print exactly.
func exactPlaces(d decimal.Decimal) int {
	if e := d.Exponent(); e < 0 {
		s := d.String()
		if i := strings.IndexByte(s, '.'); i >= 0 {
			return len(s) - i - 1
		}
	}
	return 0
}

// Precedence levels of the formula grammar, for printing with the fewest parentheses.
func exprPrec(e expr) int {
	switch x := e.(type) {
	case *binary:
		if x.op == "^" {
			return 5
		}
		return binaryPrec[x.op]
	case *neg:
		return 4
	}
	return 6
}

var shownOp = map[string]string{"*": " × ", "/": " ÷ ", "-": " − ", "+": " + ", "^": "^",
	"<": " < ", "<=": " ≤ ", ">": " > ", ">=": " ≥ ", "==": " == ", "!=": " ≠ "}

// renderExpr prints a formula with × ÷ − signs; with vars set, each variable is
// replaced by its value printed exactly (negative values in parentheses).
func renderExpr(e expr, vars MapEnv) string {
	var b strings.Builder
	var walk func(e expr, parens bool)
	walk = func(e expr, parens bool) {
		if parens {
			b.WriteByte('(')
			defer b.WriteByte(')')
		}
		switch x := e.(type) {
		case *number:
			b.WriteString(FormatNumber(x.v, exactPlaces(x.v)))
		case *varRef:
			if v, ok := vars[x.name]; ok && vars != nil {
				b.WriteString(paren(FormatNumber(v, exactPlaces(v))))
			} else {
				b.WriteString(x.name)
			}
		case *neg:
			b.WriteString("−")
			walk(x.x, exprPrec(x.x) < 5)
		case *binary:
			p := exprPrec(x)
			if x.op == "^" {
				walk(x.l, exprPrec(x.l) <= p)
				b.WriteString("^")
				walk(x.r, exprPrec(x.r) < 6)
				return
			}
			walk(x.l, exprPrec(x.l) < p)
			b.WriteString(shownOp[x.op])
			rp := exprPrec(x.r)
			walk(x.r, rp < p || (rp == p && (x.op == "-" || x.op == "/" || p == 1)))
		case *call:
			b.WriteString(x.name + "(")
			for i, a := range x.args {
				if i > 0 {
					b.WriteString(", ")
				}
				walk(a, false)
			}
			b.WriteString(")")
		}
	}
	walk(e, false)
	return b.String()
}
