package typeset

import (
	"html"
	"html/template"
	"strings"
)

// unitSymbols are the unit names of the files that are written otherwise
// for reading.
var unitSymbols = map[string]string{"angstrom": "Å"}

// factor is one factor of a unit: its symbol and its power, as superscript
// digits (sup) or, when not an integer, as written (frac).
type factor struct{ base, sup, frac string }

// factors splits a unit of the files ("cm-1", "J mol-1 K-1", "cm-1 u^0.5")
// into its space-separated factors.
func factors(u string) []factor {
	var out []factor
	for _, f := range strings.Fields(u) {
		base, pow := f, ""
		if k := strings.IndexByte(f, '^'); k > 0 {
			base, pow = f[:k], f[k+1:]
		} else if k := strings.IndexAny(f, "-0123456789"); k > 0 {
			base, pow = f[:k], f[k:]
		}
		if s, ok := unitSymbols[base]; ok {
			base = s
		}
		x := factor{base: base}
		if pow != "" && pow != "1" {
			if sup, ok := Super(pow); ok {
				x.sup = sup
			} else {
				x.frac = pow
			}
		}
		out = append(out, x)
	}
	return out
}

// Unit writes a unit of the files ("cm-1", "J mol-1 K-1", "kJ mol-1",
// "angstrom", "cm-1 u^0.5") for reading: each space-separated factor with
// its integer power as superscript digits ("cm⁻¹"), ångström as Å; a power
// that is not an integer stays as "^0.5". "" stays "".
func Unit(u string) string {
	var parts []string
	for _, f := range factors(u) {
		s := f.base + f.sup
		if f.frac != "" {
			s += "^" + f.frac
		}
		parts = append(parts, s)
	}
	return strings.Join(parts, " ")
}

// UnitHTML is Unit for HTML, a power that is not an integer in a sup
// element.
func UnitHTML(u string) template.HTML {
	var parts []string
	for _, f := range factors(u) {
		s := html.EscapeString(f.base + f.sup)
		if f.frac != "" {
			s += "<sup>" + html.EscapeString(f.frac) + "</sup>"
		}
		parts = append(parts, s)
	}
	return template.HTML(strings.Join(parts, " "))
}
