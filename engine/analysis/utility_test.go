package analysis

import (
	"math"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/ramify-app/ramify/engine"
)

// pratt is the certainty equivalent of a two-outcome gamble under exponential
// utility written out directly: CE = −R ln(p e^(−a/R) + (1−p) e^(−b/R))
// (Pratt 1964, "Risk Aversion in the Small and in the Large", Econometrica:
// constant absolute risk aversion 1/R).
func pratt(p, a, b, R float64) float64 {
	return -R * math.Log(p*math.Exp(-a/R)+(1-p)*math.Exp(-b/R))
}

func twoOutcomeProject(p, a, b string, objective engine.Objective, R string) *engine.Project {
	return &engine.Project{Objective: objective, Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: R},
		Root: node("g", engine.Chance, branch("a", p, "", end("ea", a)), branch("b", engine.RestProbability, "", end("eb", b)))}
}

func TestCertaintyEquivalentClosedForm(t *testing.T) {
	// Pratt 1964 closed form for a two-outcome gamble; cases chosen to cover
	// risk-averse and risk-seeking R, losses and a sure thing.
	tests := []struct {
		name       string
		p, a, b, R float64
	}{
		{"even gamble, averse", 0.5, 1000, -500, 1000},
		{"skewed win", 0.1, 10000, 0, 5000},
		{"mostly loss", 0.8, -2000, 3000, 2500},
		{"risk-seeking", 0.5, 1000, -500, -1000},
		{"sure thing", 1, 700, -1000, 300},
		{"small R", 0.3, 100, 20, 10},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			want := pratt(tc.p, tc.a, tc.b, tc.R)
			got := engine.CertaintyEquivalent([]float64{tc.p, 1 - tc.p}, []float64{tc.a, tc.b}, tc.R)
			assert.InDelta(t, want, got, 1e-9*math.Max(1, math.Abs(want)))
		})
	}
}

func TestEvaluateRollsBackPrattCE(t *testing.T) {
	// The engine's roll-back at a chance node against the closed form, for a
	// benefit and for a cost objective (utility on the negated cost, CE reported
	// as a cost: CE_cost = R ln(p e^(a/R) + (1−p) e^(b/R))).
	tests := []struct {
		name      string
		objective engine.Objective
		p, a, b   string
		R         string
	}{
		{"benefit", engine.Maximize, "0.25", "4000", "-1000", "3000"},
		{"cost", engine.Minimize, "0.25", "4000", "1000", "3000"},
		{"benefit seeking", engine.Maximize, "0.6", "200", "900", "-800"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			r := engine.Evaluate(twoOutcomeProject(tc.p, tc.a, tc.b, tc.objective, tc.R))
			require.True(t, r.Valid(), "%v", r.Problems)
			ce, ok := r.CertaintyEquivalent(r.Project.Root)
			require.True(t, ok)
			p, _ := decimal.RequireFromString(tc.p).Float64()
			a, _ := decimal.RequireFromString(tc.a).Float64()
			b, _ := decimal.RequireFromString(tc.b).Float64()
			R, _ := decimal.RequireFromString(tc.R).Float64()
			want := pratt(p, a, b, R)
			if tc.objective == engine.Minimize {
				want = -pratt(p, -a, -b, R)
			}
			assert.InDelta(t, want, ce.InexactFloat64(), 1e-6)
		})
	}
}

func TestCertaintyEquivalentTendsToEV(t *testing.T) {
	// As R grows the CE approaches the EV; for large R the gap is Pratt's risk
	// premium ≈ σ²/(2R) (Pratt 1964, risk premium in the small).
	probs := []float64{0.2, 0.5, 0.3}
	values := []float64{-4000, 1000, 6000}
	ev, variance := 0.0, 0.0
	for k := range values {
		ev += probs[k] * values[k]
	}
	for k := range values {
		variance += probs[k] * (values[k] - ev) * (values[k] - ev)
	}
	prevGap := math.Inf(1)
	for _, R := range []float64{1e3, 1e4, 1e5, 1e6, 1e7, 1e8} {
		ce := engine.CertaintyEquivalent(probs, values, R)
		gap := ev - ce
		assert.Greater(t, gap, 0.0, "R=%g: CE below EV for a risk-averse R", R)
		assert.Less(t, gap, prevGap, "R=%g: the gap shrinks as R grows", R)
		prevGap = gap
		if R >= 1e6 {
			assert.InDelta(t, variance/(2*R), gap, 0.02*variance/(2*R), "R=%g: Pratt's approximation", R)
		}
	}
	assert.InDelta(t, ev, engine.CertaintyEquivalent(probs, values, 1e12), 1e-3)
}

func TestCertaintyEquivalentBelowEVWhenAverse(t *testing.T) {
	// Jensen's inequality: for concave U (R > 0) CE < EV, for convex U (R < 0)
	// CE > EV, whenever the outcome is uncertain.
	tests := []struct {
		probs, values []float64
	}{
		{[]float64{0.5, 0.5}, []float64{0, 100}},
		{[]float64{0.1, 0.9}, []float64{-1e5, 2e4}},
		{[]float64{0.3, 0.3, 0.4}, []float64{5, 6, 7}},
	}
	for _, tc := range tests {
		ev := 0.0
		for k := range tc.values {
			ev += tc.probs[k] * tc.values[k]
		}
		for _, R := range []float64{1, 50, 1e4, 1e6} {
			assert.Less(t, engine.CertaintyEquivalent(tc.probs, tc.values, R), ev, "R=%g %v", R, tc.values)
			assert.Greater(t, engine.CertaintyEquivalent(tc.probs, tc.values, -R), ev, "R=%g %v", -R, tc.values)
		}
	}
}

func TestCertaintyEquivalentImpossibleOutcome(t *testing.T) {
	// An outcome with probability 0 changes nothing, however extreme: the CE of
	// a sure 700 is 700 (it once came out +Inf because the impossible −1e6 set
	// the overflow shift).
	ce := engine.CertaintyEquivalent([]float64{1, 0}, []float64{700, -1e6}, 300)
	assert.InDelta(t, 700, ce, 1e-9)
}

func TestCertaintyEquivalentExtremeTolerance(t *testing.T) {
	// Limits of the CE (Pratt 1964): R → 0⁺ gives the worst outcome, R → 0⁻ the
	// best, |R| → ∞ the EV. A tolerance so small or large that x/R overflows must
	// give those limits, not NaN (which would crash the decimal conversion).
	probs, values := []float64{0.25, 0.75}, []float64{-400, 1200}
	assert.Equal(t, -400.0, engine.CertaintyEquivalent(probs, values, 1e-320))
	assert.Equal(t, 1200.0, engine.CertaintyEquivalent(probs, values, -1e-320))
	assert.InDelta(t, 800.0, engine.CertaintyEquivalent(probs, values, math.Inf(1)), 1e-9)
	for _, R := range []string{"1e-320", "-1e-320", "1e400", "0.000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000001"} {
		assert.NotPanics(t, func() {
			r := engine.Evaluate(twoOutcomeProject("0.25", "-400", "1200", engine.Maximize, R))
			if r.Valid() {
				ce, _ := r.CertaintyEquivalent(r.Project.Root)
				assert.False(t, ce.GreaterThan(decimal.NewFromInt(1200)) || ce.LessThan(decimal.NewFromInt(-400)), "R=%s CE=%s", R, ce)
			}
		}, "R=%s", R)
	}
}

func TestCertaintyEquivalentNoOverflow(t *testing.T) {
	// Payoffs of ±1e6 at R = 1: exp(1e6) overflows float64, the shifted form
	// must not. With a tiny R the CE is close to the worst outcome (R > 0) or
	// the best (R < 0): −R ln(p e^(−min/R)) = min − R ln p.
	ce := engine.CertaintyEquivalent([]float64{0.5, 0.5}, []float64{-1e6, 1e6}, 1)
	assert.InDelta(t, -1e6+math.Ln2, ce, 1e-6)
	ce = engine.CertaintyEquivalent([]float64{0.5, 0.5}, []float64{-1e6, 1e6}, -1)
	assert.InDelta(t, 1e6-math.Ln2, ce, 1e-6)
}

func TestFiftyFiftyRule(t *testing.T) {
	// Rule of thumb: with R = X the 50-50 gamble of +X / −X/2 is worth about
	// nothing (Clemen & Reilly, Making Hard Decisions, chapter on risk
	// attitudes; common practice). Its CE is within 1 % of X of zero.
	for _, x := range []float64{100, 25000, 1e6, 3e8} {
		R, err := ToleranceFromGamble(decimal.NewFromFloat(x))
		require.NoError(t, err)
		ce := GambleCE(x, R.InexactFloat64())
		assert.Less(t, math.Abs(ce), 0.01*x, "X=%g CE=%g", x, ce)
		// The exact indifference point R = X/(2 ln φ) makes the CE zero.
		assert.InDelta(t, 0, GambleCE(x, ExactGambleTolerance(x)), 1e-9*x)
		assert.InDelta(t, 1.0390, ExactGambleTolerance(x)/x, 5e-4)
	}
	_, err := ToleranceFromGamble(decimal.Zero)
	assert.ErrorContains(t, err, "must be more than 0")
}

func TestToleranceFromCompany(t *testing.T) {
	// Howard 1988, "Decision Analysis: Practice and Promise", Management
	// Science: R ≈ 6 % of net sales, ≈ 1.2 × net income, ≈ 1/6 of equity
	// (values from memory).
	tests := []struct {
		name    string
		figures CompanyFigures
		want    map[string]string
		err     string
	}{
		{"all three", CompanyFigures{NetSales: "50,000,000", NetIncome: "2500000", Equity: "18000000"},
			map[string]string{"6 % of net sales": "3000000", "1.2 × net income": "3000000", "1/6 of equity": "3000000"}, ""},
		{"sales only", CompanyFigures{NetSales: "1000"}, map[string]string{"6 % of net sales": "60"}, ""},
		{"loss year", CompanyFigures{NetIncome: "-200"}, nil, "net income: must be more than 0"},
		{"not a number", CompanyFigures{Equity: "lots"}, nil, `equity: "lots" is not a number`},
		{"zero sales", CompanyFigures{NetSales: "0"}, nil, "net sales: must be more than 0"},
		{"nothing", CompanyFigures{}, nil, "give at least one"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := ToleranceFromCompany(tc.figures)
			if tc.err != "" {
				assert.ErrorContains(t, err, tc.err)
				return
			}
			require.NoError(t, err)
			require.Len(t, got, len(tc.want))
			for _, e := range got {
				assert.True(t, decimal.RequireFromString(tc.want[e.Basis]).Equal(e.R), "%s: %s", e.Basis, e.R)
			}
		})
	}
}

func TestParseToleranceBadInput(t *testing.T) {
	tests := []struct {
		text string
		want float64
		err  string
	}{
		{"250000", 250000, ""},
		{"-5000", -5000, ""}, // risk-seeking, allowed
		{"2 * budget", 2000, ""},
		{"inflation * 10", 30, ""},
		{"-Inf", 0, "not a number"},
		{"0", 0, "R cannot be 0"},
		{"", 0, "missing"},
		{"abc", 0, "risk tolerance"},
		{"NaN", 0, "not a number"},
		{"1000 +", 0, "risk tolerance"},
	}
	vars := engine.MapEnv{"budget": decimal.NewFromInt(1000), "inflation": decimal.NewFromInt(3)}
	for _, tc := range tests {
		t.Run(tc.text, func(t *testing.T) {
			got, err := ParseTolerance(tc.text, vars)
			if tc.err != "" {
				assert.ErrorContains(t, err, tc.err)
				return
			}
			require.NoError(t, err)
			assert.Equal(t, tc.want, got)
		})
	}
}

func TestSetRiskCommand(t *testing.T) {
	p := &engine.Project{Variables: []*engine.Variable{{Name: "budget", Value: "1000"}}, Root: end("e", "1")}
	inv, err := SetRisk{Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "budget * 3"}}.Apply(p)
	require.NoError(t, err)
	assert.Equal(t, engine.RiskExponential, p.Risk.Mode)
	assert.Equal(t, "budget * 3", p.Risk.Tolerance)
	_, err = inv.Apply(p)
	require.NoError(t, err)
	assert.Equal(t, engine.RiskAttitude{}, p.Risk)

	for _, bad := range []SetRisk{
		{Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "0"}},
		{Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "x +"}},
		{Risk: engine.RiskAttitude{Mode: engine.RiskExponential, Tolerance: "unknown_name"}},
		{Risk: engine.RiskAttitude{Mode: "quadratic", Tolerance: "5"}},
	} {
		_, err := bad.Apply(p)
		assert.Error(t, err, "%+v", bad)
		assert.Equal(t, engine.RiskAttitude{}, p.Risk, "a failed edit leaves the project unchanged")
	}
}
