package engine

import (
	"math"
	"math/bits"

	"github.com/shopspring/decimal"
)

// small is an exact decimal c × 10^e whose coefficient fits in an int64. The
// roll-back works in it while it can, because decimal.Decimal allocates and
// rescales through math/big on every operation; any result that would not fit
// (overflow, or exponents too far apart) falls back to decimal.Decimal, so the
// answer is always exact.
type small struct {
	c  int64
	e  int32
	ok bool
}

var pow10 = func() [19]int64 {
	var t [19]int64
	t[0] = 1
	for i := 1; i < len(t); i++ {
		t[i] = t[i-1] * 10
	}
	return t
}()

func smallOf(d decimal.Decimal) small {
	if d.NumDigits() > 18 {
		return small{}
	}
	return small{c: d.CoefficientInt64(), e: d.Exponent(), ok: true}
}

func (s small) dec() decimal.Decimal { return decimal.New(s.c, s.e) }

func mul64(a, b int64) (int64, bool) {
	if a == 0 || b == 0 {
		return 0, true
	}
	neg := (a < 0) != (b < 0)
	ua, ub := absU(a), absU(b)
	hi, lo := bits.Mul64(ua, ub)
	if hi != 0 || lo > math.MaxInt64 {
		return 0, false
	}
	if neg {
		return -int64(lo), true
	}
	return int64(lo), true
}

func absU(a int64) uint64 {
	if a < 0 {
		return uint64(-a)
	}
	return uint64(a)
}

func add64(a, b int64) (int64, bool) {
	s := a + b
	if (a > 0 && b > 0 && s < 0) || (a < 0 && b < 0 && s >= 0) {
		return 0, false
	}
	return s, true
}

func (a small) mul(b small) small {
	if !a.ok || !b.ok {
		return small{}
	}
	c, ok := mul64(a.c, b.c)
	return small{c: c, e: a.e + b.e, ok: ok}
}

// align brings a and b to the smaller exponent.
func align(a, b small) (int64, int64, int32, bool) {
	if a.e == b.e {
		return a.c, b.c, a.e, true
	}
	if a.e < b.e {
		bc, ac, e, ok := align(b, a)
		return ac, bc, e, ok
	}
	d := a.e - b.e
	if d >= int32(len(pow10)) {
		if a.c == 0 {
			return 0, b.c, b.e, true
		}
		return 0, 0, 0, false
	}
	ac, ok := mul64(a.c, pow10[d])
	return ac, b.c, b.e, ok
}

func (a small) add(b small) small {
	if !a.ok || !b.ok {
		return small{}
	}
	if b.c == 0 {
		return a
	}
	if a.c == 0 {
		return b
	}
	ac, bc, e, ok := align(a, b)
	if !ok {
		return small{}
	}
	c, ok := add64(ac, bc)
	return small{c: c, e: e, ok: ok}
}

// cmp compares a and b; ok is false when they cannot be aligned in an int64.
func (a small) cmp(b small) (int, bool) {
	if !a.ok || !b.ok {
		return 0, false
	}
	ac, bc, _, ok := align(a, b)
	if !ok {
		return 0, false
	}
	switch {
	case ac < bc:
		return -1, true
	case ac > bc:
		return 1, true
	}
	return 0, true
}
