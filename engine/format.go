package engine

import (
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
	s := FormatNumber(d, decimals)
	if unit == "" {
		return s
	}
	return s + " " + unit
}

// FormatNumber is FormatValue without the unit.
func FormatNumber(d decimal.Decimal, decimals int) string {
	if decimals < 0 {
		decimals = 0
	}
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
	return d.Round(4).String()
}
