// Package typeset is how bandwright writes numbers, units and the names of
// constants for people to read: in the HTML reports and summaries (and, where
// Unicode serves, the Markdown reports and the text of figures). The files
// programs read — CSV, JSON, TOML — keep the plain spellings ("-6.1215(12)e-06",
// "cm-1", "omega_e_x_e"); this package turns a plain spelling into the typeset
// one and never the other way, so the plain spelling stays the one that is
// written into data files, and every typeset form starts from it.
//
//   - Number: a true minus sign (U+2212) and exponents as ×10ⁿ:
//     "-6.1215(12)e-06" → "−6.1215(12)×10⁻⁶". The uncertainty stays in
//     parentheses on the last digits (constants.FormatParen writes it).
//   - Unit, UnitHTML: powers as superscripts and the usual symbols:
//     "cm-1" → "cm⁻¹", "J mol-1 K-1" → "J mol⁻¹ K⁻¹", "angstrom" → "Å".
//   - Name: the name of a constant as the trade writes it, with subscripts:
//     "omega_e_x_e" → ω<sub>e</sub>x<sub>e</sub>, "B_v1[12C16O]" →
//     B<sub>1</sub> (¹²C¹⁶O), "A:gamma_v0[14N16O]" → A: γ<sub>0</sub> (…),
//     "Y10" → Y<sub>10</sub>. The symbols come from one table (symbols, whole).
//   - Species: mass numbers as superscripts: "12C16O" → ¹²C¹⁶O.
//
// Every function escapes what it is given: the HTML ones return
// template.HTML that holds no markup but the sub and sup elements they add.
package typeset

import (
	"regexp"
	"strings"
)

// minus is the true minus sign.
const minus = "\u2212"

var superDigits = map[rune]rune{
	'0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹', '-': '⁻', '+': '⁺', '−': '⁻',
}

// Super writes an integer (with an optional sign) in superscript digits;
// ok is false when s holds anything else.
func Super(s string) (string, bool) {
	if s == "" {
		return "", false
	}
	var b strings.Builder
	for _, r := range s {
		sr, ok := superDigits[r]
		if !ok {
			return "", false
		}
		b.WriteRune(sr)
	}
	return b.String(), true
}

// Number rewrites a number in its plain spelling — as strconv or
// constants.FormatParen write it: "2169.81(3)", "-6.1215(12)e-06",
// "2.76e+03", "-0.5" — with a true minus and the exponent as ×10ⁿ. Text
// that is not such a number is returned unchanged.
func Number(s string) string {
	mant, exp, ok := splitNumber(s)
	if !ok {
		return s
	}
	if strings.HasPrefix(mant, "-") {
		mant = minus + mant[1:]
	} else if strings.HasPrefix(mant, "+") {
		mant = mant[1:]
	}
	if exp == "" {
		return mant
	}
	e := strings.TrimLeft(strings.TrimPrefix(exp, "+"), "0")
	neg := strings.HasPrefix(e, "-")
	if neg {
		e = strings.TrimLeft(e[1:], "0")
	}
	if e == "" {
		return mant
	}
	if neg {
		e = "-" + e
	}
	sup, _ := Super(e)
	return mant + "×10" + sup
}

// plainNumber is a number in its plain spelling: sign, digits, an optional
// (σ) and an optional exponent.
var plainNumber = regexp.MustCompile(`^([-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:\([0-9]+\))?)(?:[eE]([-+]?[0-9]+))?$`)

// splitNumber splits a plain number into its mantissa (with sign and any
// "(σ)") and its exponent after e/E; ok is false for anything else.
func splitNumber(s string) (mant, exp string, ok bool) {
	m := plainNumber.FindStringSubmatch(s)
	if m == nil {
		return "", "", false
	}
	return m[1], m[2], true
}
