package engine

import (
	"strconv"
	"strings"

	"github.com/shopspring/decimal"
)

// Caution is shown wherever a decision may touch health, safety or structures.
const Caution = "A decision aid only; where health, safety or structures are involved, " +
	"local codes, standards and licensed professional judgement prevail."

// FormatValue prints d rounded half away from zero to the given decimals, with a
// thousands separator, a true minus sign and the unit. Every renderer and the CLI
// print values through it, so one number never prints two ways.
func FormatValue(d decimal.Decimal, decimals int, unit string) string {
	return formatValue(d, smallOf(d), decimals, unit)
}

// formatValue is FormatValue given d's int64 form s, when it has one.
func formatValue(d decimal.Decimal, s small, decimals int, unit string) string {
	if str, ok := formatSmall(s, decimals, unit); ok {
		return str
	}
	decimals = max(decimals, 0)
	str := formatNumberDecimal(d, decimals)
	if unit == "" {
		return str
	}
	return str + " " + unit
}

// FormatNumber is FormatValue without the unit.
func FormatNumber(d decimal.Decimal, decimals int) string {
	return FormatValue(d, decimals, "")
}

// formatSmall is FormatValue of s; ok is false when s is not set or the
// int64 path cannot print it (then the decimal must).
func formatSmall(s small, decimals int, unit string) (string, bool) {
	var buf [64]byte
	b, ok := appendSmall(buf[:0], s, decimals, unit)
	if !ok {
		return "", false
	}
	return string(b), true
}

// appendSmall appends FormatValue of s to b when the int64 path can print it.
func appendSmall(b []byte, s small, decimals int, unit string) ([]byte, bool) {
	decimals = max(decimals, 0)
	out, ok := appendNumberFast(b, s, decimals)
	if !ok {
		return b, false
	}
	if unit != "" {
		out = append(append(out, ' '), unit...)
	}
	return out, true
}

// appendValue appends formatValue(d, s, decimals, unit) to b.
func appendValue(b []byte, d decimal.Decimal, s small, decimals int, unit string) []byte {
	if out, ok := appendSmall(b, s, decimals, unit); ok {
		return out
	}
	return append(b, formatValue(d, s, decimals, unit)...)
}

// formatNumberDecimal is FormatNumber done entirely with decimal.Decimal; it
// serves the values too large for the int64 path.
func formatNumberDecimal(d decimal.Decimal, decimals int) string {
	s := d.StringFixed(int32(decimals))
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	intPart, frac := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		intPart, frac = s[:i], s[i:]
	}
	var b strings.Builder
	for i, c := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	out := b.String() + frac
	if neg && strings.Trim(out, "0.,") != "" {
		out = "−" + out
	}
	return out
}

// FormatProbability prints a probability compactly (up to 4 decimals, no trailing zeros).
func FormatProbability(d decimal.Decimal) string {
	return formatProbability(d, smallOf(d))
}

// formatProbability is FormatProbability given d's int64 form s, when it has one.
func formatProbability(d decimal.Decimal, s small) string {
	var buf [40]byte
	return string(appendProbability(buf[:0], d, s))
}

// appendProbability appends formatProbability(d, s) to b.
func appendProbability(b []byte, d decimal.Decimal, s small) []byte {
	const places = 4
	if mag, neg, ok := roundSmall(s, places); ok {
		if neg {
			b = append(b, '-')
		}
		return appendFixed(b, mag, places, false, true)
	}
	return append(b, d.Round(places).String()...)
}

// roundSmall rounds s half away from zero to the given decimals when it is
// set (s.ok) and the rounded coefficient (at exponent
// -decimals) fits in a uint64. It gives the magnitude and whether the rounded
// value is below zero; a value that rounds to zero is never negative. It
// matches decimal.Decimal's Round digit for digit, which truncates to one
// extra digit and rounds that digit half away from zero.
func roundSmall(s small, decimals int) (mag uint64, neg bool, ok bool) {
	if !s.ok {
		return 0, false, false
	}
	c, e := s.c, int64(s.e)
	neg = c < 0
	m := absU(c)
	switch shift := e + int64(decimals); {
	case m == 0:
	case shift >= 0: // exact: append shift zeros
		for ; shift > 0; shift-- {
			if m > (1<<64-1)/10 {
				return 0, false, false
			}
			m *= 10
		}
	case -shift > 19: // every digit lies beyond the last kept one
		m = 0
	default:
		drop := -shift // ≥ 1 digits to drop; the last of them decides
		if drop > 1 {
			m /= uint64(pow10[drop-1])
		}
		last := m % 10
		m /= 10
		if last >= 5 {
			m++
		}
	}
	return m, neg && m != 0, true
}

// appendNumberFast appends FormatNumber of s when the int64 path applies.
func appendNumberFast(b []byte, s small, decimals int) ([]byte, bool) {
	if decimals > 18 {
		return b, false
	}
	mag, neg, ok := roundSmall(s, decimals)
	if !ok {
		return b, false
	}
	if neg {
		b = append(b, "−"...)
	}
	return appendFixed(b, mag, decimals, true, false), true
}

// appendFixed writes mag × 10^-decimals: the integer part (at least "0"),
// optionally in groups of three, then the fraction, optionally without its
// trailing zeros.
func appendFixed(b []byte, mag uint64, decimals int, group, trim bool) []byte {
	var dig [24]byte
	digits := strconv.AppendUint(dig[:0], mag, 10)
	var intPart, frac []byte
	if len(digits) > decimals {
		intPart, frac = digits[:len(digits)-decimals], digits[len(digits)-decimals:]
	} else {
		intPart = digits[:0:0]
		intPart = append(intPart, '0')
		var pad [24]byte
		frac = append(pad[:0], "000000000000000000000000"[:decimals-len(digits)]...)
		frac = append(frac, digits...)
	}
	for i, c := range intPart {
		if group && i > 0 && (len(intPart)-i)%3 == 0 {
			b = append(b, ',')
		}
		b = append(b, c)
	}
	if trim {
		for len(frac) > 0 && frac[len(frac)-1] == '0' {
			frac = frac[:len(frac)-1]
		}
	}
	if len(frac) > 0 {
		b = append(append(b, '.'), frac...)
	}
	return b
}
