package constants

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// FormatParen writes value ± sigma in the parenthetical notation of the trade:
// 1.922529(3) means 1.922529 ± 0.000003. The uncertainty is given to two
// significant digits when its leading digit is 1 or 2 and to one otherwise
// (common practice), and the value is rounded to the same decimal place. Very
// large (≥ 10⁸, beyond line frequencies in MHz) or small (< 10⁻³) numbers use
// an exponent: 6.1215(12)e-06. A zero or non-finite
// σ prints the value alone (shortest exact form).
func FormatParen(value, sigma float64) string {
	if math.IsNaN(value) || math.IsInf(value, 0) {
		return strconv.FormatFloat(value, 'g', -1, 64)
	}
	if !(sigma > 0) || math.IsInf(sigma, 0) {
		return strconv.FormatFloat(value, 'g', -1, 64)
	}
	exp := 0
	av := math.Max(math.Abs(value), sigma)
	if av != 0 && (av >= 1e8 || av < 1e-3) {
		exp = int(math.Floor(math.Log10(av)))
	}
	scale := math.Pow(10, float64(exp))
	v, s := value/scale, sigma/scale
	// Decimal place of the last digit of the uncertainty.
	lead := math.Floor(math.Log10(s))
	nd := 1.0
	if s/math.Pow(10, lead) < 2.95 {
		nd = 2
	}
	place := int(lead - nd + 1) // power of ten of the last digit
	decimals := max(0, -place)
	unitsLast := s / math.Pow(10, float64(place))
	sd := int(math.Round(unitsLast))
	if sd >= 100 && decimals > 0 {
		sd = int(math.Round(unitsLast / 10))
		decimals--
		place++
	}
	vs := strconv.FormatFloat(v, 'f', decimals, 64)
	var out string
	if place > 0 {
		// Uncertainty larger than 1 in the integer digits: write it in full.
		out = fmt.Sprintf("%s(%d)", unsignZero(strconv.FormatFloat(math.Round(v/math.Pow(10, float64(place)))*math.Pow(10, float64(place)), 'f', 0, 64)), sd*int(math.Pow(10, float64(place))))
	} else {
		out = fmt.Sprintf("%s(%d)", unsignZero(vs), sd)
	}
	if exp != 0 {
		out += "e" + fmt.Sprintf("%+03d", exp)
	}
	return out
}

// unsignZero drops the minus sign of a number written as zero ("-0", "-0.000").
func unsignZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		return s[1:]
	}
	return s
}

// FormatRounded writes a constant rounded by sequential rounding (Le Roy
// 1998) at rounding unit unit (a power of ten in the unit the value is
// written in): the value with every digit down to the rounding unit — the
// digits rounding keeps beyond those σ alone would justify, needed to
// reproduce the data — and σ in parentheses in units of that last digit:
// FormatRounded(1.92252933, 3e-7, 1e-8) = "1.92252933(30)". Exponents are
// used as FormatParen uses them. A unit that is not a finite positive number
// falls back on FormatParen.
func FormatRounded(value, sigma, unit float64) string {
	if !(unit > 0) || math.IsInf(unit, 0) || math.IsNaN(value) || math.IsInf(value, 0) {
		return FormatParen(value, sigma)
	}
	exp := 0
	av := math.Abs(value)
	if s := sigma; s > 0 && !math.IsInf(s, 0) {
		av = math.Max(av, s)
	}
	if av != 0 && (av >= 1e8 || av < 1e-3) {
		exp = int(math.Floor(math.Log10(av)))
	}
	scale := math.Pow(10, float64(exp))
	place := int(math.Round(math.Log10(unit / scale)))
	decimals := max(0, -place)
	step := math.Pow(10, float64(place))
	v := math.Round(value/scale/step) * step
	out := unsignZero(strconv.FormatFloat(v, 'f', decimals, 64))
	if sigma > 0 && !math.IsInf(sigma, 0) {
		out += fmt.Sprintf("(%d)", int64(math.Round(sigma/scale/step)))
	}
	if exp != 0 {
		out += "e" + fmt.Sprintf("%+03d", exp)
	}
	return out
}
