package engine

import (
	"encoding/json"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func demoPath(t *testing.T) string {
	_, file, _, _ := runtime.Caller(0)
	return filepath.Join(filepath.Dir(file), "..", "assets", "demos", "chiller-cover.ramify.json")
}

// explainedTotal parses the JSON form back and adds the InSum amounts exactly.
func explainedTotal(t *testing.T, e *Explanation) (sum, value decimal.Decimal) {
	t.Helper()
	data, err := json.Marshal(e)
	require.NoError(t, err)
	var back struct {
		Value string `json:"value"`
		Terms []struct {
			Amount string `json:"amount"`
			InSum  bool   `json:"inSum"`
		} `json:"terms"`
	}
	require.NoError(t, json.Unmarshal(data, &back))
	for _, term := range back.Terms {
		if term.InSum {
			sum = sum.Add(decimal.RequireFromString(term.Amount))
		}
	}
	return sum, decimal.RequireFromString(back.Value)
}

// expectedValue is the value an explanation must reach: the rolled-back value at
// chance and decision nodes, the path payoff at ends.
func expectedValue(r *Result, n *Node) decimal.Decimal {
	if n.Kind == End {
		return r.PathValue(n)
	}
	return r.ValueOf(n)
}

func TestExplainReAddsExactly(t *testing.T) {
	demo, err := Load(demoPath(t))
	require.NoError(t, err)
	// Thirds make non-terminating decimals: the terms must still add up exactly.
	thirds := &Project{Objective: Maximize, Decimals: 2, Currency: "$",
		Variables: []*Variable{{Name: "p", Value: "1/3"}, {Name: "gain", Value: "1000/7"}},
		Root: &Node{ID: "c", Kind: Chance, Branches: []*Branch{
			{Label: "a", Probability: "p", Cash: "gain", To: &Node{ID: "e1", Kind: End, Payoff: "-12000.005"}},
			{Label: "b", Probability: "p", To: &Node{ID: "e2", Kind: End, Payoff: "gain * 3"}},
			{Label: "c", Probability: "rest", Cash: "-0.01", To: &Node{ID: "e3", Kind: End, Payoff: "4000"}},
		}}}
	averse, err := Load(demoPath(t))
	require.NoError(t, err)
	averse.Risk = RiskAttitude{Mode: RiskExponential, Tolerance: "150000"}
	tests := []struct {
		name string
		p    *Project
	}{
		{"demo, minimize cost", demo},
		{"thirds and sevenths", thirds},
		{"demo with an exponential risk attitude", averse},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := Evaluate(tc.p)
			require.True(t, r.Valid(), "%v", r.Problems)
			for _, n := range r.Nodes {
				e, err := Explain(r, n)
				require.NoError(t, err, n.ID)
				sum, value := explainedTotal(t, e)
				assert.True(t, sum.Equal(value), "node %s: terms add to %s, value %s", n.ID, sum, value)
				assert.True(t, value.Equal(expectedValue(r, n)), "node %s: value %s, engine %s", n.ID, value, expectedValue(r, n))
				assert.Equal(t, r.Format(value), e.Display)
				assert.Contains(t, e.Text(), e.Display, n.ID)
				if n.Kind == Decision {
					assert.Equal(t, r.RuleWord(), e.Rule)
					assert.Equal(t, r.Choice(n), e.Choice)
				}
				if ce, ok := r.CertaintyEquivalent(n); ok && n.Kind != End {
					assert.Equal(t, ce.String(), e.CE)
					assert.Contains(t, e.Text(), r.Format(ce), "the certainty equivalent is shown")
				}
			}
		})
	}
}

// Values worked by hand from the demo's inputs (closed-form arithmetic):
// delivery = 0.6 × 240,000 + 0.4 × (38,000 + 240,000) = 255,200;
// plan = min(57,000 + 255,200; 0.55 × 240,000 + 0.45 × (0.7 × 350,000 + 0.3 × 570,000); 75,000 + 240,000).
func TestExplainDemoLines(t *testing.T) {
	p, err := Load(demoPath(t))
	require.NoError(t, err)
	r := Evaluate(p)
	tests := []struct {
		node string
		want []string
	}{
		{"delivery", []string{"0.6 × 240,000 + 0.4 × 278,000 = 255,200 EUR", "Late probability: rest = 1 − 0.6 = 0.4"}},
		{"outage", []string{"0.7 × 350,000 + 0.3 × 570,000 = 416,000 EUR"}},
		{"plan", []string{"Rent a temporary chiller", "57,000 + 255,200 = 312,200   ← chosen", "319,200",
			"lowest expected cost", "rent_week × 6 = 9,500 × 6 = 57,000"}},
		{"extend", []string{"57,000 (Rent a temporary chiller) + 0 (Late) + 38,000 (Extend the rental 4 weeks) + 240,000 (end payoff) = 335,000 EUR"}},
		{"long-outage", []string{"install_cost + 6 × outage_day = 240,000 + 6 × 55,000 = 570,000"}},
	}
	for _, tc := range tests {
		t.Run(tc.node, func(t *testing.T) {
			e, err := ExplainID(r, tc.node)
			require.NoError(t, err)
			for _, w := range tc.want {
				assert.Contains(t, e.Text(), w)
			}
		})
	}
	_, err = ExplainID(r, "nope")
	assert.ErrorContains(t, err, `"nope"`)
}

// The printed chance line "p × v + … = V" re-adds to V when the values are whole numbers.
func TestExplainPrintedLineReAdds(t *testing.T) {
	p, err := Load(demoPath(t))
	require.NoError(t, err)
	r := Evaluate(p)
	for _, n := range r.Nodes {
		if n.Kind != Chance {
			continue
		}
		e, err := Explain(r, n)
		require.NoError(t, err)
		line := strings.TrimSpace(e.Lines[1])
		lhs, rhs, ok := strings.Cut(line, " = ")
		require.True(t, ok, line)
		sum := decimal.Zero
		for _, term := range strings.Split(lhs, " + ") {
			a, b, ok := strings.Cut(term, " × ")
			require.True(t, ok, term)
			sum = sum.Add(parseShown(t, a).Mul(parseShown(t, b)))
		}
		assert.True(t, sum.Equal(parseShown(t, strings.TrimSuffix(rhs, " EUR"))), line)
	}
}

func parseShown(t *testing.T, s string) decimal.Decimal {
	s = strings.NewReplacer(",", "", "−", "-", "(", "", ")", "").Replace(strings.TrimSpace(s))
	d, err := decimal.NewFromString(s)
	require.NoError(t, err, s)
	return d
}

// Printed formulas, read back with ASCII operators, evaluate to the original value.
func TestRenderExprRoundTrips(t *testing.T) {
	vars := MapEnv{"a": decimal.NewFromInt(7), "b": decimal.NewFromInt(-3), "c": decimal.RequireFromString("0.5")}
	tests := []struct{ src, want string }{
		{"a*(b+c)", "a × (b + c)"},
		{"a-(b-c)", "a − (b − c)"},
		{"a-b-c", "a − b − c"},
		{"a/(b*c)", "a ÷ (b × c)"},
		{"-(a-b)", "−(a − b)"},
		{"2^-1 + a^2", "2^(−1) + a^2"},
		{"(a+b)^2", "(a + b)^2"},
		{"if(a > b, max(a, c), -b) + round(c*3, 1)", "if(a > b, max(a, c), −b) + round(c × 3, 1)"},
		{"60% * 1000", "0.6 × 1,000"},
		{"a <= b", "a ≤ b"},
	}
	ascii := strings.NewReplacer("×", "*", "÷", "/", "−", "-", "≤", "<=", "≥", ">=", "≠", "!=", ",000", "000")
	for _, tc := range tests {
		t.Run(tc.src, func(t *testing.T) {
			f, err := ParseFormula(tc.src)
			require.NoError(t, err)
			shown := renderExpr(f.root, nil)
			assert.Equal(t, tc.want, shown)
			want, err := f.Eval(vars)
			require.NoError(t, err)
			for _, text := range []string{shown, renderExpr(f.root, vars)} {
				back, err := ParseFormula(ascii.Replace(text))
				require.NoError(t, err, text)
				got, err := back.Eval(vars)
				require.NoError(t, err)
				assert.True(t, want.Equal(got), "%s: %s vs %s", text, got, want)
			}
		})
	}
}

func TestExplainBrokenNode(t *testing.T) {
	p := &Project{Objective: Maximize, Root: &Node{ID: "c", Kind: Chance, Branches: []*Branch{
		{Label: "a", Probability: "0.5", To: &Node{ID: "e1", Kind: End, Payoff: "missing_name"}},
		{Label: "b", Probability: "0.5", To: &Node{ID: "e2", Kind: End}},
	}}}
	r := Evaluate(p)
	_, err := Explain(r, p.Root)
	assert.ErrorContains(t, err, `node "c"`)
}

// The issue's own example, worked by hand: 0.25 × (−12,000) + 0.75 × (−4,000) = −6,000.
func TestExplainNegativeValues(t *testing.T) {
	p := &Project{Objective: Maximize, Root: &Node{ID: "c", Kind: Chance, Branches: []*Branch{
		{Label: "up", Probability: "0.25", To: &Node{ID: "u", Kind: End, Payoff: "-12000"}},
		{Label: "down", Probability: "rest", To: &Node{ID: "d", Kind: End, Payoff: "-4000"}},
	}}}
	r := Evaluate(p)
	require.True(t, r.Valid())
	e, err := Explain(r, p.Root)
	require.NoError(t, err)
	assert.Equal(t, "  0.25 × (−12,000) + 0.75 × (−4,000) = −6,000", e.Lines[1])
	require.Len(t, e.Terms, 2)
	assert.Equal(t, "-3000", e.Terms[0].Amount)
	assert.Equal(t, "-3000", e.Terms[1].Amount)
	assert.Equal(t, "-6000", e.Value)
}
