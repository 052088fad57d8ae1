package engine

import (
	"math/big"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestFormulaValues(t *testing.T) {
	env := MapEnv{"day_cost": decimal.NewFromInt(4000), "p": decimal.RequireFromString("0.25"), "n": decimal.NewFromInt(3)}
	tests := []struct{ src, want string }{
		{"12000", "12000"},
		{"0.3", "0.3"},
		{"2.5e3", "2500"},
		{"30%", "0.3"},
		{"12.5%", "0.125"},
		{"-3*day_cost", "-12000"},
		{"1 + 2 * 3", "7"},
		{"(1 + 2) * 3", "9"},
		{"2^10", "1024"},
		{"2^3^2", "512"}, // right-associative, as in mathematics
		{"-2^2", "-4"},   // unary minus binds looser than ^ (common practice)
		{"2^-2", "0.25"},
		{"10 - 4 - 3", "3"},
		{"100 / 8 / 5", "2.5"},
		{"1/3", "0.3333333333333333333333333333"}, // DivisionDigits significant digits
		{"2/3 * 3", "2.0000000000000000000000000001"},
		{"min(3, 1, 2)", "1"},
		{"max(day_cost, 5000)", "5000"},
		{"abs(-7.5)", "7.5"},
		{"round(2.345, 2)", "2.35"},
		{"round(-2.5)", "-3"}, // half away from zero
		{"if(p < 0.5, 10, 20)", "10"},
		{"if(n == 3, 1, 1/0)", "1"}, // lazy: the other branch is not computed
		{"3 >= 3", "1"},
		{"3 != 3", "0"},
		{"1 - p", "0.75"},
		{"n * p * day_cost", "3000"},
		{"4 − 1", "3"}, // typographic minus pasted from a document
	}
	for _, tt := range tests {
		t.Run(tt.src, func(t *testing.T) {
			f, err := ParseFormula(tt.src)
			require.NoError(t, err)
			got, err := f.Eval(env)
			require.NoError(t, err)
			assert.Equal(t, tt.want, got.String())
			fl, err := f.EvalFloat(floatEnv(env))
			require.NoError(t, err)
			assert.InDelta(t, got.InexactFloat64(), fl, 1e-9*(1+abs(fl)))
		})
	}
}

type floatEnv MapEnv

func (e floatEnv) LookupFloat(name string) (float64, bool) {
	v, ok := e[name]
	return v.InexactFloat64(), ok
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

func TestFormulaErrorsNameTheColumn(t *testing.T) {
	tests := []struct{ src, want string }{
		{"3*dlay", `unknown name "dlay" at column 3`},
		{"", "empty formula"},
		{"1 +", `unexpected "end of formula" at column 4`},
		{"(1 + 2", `expected ) but found "end of formula" at column 7`},
		{"foo(1)", `unknown function "foo" at column 1`},
		{"1 / 0", "division by zero at column 3"},
		{"2 ^ 0.5", "the exponent must be a whole number at column 3"},
		{"2 ^ 5000", "exponent 5000 is out of range (at most 1000) at column 3"},
		{"1 $ 2", `unexpected character '$' at column 3`},
		{"1 < 2 < 3", "comparisons cannot be chained at column 7"},
		{"rest + 1", `"rest" can only stand alone as a probability at column 1`},
		{"min()", "min takes one or more arguments at column 1"},
		{"if(1, 2)", "if takes three arguments: condition, value if true, value if false at column 1"},
		{"1.2.3", `bad number "1.2.3" at column 1`},
	}
	for _, tt := range tests {
		t.Run(tt.src, func(t *testing.T) {
			f, err := ParseFormula(tt.src)
			if err == nil {
				_, err = f.Eval(MapEnv{})
			}
			require.Error(t, err)
			assert.Equal(t, tt.want, err.Error())
		})
	}
}

func TestRenameVariable(t *testing.T) {
	tests := []struct{ src, old, new, want string }{
		{"rate * days + rate", "rate", "day_rate", "day_rate * days + day_rate"},
		{"rates + rate", "rate", "r", "rates + r"},
		{"max(max, 2)", "max", "top", "max(top, 2)"}, // a function name is not the variable
		{"1 +", "x", "y", "1 +"},                     // unparsable text is returned as is
	}
	for _, tt := range tests {
		assert.Equal(t, tt.want, RenameVariable(tt.src, tt.old, tt.new), tt.src)
	}
	assert.True(t, UsesName("a + b", "b"))
	assert.False(t, UsesName("a + bb", "b"))
}

func TestDivisionKeepsSignificantDigits(t *testing.T) {
	// 1/7 to DivisionDigits significant digits, for very small and very large operands.
	for _, tt := range []struct{ a, b string }{{"1", "7"}, {"1e-20", "7"}, {"1e20", "7"}, {"22", "7e-15"}} {
		q := Divide(decimal.RequireFromString(tt.a), decimal.RequireFromString(tt.b))
		digits := len(q.Coefficient().String())
		assert.GreaterOrEqual(t, digits, DivisionDigits, "%s/%s = %s", tt.a, tt.b, q)
	}
}

func FuzzFormula(f *testing.F) {
	for _, s := range []string{"1+2*3", "if(a<b, a, b)", "30%", "-2^-3", "round(1/3, 4)", "max(1,2,3)", "((((", "1e999999", "2^1000/3"} {
		f.Add(s)
	}
	env := MapEnv{"a": decimal.NewFromInt(2), "b": decimal.NewFromInt(3)}
	f.Fuzz(func(t *testing.T, src string) {
		formula, err := ParseFormula(src)
		if err != nil {
			return
		}
		_, _ = formula.Eval(env)
		_, _ = formula.EvalFloat(floatEnv(env))
		_ = RenameVariable(src, "a", "c")
	})
}

func TestHugeResultsAreRefusedNotComputed(t *testing.T) {
	// 9500^1000 has about 4,000 digits: refused at once rather than computed.
	for _, src := range []string{"9500^1000", "(10^300)*(10^300)*(10^300)*(10^300)", "1e400 + 1e-400 + 1e-400*1e-400"} {
		f, err := ParseFormula(src)
		if err == nil {
			_, err = f.Eval(MapEnv{})
		}
		require.Error(t, err, src)
		assert.Contains(t, err.Error(), "more than 1,000 digits", src)
	}
	// Large but reasonable results are still exact: 2^100 · 3^50 checked against
	// math/big (an independent library).
	f, err := ParseFormula("2^100 * 3^50")
	require.NoError(t, err)
	v, err := f.Eval(MapEnv{})
	require.NoError(t, err)
	want := new(big.Int).Mul(new(big.Int).Exp(big.NewInt(2), big.NewInt(100), nil), new(big.Int).Exp(big.NewInt(3), big.NewInt(50), nil))
	assert.Equal(t, want.String(), v.String())
}
