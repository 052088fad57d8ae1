package analysis

import (
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func vtDecs(ss ...string) []decimal.Decimal {
	out := make([]decimal.Decimal, len(ss))
	for i, s := range ss {
		out[i] = decimal.RequireFromString(s)
	}
	return out
}

// Eddy, "Probabilistic reasoning in clinical medicine: problems and opportunities",
// in Kahneman, Slovic & Tversky (eds.), Judgment under Uncertainty, 1982 (values from
// memory): 1 % prevalence, 80 % sensitivity, 9.6 % false positives → about 7.8 %
// after a positive result.
func TestBayesScreeningExample(t *testing.T) {
	prior := vtDecs("0.01", "0.99") // disease, no disease
	likelihood := [][]decimal.Decimal{
		vtDecs("0.8", "0.096"), // positive
		vtDecs("0.2", "0.904"), // negative
	}
	b, err := Bayes(prior, likelihood)
	require.NoError(t, err)
	assert.True(t, b.PResult[0].Equal(decimal.RequireFromString("0.10304")), "P(positive) = 0.008 + 0.09504, got %s", b.PResult[0])
	post := b.Posterior[0][0].InexactFloat64()
	assert.InDelta(t, 0.078, post, 0.0005)
	// Independent check by the closed form 0.8·0.01 / (0.8·0.01 + 0.096·0.99).
	assert.InDelta(t, 0.8*0.01/(0.8*0.01+0.096*0.99), post, 1e-15)
	for r := range b.Posterior {
		total := b.Posterior[r][0].Add(b.Posterior[r][1])
		assert.InDelta(t, 1, total.InexactFloat64(), 1e-25)
	}
}

func TestBayesRejectsBadTables(t *testing.T) {
	tests := []struct {
		name       string
		prior      []decimal.Decimal
		likelihood [][]decimal.Decimal
		want       string
	}{
		{"prior sum", vtDecs("0.5", "0.4"), [][]decimal.Decimal{vtDecs("1", "1")}, "prior probabilities add up to 0.9"},
		{"column sum", vtDecs("0.5", "0.5"), [][]decimal.Decimal{vtDecs("0.9", "0.2"), vtDecs("0.2", "0.8")}, "for state 1 the chances of the results add up to 1.1"},
		{"range", vtDecs("0.5", "0.5"), [][]decimal.Decimal{vtDecs("1.2", "0.2"), vtDecs("-0.2", "0.8")}, "outside 0 to 1"},
		{"shape", vtDecs("0.5", "0.5"), [][]decimal.Decimal{vtDecs("1")}, "1 likelihoods for 2 states"},
	}
	for _, tc := range tests {
		_, err := Bayes(tc.prior, tc.likelihood)
		require.Error(t, err, tc.name)
		assert.Contains(t, err.Error(), tc.want, tc.name)
	}
}

func TestProbabilityTextsAddUpToOne(t *testing.T) {
	third := decimal.NewFromInt(1).DivRound(decimal.NewFromInt(3), 28)
	texts := probabilityTexts([]decimal.Decimal{third, third, third}, 12)
	sum := decimal.Zero
	for _, s := range texts {
		sum = sum.Add(decimal.RequireFromString(s))
		assert.InDelta(t, 1.0/3, decimal.RequireFromString(s).InexactFloat64(), 1e-11)
	}
	assert.True(t, sum.Equal(one), "sum %s", sum)
}
