package engine

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// wantNumber is what FormatNumber must print, worked out from decimal's own
// StringFixed (an independent library, rounding half away from zero): the
// integer digits grouped by three, a true minus sign unless the printed
// number is zero.
func wantNumber(d decimal.Decimal, decimals int) string {
	s := d.StringFixed(int32(decimals))
	neg := s[0] == '-'
	s = strings.TrimPrefix(s, "-")
	intPart, frac, _ := strings.Cut(s, ".")
	var groups []string
	for len(intPart) > 3 {
		groups = append([]string{intPart[len(intPart)-3:]}, groups...)
		intPart = intPart[:len(intPart)-3]
	}
	out := strings.Join(append([]string{intPart}, groups...), ",")
	if frac != "" {
		out += "." + frac
	}
	if neg && strings.ContainsAny(out, "123456789") {
		out = "−" + out
	}
	return out
}

func TestFormatNumberCases(t *testing.T) {
	tests := []struct {
		name     string
		in       string
		decimals int
		want     string // worked by hand: half away from zero, grouped by three
	}{
		{"zero", "0", 2, "0.00"},
		{"integer", "1234567", 0, "1,234,567"},
		{"rounds up", "1234.565", 2, "1,234.57"},
		{"rounds half away from zero below zero", "-1234.565", 2, "−1,234.57"},
		{"rounds down", "-0.444", 2, "−0.44"},
		{"tiny negative prints zero without a sign", "-0.004", 2, "0.00"},
		{"half a cent below zero", "-0.005", 2, "−0.01"},
		{"negative zero decimals", "-0.4", 0, "0"},
		{"negative half", "-0.5", 0, "−1"},
		{"padding", "0.05", 4, "0.0500"},
		{"exponent above zero", "12e3", 1, "12,000.0"},
		{"many decimals", "0.123456789012345678", 17, "0.12345678901234568"},
		{"huge", "123456789012345678901234567890.5", 0, "123,456,789,012,345,678,901,234,567,891"},
		{"negative decimals count as none", "2.5", -3, "3"},
		{"nines carry", "999999.995", 2, "1,000,000.00"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d, err := decimal.NewFromString(tt.in)
			require.NoError(t, err)
			assert.Equal(t, tt.want, FormatNumber(d, tt.decimals))
			assert.Equal(t, tt.want+" EUR", FormatValue(d, tt.decimals, "EUR"))
			assert.Equal(t, tt.want, formatNumberDecimal(d, max(tt.decimals, 0)))
		})
	}
	assert.Equal(t, "0.00", FormatNumber(decimal.Decimal{}, 2), "the zero Decimal")
	assert.Equal(t, "0", FormatProbability(decimal.Decimal{}), "the zero Decimal")
}

// randomDecimal draws values of every shape the formatter meets: ordinary
// money, long fractions, coefficients at and beyond the int64 range, zero
// with any exponent, and negatives of all of these.
func randomDecimal(rng *rand.Rand) decimal.Decimal {
	var c int64
	switch rng.IntN(6) {
	case 0:
		c = rng.Int64N(2_000_000)
	case 1:
		c = rng.Int64N(1_000_000_000_000_000_000) // up to 18 digits
	case 2:
		c = rng.Int64() // up to 19 digits, beyond the fast path
	case 3:
		c = 0
	case 4:
		c = int64(rng.IntN(20)) * 5 // ties
	default:
		c = rng.Int64N(1000)
	}
	if rng.IntN(2) == 0 {
		c = -c
	}
	d := decimal.New(c, rng.Int32N(50)-30)
	if rng.IntN(10) == 0 { // beyond int64 altogether
		d = d.Mul(decimal.New(rng.Int64(), 0))
	}
	if rng.IntN(10) == 0 { // a sixteen-digit quotient
		d = d.Div(decimal.NewFromInt(int64(rng.IntN(98) + 2)))
	}
	return d
}

func TestFormatAgreesWithDecimal(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	fast := 0
	for i := 0; i < 200_000; i++ {
		d := randomDecimal(rng)
		decimals := rng.IntN(9)
		if rng.IntN(20) == 0 {
			decimals = rng.IntN(25)
		}
		if _, _, ok := roundSmall(smallOf(d), decimals); ok {
			fast++
		}
		want := wantNumber(d, decimals)
		if !assert.Equal(t, want, FormatNumber(d, decimals), "%s to %d decimals", d, decimals) {
			return
		}
		if !assert.Equal(t, d.Round(4).String(), FormatProbability(d), "probability %s", d) {
			return
		}
	}
	assert.Greater(t, fast, 100_000, "the int64 path serves ordinary values")
}

func TestFormatExtremes(t *testing.T) {
	for _, c := range []int64{math.MaxInt64, math.MinInt64, math.MaxInt64 / 10, 999_999_999_999_999_999, -999_999_999_999_999_999, 1, -1} {
		for _, e := range []int32{-40, -20, -19, -18, -17, -5, -1, 0, 1, 5, 18, 19, 40} {
			d := decimal.New(c, e)
			for _, decimals := range []int{0, 1, 2, 4, 17, 18, 19, 30} {
				assert.Equal(t, wantNumber(d, decimals), FormatNumber(d, decimals), "%s to %d decimals", d, decimals)
			}
			assert.Equal(t, d.Round(4).String(), FormatProbability(d), "probability %s", d)
		}
	}
}

func BenchmarkFormatValue(b *testing.B) {
	vals := []decimal.Decimal{decimal.New(123456789, -2), decimal.New(-5, -1), decimal.NewFromInt(42), decimal.New(33333333333333333, -16)}
	for i := 0; b.Loop(); i++ {
		FormatValue(vals[i%len(vals)], 2, "EUR")
		FormatProbability(vals[i%len(vals)])
	}
}
