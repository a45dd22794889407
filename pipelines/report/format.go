package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/internal/typeset"
)

// Number formatting. Nothing non-finite is ever printed: NaN and ±Inf become
// a dash. Every number of the report is typeset (typeset.Number: a true
// minus, exponents as ×10ⁿ) in both formats; the files keep the plain
// spellings.

const dash = "—"

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// num formats x with prec significant digits (%g style).
func num(x float64, prec int) string {
	if !finite(x) {
		return dash
	}
	return typeset.Number(strconv.FormatFloat(x, 'g', prec, 64))
}

// fixed formats x with dec decimals.
func fixed(x float64, dec int) string {
	if !finite(x) {
		return dash
	}
	s := strconv.FormatFloat(x, 'f', dec, 64)
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		s = s[1:]
	}
	return typeset.Number(s)
}

// paren formats value(σ) in the parenthetical notation (constants.FormatParen);
// a value without a finite positive σ is written alone.
func paren(v, s float64) string {
	if !finite(v) {
		return dash
	}
	if !finite(s) || s <= 0 {
		return typeset.Number(strconv.FormatFloat(v, 'g', 10, 64))
	}
	return typeset.Number(constants.FormatParen(v, s))
}

// Text helpers.

// orDefault returns s, or def when s is empty.
func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

func sprintf(format string, a ...any) string { return fmt.Sprintf(format, a...) }

// unitName writes a unit of the files for reading (typeset.Unit: cm⁻¹, Å,
// J mol⁻¹ K⁻¹); "" is the default unit, that of line lists that give none.
func unitName(u string) string {
	if u == "" {
		u = linelist.DefaultUnit.String()
	}
	return typeset.Unit(u)
}
