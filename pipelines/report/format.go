package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
)

// Number formatting. Nothing non-finite is ever printed: NaN and ±Inf become
// a dash.

const dash = "—"

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// num formats x with prec significant digits (%g style).
func num(x float64, prec int) string {
	if !finite(x) {
		return dash
	}
	return strconv.FormatFloat(x, 'g', prec, 64)
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
	return s
}

// paren formats value(σ) in the parenthetical notation (constants.FormatParen);
// a value without a finite positive σ is written alone.
func paren(v, s float64) string {
	if !finite(v) {
		return dash
	}
	if !finite(s) || s <= 0 {
		return strconv.FormatFloat(v, 'g', 10, 64)
	}
	return constants.FormatParen(v, s)
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

// unitName writes a unit of the files for reading: the line-list units as
// linelist.Unit.Pretty writes them ("" is the default unit, that of line
// lists that give none), angstrom as Å, and cm-1 inside a compound unit
// ("cm-1 u^0.5") as cm⁻¹.
func unitName(u string) string {
	if u == "" {
		return linelist.DefaultUnit.Pretty()
	}
	if lu, err := linelist.ParseUnit(u); err == nil {
		return lu.Pretty()
	}
	if u == "angstrom" {
		return "Å"
	}
	return strings.ReplaceAll(u, linelist.Wavenumber.String(), linelist.Wavenumber.Pretty())
}
