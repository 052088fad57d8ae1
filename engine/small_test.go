package engine

import (
	"math/rand/v2"
	"testing"

	"github.com/shopspring/decimal"
	"github.com/stretchr/testify/assert"
)

// The int64 fast path must agree with decimal.Decimal (an independent library)
// whenever it claims a result, and decline rather than overflow.
func TestSmallArithmeticAgreesWithDecimal(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 2))
	pick := func() decimal.Decimal {
		switch rng.IntN(4) {
		case 0:
			return decimal.New(rng.Int64N(2_000_000)-1_000_000, -rng.Int32N(6))
		case 1:
			return decimal.New(rng.Int64()-rng.Int64(), rng.Int32N(4)-8)
		case 2:
			return decimal.New(rng.Int64N(100), -2)
		}
		return decimal.New(rng.Int64N(1_000_000_000_000), rng.Int32N(5))
	}
	claimed := 0
	for i := 0; i < 20000; i++ {
		a, b := pick(), pick()
		sa, sb := smallOf(a), smallOf(b)
		if !sa.ok || !sb.ok {
			continue
		}
		if s := sa.add(sb); s.ok {
			claimed++
			assert.True(t, s.dec().Equal(a.Add(b)), "%s + %s", a, b)
		}
		if s := sa.mul(sb); s.ok {
			assert.True(t, s.dec().Equal(a.Mul(b)), "%s × %s", a, b)
		}
		if c, ok := sa.cmp(sb); ok {
			assert.Equal(t, a.Cmp(b), c, "%s vs %s", a, b)
		}
	}
	assert.Greater(t, claimed, 5000, "the fast path is used for ordinary values")
}
