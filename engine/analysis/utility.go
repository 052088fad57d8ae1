package analysis

import (
	"fmt"
	"math"
	"strings"

	"github.com/shopspring/decimal"

	"github.com/ramify-app/ramify/engine"
)

// The exponential utility itself lives in the engine (engine.Evaluate rolls it
// back, engine.CertaintyEquivalent computes the CE). This file holds what helps
// a user choose R, and the edit that sets the project's attitude.
//
// Forms used (documented for users):
//   R > 0, risk-averse:  U(x) = 1 − exp(−x/R)
//   R < 0, risk-seeking: U(x) = exp(x/|R|) − 1
//   both: CE = −R ln E[exp(−X/R)]
// With a cost objective the utility is applied to the negated cost and the CE is
// reported back as a cost.

// ParsePositive reads a user's figure that must be a positive number, naming the
// field in the message: "net sales: must be more than 0".
func ParsePositive(field, text string) (decimal.Decimal, error) {
	t := strings.TrimSpace(strings.ReplaceAll(text, ",", ""))
	if t == "" {
		return decimal.Zero, fmt.Errorf("%s: missing (give a number)", field)
	}
	d, err := decimal.NewFromString(t)
	if err != nil {
		return decimal.Zero, fmt.Errorf("%s: %q is not a number", field, text)
	}
	if !d.IsPositive() {
		return decimal.Zero, fmt.Errorf("%s: must be more than 0, not %s", field, d.String())
	}
	return d, nil
}

// ParseTolerance reads a risk tolerance typed by a user (a number or a formula
// over the project's variables). It rejects 0 and anything not a number with a
// message; a negative R is allowed and means risk-seeking.
func ParseTolerance(text string, vars engine.MapEnv) (float64, error) {
	t := strings.TrimSpace(text)
	switch strings.ToLower(strings.TrimLeft(t, "+-")) {
	case "nan", "inf", "infinity":
		return 0, fmt.Errorf("risk tolerance: %q is not a number", text)
	}
	R, err := engine.ParseTolerance(t, vars)
	if err != nil {
		return 0, fmt.Errorf("risk tolerance: %w", err)
	}
	if math.IsNaN(R) || math.IsInf(R, 0) {
		return 0, fmt.Errorf("risk tolerance: %q is not a finite number", text)
	}
	return R, nil
}

// ToleranceFromGamble is the 50-50 rule of thumb: R is about the largest X for
// which one would accept a 50-50 chance to win X or lose X/2 (Clemen & Reilly,
// Making Hard Decisions, chapter on risk attitudes; common practice).
func ToleranceFromGamble(x decimal.Decimal) (decimal.Decimal, error) {
	if !x.IsPositive() {
		return decimal.Zero, fmt.Errorf("largest acceptable win X: must be more than 0, not %s", x.String())
	}
	return x, nil
}

// ExactGambleTolerance is the R at which the 50-50 gamble of +X / −X/2 is worth
// exactly nothing under exponential utility: ½e^(−X/R) + ½e^(X/2R) = 1; with
// u = e^(X/2R) this is u³ − 2u² + 1 = 0, whose root above 1 is the golden ratio
// φ, so R = X / (2 ln φ) ≈ 1.039 X. (Derived here; it shows the rule of thumb
// R ≈ X is within 4 %.)
func ExactGambleTolerance(x float64) float64 {
	phi := (1 + math.Sqrt(5)) / 2
	return x / (2 * math.Log(phi))
}

// GambleCE is the certainty equivalent of the 50-50 gamble +X / −X/2 at R.
func GambleCE(x, R float64) float64 {
	return engine.CertaintyEquivalent([]float64{0.5, 0.5}, []float64{x, -x / 2}, R)
}

// CompanyFigures are a firm's accounts used to suggest a risk tolerance.
type CompanyFigures struct {
	NetSales, NetIncome, Equity string // as typed; empty ones are skipped
}

// ToleranceEstimate is one suggestion for R with the ratio behind it.
type ToleranceEstimate struct {
	Basis string // "6 % of net sales"
	R     decimal.Decimal
}

// Ratios from Howard 1988, "Decision Analysis: Practice and Promise",
// Management Science: R ≈ 6.4 % of net sales, ≈ 1.24 × net income,
// ≈ 15.7 % of equity, rounded by practitioners to 6 %, 1.2 × and 1/6
// (values from memory; the rounded ratios are used here).
var (
	salesRatio  = decimal.RequireFromString("0.06")
	incomeRatio = decimal.RequireFromString("1.2")
	equityRatio = decimal.NewFromInt(6) // divide by
)

// ToleranceFromCompany suggests R from whichever figures are given. Each given
// figure must be a positive number; at least one is needed.
func ToleranceFromCompany(f CompanyFigures) ([]ToleranceEstimate, error) {
	var out []ToleranceEstimate
	if strings.TrimSpace(f.NetSales) != "" {
		v, err := ParsePositive("net sales", f.NetSales)
		if err != nil {
			return nil, err
		}
		out = append(out, ToleranceEstimate{"6 % of net sales", v.Mul(salesRatio)})
	}
	if strings.TrimSpace(f.NetIncome) != "" {
		v, err := ParsePositive("net income", f.NetIncome)
		if err != nil {
			return nil, fmt.Errorf("%w (the ratio needs a profitable year)", err)
		}
		out = append(out, ToleranceEstimate{"1.2 × net income", v.Mul(incomeRatio)})
	}
	if strings.TrimSpace(f.Equity) != "" {
		v, err := ParsePositive("equity", f.Equity)
		if err != nil {
			return nil, err
		}
		out = append(out, ToleranceEstimate{"1/6 of equity", engine.Divide(v, equityRatio)})
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("give at least one of net sales, net income or equity")
	}
	return out, nil
}

// SetRisk is the undoable edit that sets the project's attitude to risk.
// (A small command of its own until the editor's command set has one.)
type SetRisk struct {
	Risk engine.RiskAttitude
}

// Describe implements engine.Command.
func (c SetRisk) Describe() string { return "Change risk attitude" }

// Apply implements engine.Command: it checks the attitude, sets it and returns
// the edit that restores the old one. On error the project is unchanged.
func (c SetRisk) Apply(p *engine.Project) (engine.Command, error) {
	switch c.Risk.Mode {
	case engine.RiskNeutral:
		if strings.TrimSpace(c.Risk.Tolerance) != "" {
			c.Risk.Tolerance = ""
		}
	case engine.RiskExponential:
		f, err := engine.ParseFormula(c.Risk.Tolerance)
		if err != nil {
			return nil, fmt.Errorf("risk tolerance: %w", err)
		}
		for _, name := range f.Names() {
			if p.Variable(name) == nil {
				return nil, fmt.Errorf("risk tolerance: there is no variable %q", name)
			}
		}
		if f.IsConstant() {
			if _, err := ParseTolerance(c.Risk.Tolerance, nil); err != nil {
				return nil, err
			}
		}
	default:
		return nil, fmt.Errorf("risk attitude %q is unknown (use exponential, or risk-neutral)", c.Risk.Mode)
	}
	old := p.Risk
	p.Risk = c.Risk
	return SetRisk{Risk: old}, nil
}
