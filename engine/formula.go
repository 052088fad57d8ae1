package engine

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/shopspring/decimal"
)

// DivisionDigits is the number of significant digits a formula division keeps.
// Everything else (+, −, ×, integer powers) is exact.
const DivisionDigits = 28

// maxPower bounds integer exponents so a typo like 10^100000 cannot exhaust memory.
const maxPower = 1000

// maxBits bounds the size of any exact intermediate result (about 1,000 decimal
// digits), so chains like a^1000 with a = b^1000 fail with a message instead of
// computing for minutes.
const maxBits = 3322

func bitLen(d decimal.Decimal) int { return d.Coefficient().BitLen() }

func tooLarge(col int) error {
	return &FormulaError{col, "the result would have more than 1,000 digits"}
}

// FormulaError is a problem in a formula text; Column counts runes from 1.
type FormulaError struct {
	Column int
	Msg    string
}

func (e *FormulaError) Error() string {
	if e.Column <= 0 {
		return e.Msg
	}
	return fmt.Sprintf("%s at column %d", e.Msg, e.Column)
}

// Formula is a parsed formula, ready to evaluate many times.
type Formula struct {
	src      string
	root     expr
	names    []string // variable names used, in order of first use
	constant bool
	cval     decimal.Decimal // value when constant
	csmall   small           // its int64 form, for the roll-back
}

// Env gives the value of a variable.
type Env interface {
	Lookup(name string) (decimal.Decimal, bool)
}

// MapEnv is an Env over a map.
type MapEnv map[string]decimal.Decimal

func (m MapEnv) Lookup(name string) (decimal.Decimal, bool) { v, ok := m[name]; return v, ok }

// FloatEnv gives float values, for the fast evaluator used by sweeps and simulation.
type FloatEnv interface {
	LookupFloat(name string) (float64, bool)
}

// Source is the formula's text.
func (f *Formula) Source() string { return f.src }

// Names lists the variables the formula uses.
func (f *Formula) Names() []string { return f.names }

// IsConstant reports whether the formula uses no variables.
func (f *Formula) IsConstant() bool { return f.constant }

// ParseFormula parses a formula text. An empty text is an error; callers treat
// empty optional fields (cash, payoff) as zero before parsing.
func ParseFormula(src string) (*Formula, error) {
	p := &parser{src: src}
	if err := p.lex(); err != nil {
		return nil, err
	}
	if len(p.toks) == 1 {
		return nil, &FormulaError{0, "empty formula"}
	}
	root, err := p.parseExpr(0)
	if err != nil {
		return nil, err
	}
	if t := p.peek(); t.kind != tEOF {
		return nil, &FormulaError{t.col, fmt.Sprintf("unexpected %q", t.text)}
	}
	f := &Formula{src: src, root: root}
	seen := map[string]bool{}
	walkExpr(root, func(e expr) {
		if v, ok := e.(*varRef); ok && !seen[v.name] {
			seen[v.name] = true
			f.names = append(f.names, v.name)
		}
	})
	if len(f.names) == 0 {
		v, err := root.eval(MapEnv(nil))
		if err != nil {
			return nil, err
		}
		f.constant, f.cval, f.csmall = true, v, smallOf(v)
	}
	return f, nil
}

// Eval computes the formula exactly (divisions to DivisionDigits significant digits).
func (f *Formula) Eval(env Env) (decimal.Decimal, error) {
	if f.constant {
		return f.cval, nil
	}
	return f.root.eval(env)
}

// EvalFloat computes the formula in float64, for sweeps and simulation only.
func (f *Formula) EvalFloat(env FloatEnv) (float64, error) {
	if f.constant {
		return f.cval.InexactFloat64(), nil
	}
	return f.root.evalFloat(env)
}

// RenameVariable returns src with every use of the variable old replaced by new.
// Function names and other text are left untouched. A text that does not parse is returned unchanged.
func RenameVariable(src, old, new string) string {
	p := &parser{src: src}
	if p.lex() != nil {
		return src
	}
	var b strings.Builder
	last := 0
	for i, t := range p.toks {
		if t.kind != tName || t.text != old {
			continue
		}
		if i+1 < len(p.toks) && p.toks[i+1].kind == tPunct && p.toks[i+1].text == "(" {
			continue // a function call, not the variable
		}
		b.WriteString(src[last:t.off])
		b.WriteString(new)
		last = t.off + len(t.text)
	}
	b.WriteString(src[last:])
	return b.String()
}

// UsesName reports whether the formula text refers to the variable name.
func UsesName(src, name string) bool {
	return RenameVariable(src, name, name+"\x00") != src
}

// ValidName reports whether s can name a variable.
func ValidName(s string) bool {
	if s == "" || s == RestProbability || functions[s] != nil {
		return false
	}
	for i, r := range s {
		if !(r == '_' || unicode.IsLetter(r) || (i > 0 && unicode.IsDigit(r))) {
			return false
		}
	}
	return true
}

// ---- lexer ----

type tokKind int

const (
	tEOF tokKind = iota
	tNumber
	tName
	tPunct
)

type token struct {
	kind tokKind
	text string
	off  int // byte offset
	col  int // rune column from 1
	num  decimal.Decimal
}

type parser struct {
	src  string
	toks []token
	pos  int
}

func (p *parser) lex() error {
	s := p.src
	i, col := 0, 1
	for i < len(s) {
		r, w := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && w == 1:
			return &FormulaError{col, "invalid UTF-8"}
		case unicode.IsSpace(r):
			i += w
			col++
		case r >= '0' && r <= '9' || r == '.':
			start, startCol := i, col
			for i < len(s) && (s[i] >= '0' && s[i] <= '9' || s[i] == '.') {
				i++
			}
			if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
				j := i + 1
				if j < len(s) && (s[j] == '+' || s[j] == '-') {
					j++
				}
				if j < len(s) && s[j] >= '0' && s[j] <= '9' {
					for j < len(s) && s[j] >= '0' && s[j] <= '9' {
						j++
					}
					i = j
				}
			}
			text := s[start:i]
			col += i - start
			d, err := parseNumber(text)
			if err != nil {
				return &FormulaError{startCol, fmt.Sprintf("bad number %q", text)}
			}
			if i < len(s) && s[i] == '%' {
				d = d.Shift(-2)
				i++
				col++
				text += "%"
			}
			p.toks = append(p.toks, token{kind: tNumber, text: text, off: start, col: startCol, num: d})
		case r == '_' || unicode.IsLetter(r):
			start, startCol := i, col
			for i < len(s) {
				r2, w2 := utf8.DecodeRuneInString(s[i:])
				if !(r2 == '_' || unicode.IsLetter(r2) || unicode.IsDigit(r2)) {
					break
				}
				i += w2
				col++
			}
			p.toks = append(p.toks, token{kind: tName, text: s[start:i], off: start, col: startCol})
		default:
			two := ""
			if i+1 < len(s) {
				two = s[i : i+2]
			}
			switch two {
			case "<=", ">=", "==", "!=":
				p.toks = append(p.toks, token{kind: tPunct, text: two, off: i, col: col})
				i += 2
				col += 2
				continue
			}
			if strings.ContainsRune("+-*/^(),<>", r) {
				p.toks = append(p.toks, token{kind: tPunct, text: string(r), off: i, col: col})
				i += w
				col++
				continue
			}
			if r == '−' { // a typographic minus pasted from a document
				p.toks = append(p.toks, token{kind: tPunct, text: "-", off: i, col: col})
				i += w
				col++
				continue
			}
			return &FormulaError{col, fmt.Sprintf("unexpected character %q", r)}
		}
	}
	p.toks = append(p.toks, token{kind: tEOF, text: "end of formula", off: len(s), col: col})
	return nil
}

func parseNumber(text string) (decimal.Decimal, error) {
	if strings.Count(text, ".") > 1 || text == "." {
		return decimal.Zero, errors.New("bad number")
	}
	d, err := decimal.NewFromString(text)
	if err != nil {
		return decimal.Zero, err
	}
	if e := d.Exponent(); e > 400 || e < -400 {
		return decimal.Zero, errors.New("exponent out of range")
	}
	return d, nil
}

// ---- parser: precedence climbing ----

func (p *parser) peek() token { return p.toks[p.pos] }
func (p *parser) next() token { t := p.toks[p.pos]; p.pos++; return t }

var binaryPrec = map[string]int{
	"<": 1, "<=": 1, ">": 1, ">=": 1, "==": 1, "!=": 1,
	"+": 2, "-": 2,
	"*": 3, "/": 3,
}

// maxNesting bounds parentheses and unary chains so hostile input cannot overflow the stack.
const maxNesting = 200

func (p *parser) parseExpr(depth int) (expr, error) {
	if depth > maxNesting {
		return nil, &FormulaError{p.peek().col, "formula nested too deeply"}
	}
	return p.parseBinary(1, depth)
}

func (p *parser) parseBinary(minPrec, depth int) (expr, error) {
	left, err := p.parseUnary(depth)
	if err != nil {
		return nil, err
	}
	for {
		t := p.peek()
		prec, ok := binaryPrec[t.text]
		if t.kind != tPunct || !ok || prec < minPrec {
			return left, nil
		}
		if prec == 1 && minPrec == 1 {
			if _, chained := left.(*binary); chained && isComparison(left) {
				return nil, &FormulaError{t.col, "comparisons cannot be chained"}
			}
		}
		p.next()
		right, err := p.parseBinary(prec+1, depth)
		if err != nil {
			return nil, err
		}
		left = &binary{op: t.text, l: left, r: right, col: t.col}
	}
}

func isComparison(e expr) bool {
	b, ok := e.(*binary)
	return ok && binaryPrec[b.op] == 1
}

func (p *parser) parseUnary(depth int) (expr, error) {
	if depth > maxNesting {
		return nil, &FormulaError{p.peek().col, "formula nested too deeply"}
	}
	t := p.peek()
	if t.kind == tPunct && (t.text == "-" || t.text == "+") {
		p.next()
		x, err := p.parseUnary(depth + 1)
		if err != nil {
			return nil, err
		}
		if t.text == "+" {
			return x, nil
		}
		return &neg{x: x}, nil
	}
	return p.parsePower(depth)
}

func (p *parser) parsePower(depth int) (expr, error) {
	base, err := p.parsePrimary(depth)
	if err != nil {
		return nil, err
	}
	if t := p.peek(); t.kind == tPunct && t.text == "^" {
		p.next()
		exp, err := p.parseUnary(depth + 1) // right-associative: 2^3^2 = 2^9
		if err != nil {
			return nil, err
		}
		return &binary{op: "^", l: base, r: exp, col: t.col}, nil
	}
	return base, nil
}

func (p *parser) parsePrimary(depth int) (expr, error) {
	t := p.next()
	switch t.kind {
	case tNumber:
		return &number{v: t.num}, nil
	case tName:
		if n := p.peek(); n.kind == tPunct && n.text == "(" {
			fn := functions[t.text]
			if fn == nil {
				return nil, &FormulaError{t.col, fmt.Sprintf("unknown function %q", t.text)}
			}
			p.next()
			var args []expr
			if c := p.peek(); !(c.kind == tPunct && c.text == ")") {
				for {
					a, err := p.parseExpr(depth + 1)
					if err != nil {
						return nil, err
					}
					args = append(args, a)
					c := p.next()
					if c.kind == tPunct && c.text == ")" {
						break
					}
					if !(c.kind == tPunct && c.text == ",") {
						return nil, &FormulaError{c.col, fmt.Sprintf("expected , or ) but found %q", c.text)}
					}
				}
			} else {
				p.next()
			}
			if len(args) < fn.minArgs || (fn.maxArgs >= 0 && len(args) > fn.maxArgs) {
				return nil, &FormulaError{t.col, fmt.Sprintf("%s takes %s", t.text, fn.arity)}
			}
			return &call{name: t.text, fn: fn, args: args, col: t.col}, nil
		}
		if t.text == RestProbability {
			return nil, &FormulaError{t.col, `"rest" can only stand alone as a probability`}
		}
		return &varRef{name: t.text, col: t.col}, nil
	case tPunct:
		if t.text == "(" {
			e, err := p.parseExpr(depth + 1)
			if err != nil {
				return nil, err
			}
			if c := p.next(); !(c.kind == tPunct && c.text == ")") {
				return nil, &FormulaError{c.col, fmt.Sprintf("expected ) but found %q", c.text)}
			}
			return e, nil
		}
	}
	return nil, &FormulaError{t.col, fmt.Sprintf("unexpected %q", t.text)}
}

// ---- compiled form ----

type expr interface {
	eval(env Env) (decimal.Decimal, error)
	evalFloat(env FloatEnv) (float64, error)
}

type number struct{ v decimal.Decimal }
type varRef struct {
	name string
	col  int
}
type neg struct{ x expr }
type binary struct {
	op   string
	l, r expr
	col  int
}
type call struct {
	name string
	fn   *function
	args []expr
	col  int
}

func walkExpr(e expr, visit func(expr)) {
	stack := []expr{e}
	for len(stack) > 0 {
		e := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		visit(e)
		switch x := e.(type) {
		case *neg:
			stack = append(stack, x.x)
		case *binary:
			stack = append(stack, x.r, x.l)
		case *call:
			for i := len(x.args) - 1; i >= 0; i-- {
				stack = append(stack, x.args[i])
			}
		}
	}
}

func (n *number) eval(Env) (decimal.Decimal, error)   { return n.v, nil }
func (n *number) evalFloat(FloatEnv) (float64, error) { return n.v.InexactFloat64(), nil }
func unknownName(name string, col int) error {
	return &FormulaError{col, fmt.Sprintf("unknown name %q", name)}
}
func (v *varRef) eval(env Env) (decimal.Decimal, error) {
	if env != nil {
		if d, ok := env.Lookup(v.name); ok {
			return d, nil
		}
	}
	return decimal.Zero, unknownName(v.name, v.col)
}
func (v *varRef) evalFloat(env FloatEnv) (float64, error) {
	if env != nil {
		if d, ok := env.LookupFloat(v.name); ok {
			return d, nil
		}
	}
	return 0, unknownName(v.name, v.col)
}
func (n *neg) eval(env Env) (decimal.Decimal, error) {
	x, err := n.x.eval(env)
	return x.Neg(), err
}
func (n *neg) evalFloat(env FloatEnv) (float64, error) {
	x, err := n.x.evalFloat(env)
	return -x, err
}

func boolDec(b bool) decimal.Decimal {
	if b {
		return decimal.NewFromInt(1)
	}
	return decimal.Zero
}

func boolFloat(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// Divide divides to DivisionDigits significant digits.
func Divide(a, b decimal.Decimal) decimal.Decimal {
	mag := int32(a.NumDigits()) + a.Exponent() - (int32(b.NumDigits()) + b.Exponent())
	places := int32(DivisionDigits) - mag + 1
	if places < 0 {
		places = 0
	}
	q := a.DivRound(b, places)
	// The magnitude estimate can be one digit high; trim to exactly DivisionDigits.
	if extra := int32(q.NumDigits()) - DivisionDigits; extra > 0 && places-extra >= 0 {
		q = q.Round(places - extra)
	}
	return q
}

func (b *binary) eval(env Env) (decimal.Decimal, error) {
	l, err := b.l.eval(env)
	if err != nil {
		return l, err
	}
	r, err := b.r.eval(env)
	if err != nil {
		return r, err
	}
	switch b.op {
	case "+", "-":
		// Aligning very different exponents can make a huge coefficient too.
		if e := int64(l.Exponent()) - int64(r.Exponent()); absInt(e)*332/100+int64(max(bitLen(l), bitLen(r))) > maxBits {
			return decimal.Zero, tooLarge(b.col)
		}
		if b.op == "+" {
			return l.Add(r), nil
		}
		return l.Sub(r), nil
	case "*":
		if bitLen(l)+bitLen(r) > maxBits {
			return decimal.Zero, tooLarge(b.col)
		}
		return l.Mul(r), nil
	case "/":
		if r.IsZero() {
			return decimal.Zero, &FormulaError{b.col, "division by zero"}
		}
		return Divide(l, r), nil
	case "^":
		if !r.IsInteger() {
			return decimal.Zero, &FormulaError{b.col, "the exponent must be a whole number"}
		}
		n := r.IntPart()
		if n > maxPower || n < -maxPower {
			return decimal.Zero, &FormulaError{b.col, fmt.Sprintf("exponent %d is out of range (at most %d)", n, maxPower)}
		}
		if k := n; k != 0 && int64(bitLen(l))*absInt(k) > maxBits {
			return decimal.Zero, tooLarge(b.col)
		}
		if n < 0 {
			if l.IsZero() {
				return decimal.Zero, &FormulaError{b.col, "division by zero"}
			}
			return Divide(decimal.NewFromInt(1), l.Pow(decimal.NewFromInt(-n))), nil
		}
		return l.Pow(decimal.NewFromInt(n)), nil
	case "<":
		return boolDec(l.LessThan(r)), nil
	case "<=":
		return boolDec(l.LessThanOrEqual(r)), nil
	case ">":
		return boolDec(l.GreaterThan(r)), nil
	case ">=":
		return boolDec(l.GreaterThanOrEqual(r)), nil
	case "==":
		return boolDec(l.Equal(r)), nil
	case "!=":
		return boolDec(!l.Equal(r)), nil
	}
	return decimal.Zero, &FormulaError{b.col, "unknown operator " + b.op}
}

func (b *binary) evalFloat(env FloatEnv) (float64, error) {
	l, err := b.l.evalFloat(env)
	if err != nil {
		return l, err
	}
	r, err := b.r.evalFloat(env)
	if err != nil {
		return r, err
	}
	switch b.op {
	case "+":
		return l + r, nil
	case "-":
		return l - r, nil
	case "*":
		return l * r, nil
	case "/":
		if r == 0 {
			return 0, &FormulaError{b.col, "division by zero"}
		}
		return l / r, nil
	case "^":
		if r != math.Trunc(r) || math.Abs(r) > maxPower {
			return 0, &FormulaError{b.col, "the exponent must be a whole number"}
		}
		return math.Pow(l, r), nil
	case "<":
		return boolFloat(l < r), nil
	case "<=":
		return boolFloat(l <= r), nil
	case ">":
		return boolFloat(l > r), nil
	case ">=":
		return boolFloat(l >= r), nil
	case "==":
		return boolFloat(l == r), nil
	case "!=":
		return boolFloat(l != r), nil
	}
	return 0, &FormulaError{b.col, "unknown operator " + b.op}
}

type function struct {
	minArgs, maxArgs int
	arity            string
	exact            func(c *call, args []decimal.Decimal) (decimal.Decimal, error)
	float            func(c *call, args []float64) (float64, error)
}

var functions map[string]*function

func init() {
	functions = map[string]*function{
		"min": {1, -1, "one or more arguments",
			func(_ *call, a []decimal.Decimal) (decimal.Decimal, error) { return decimal.Min(a[0], a[1:]...), nil },
			func(_ *call, a []float64) (float64, error) {
				m := a[0]
				for _, x := range a[1:] {
					m = math.Min(m, x)
				}
				return m, nil
			}},
		"max": {1, -1, "one or more arguments",
			func(_ *call, a []decimal.Decimal) (decimal.Decimal, error) { return decimal.Max(a[0], a[1:]...), nil },
			func(_ *call, a []float64) (float64, error) {
				m := a[0]
				for _, x := range a[1:] {
					m = math.Max(m, x)
				}
				return m, nil
			}},
		"abs": {1, 1, "one argument",
			func(_ *call, a []decimal.Decimal) (decimal.Decimal, error) { return a[0].Abs(), nil },
			func(_ *call, a []float64) (float64, error) { return math.Abs(a[0]), nil }},
		"round": {1, 2, "a value and optional decimal places",
			func(c *call, a []decimal.Decimal) (decimal.Decimal, error) {
				places, err := roundPlaces(c, a)
				if err != nil {
					return decimal.Zero, err
				}
				return a[0].Round(places), nil
			},
			func(c *call, a []float64) (float64, error) {
				places := 0.0
				if len(a) > 1 {
					places = a[1]
				}
				if places != math.Trunc(places) || math.Abs(places) > 30 {
					return 0, &FormulaError{c.col, "round needs whole-number places between -30 and 30"}
				}
				s := math.Pow(10, places)
				return math.Round(a[0]*s) / s, nil
			}},
	}
}

func roundPlaces(c *call, a []decimal.Decimal) (int32, error) {
	if len(a) < 2 {
		return 0, nil
	}
	if !a[1].IsInteger() || a[1].Abs().GreaterThan(decimal.NewFromInt(30)) {
		return 0, &FormulaError{c.col, "round needs whole-number places between -30 and 30"}
	}
	return int32(a[1].IntPart()), nil
}

func (c *call) eval(env Env) (decimal.Decimal, error) {
	if c.name == "if" {
		cond, err := c.args[0].eval(env)
		if err != nil {
			return cond, err
		}
		if !cond.IsZero() {
			return c.args[1].eval(env)
		}
		return c.args[2].eval(env)
	}
	args := make([]decimal.Decimal, len(c.args))
	for i, a := range c.args {
		v, err := a.eval(env)
		if err != nil {
			return v, err
		}
		args[i] = v
	}
	return c.fn.exact(c, args)
}

func (c *call) evalFloat(env FloatEnv) (float64, error) {
	if c.name == "if" {
		cond, err := c.args[0].evalFloat(env)
		if err != nil {
			return cond, err
		}
		if cond != 0 {
			return c.args[1].evalFloat(env)
		}
		return c.args[2].evalFloat(env)
	}
	var buf [4]float64
	args := buf[:0]
	for _, a := range c.args {
		v, err := a.evalFloat(env)
		if err != nil {
			return v, err
		}
		args = append(args, v)
	}
	return c.fn.float(c, args)
}

func init() {
	// if() evaluates lazily, so it is handled in call.eval; the entry gives its arity.
	functions["if"] = &function{minArgs: 3, maxArgs: 3, arity: "three arguments: condition, value if true, value if false"}
}

// cachedFormula keeps a field's compiled formula until its text changes.
type cachedFormula struct {
	src  string
	f    *Formula
	err  error
	set  bool
	val  decimal.Decimal // last value, valid for variable generation gen (0: none)
	sval small
	gen  uint64
}

func (c *cachedFormula) get(src string) (*Formula, error) {
	if !c.set || c.src != src {
		c.src, c.set, c.gen = src, true, 0
		c.f, c.err = ParseFormula(src)
	}
	return c.f, c.err
}

func absInt(n int64) int64 {
	if n < 0 {
		return -n
	}
	return n
}
