package typeset

import (
	"html"
	"html/template"
	"regexp"
	"strings"
)

// symbols maps the plain spelling of a symbol in a constant's name to the
// trade's symbol. A name's parts are looked up here: the base ("omega",
// "B", "gamma") and every subscript ("alpha_gamma" → α with subscript γ).
// Latin letters (A, B, D, H, L, T, p, q, r, Y, U) stand for themselves.
var symbols = map[string]string{
	"omega": "ω", "alpha": "α", "beta": "β", "gamma": "γ", "lambda": "λ",
	"kappa": "κ", "nu": "ν", "Delta": "Δ", "delta": "δ", "mu": "μ",
}

// part is a symbol with its subscript and superscript (plain text).
type part struct{ sym, sub, sup string }

// whole are the names not made of one symbol and its subscripts, and the
// names with a word after them.
var whole = map[string][]part{
	"omega_e_x_e":        {{"ω", "e", ""}, {"x", "e", ""}},
	"omega_e_y_e":        {{"ω", "e", ""}, {"y", "e", ""}},
	"Delta_G":            {{"ΔG", "", ""}},
	"D_e_Kratzer":        {{"D", "e", ""}, {" (Kratzer)", "", ""}},
	"alpha_e_Pekeris":    {{"α", "e", ""}, {" (Pekeris)", "", ""}},
	"kappa_vs_reference": {{"κ", "ref", ""}},
}

var (
	// indexed: Dunham Y_kl and U_kl, breakdown δ_kl^X (BOBkl_X) and Δ_kl^X.
	indexed = regexp.MustCompile(`^(Y|U|BOB|Delta)([0-9])([0-9])(?:_([A-Za-z]+))?$`)
	// level: a constant of one vibrational level, "B_v1".
	level = regexp.MustCompile(`^(.+)_v([0-9]+)$`)
	// origin: a band origin, "nu0_1-0".
	origin = regexp.MustCompile(`^nu0_(.+)$`)
)

// Name writes the name of a constant — a parameter ID of constants.json or a
// derived constant's name, with an optional electronic-state prefix
// ("A:") and qualifier ("[12C16O]", "[file.csv]") — as the trade writes it,
// in HTML with sub and sup elements: ω<sub>e</sub>x<sub>e</sub>,
// B<sub>1</sub> (¹²C¹⁶O). A name it does not know is written as it is, its
// parts after the first "_" as subscripts.
func Name(id string) template.HTML {
	state, core, qual := splitName(id)
	var b strings.Builder
	if state != "" {
		b.WriteString(html.EscapeString(state) + ": ")
	}
	for _, p := range parts(core) {
		b.WriteString(html.EscapeString(p.sym))
		if p.sub != "" {
			b.WriteString("<sub>" + html.EscapeString(p.sub) + "</sub>")
		}
		if p.sup != "" {
			b.WriteString("<sup>" + html.EscapeString(p.sup) + "</sup>")
		}
	}
	if qual != "" {
		b.WriteString(" (" + string(Species(qual)) + ")")
	}
	return template.HTML(b.String())
}

// splitName splits "STATE:core[qual]" into its three parts.
func splitName(id string) (state, core, qual string) {
	core = id
	if i := strings.IndexByte(core, '['); i > 0 && strings.HasSuffix(core, "]") {
		core, qual = core[:i], core[i+1:len(core)-1]
	}
	if i := strings.IndexByte(core, ':'); i > 0 {
		state, core = core[:i], core[i+1:]
	}
	return state, core, qual
}

// parts typesets the core of a name.
func parts(core string) []part {
	if w, ok := whole[core]; ok {
		return w
	}
	if m := origin.FindStringSubmatch(core); m != nil {
		return []part{{"ν", "0", ""}, {"(" + strings.ReplaceAll(m[1], "-", "–") + ")", "", ""}}
	}
	if m := indexed.FindStringSubmatch(core); m != nil {
		sym := m[1]
		if sym == "BOB" {
			sym = "δ" // δ_kl^X, the breakdown parameter of the Dunham model
		} else if s, ok := symbols[sym]; ok {
			sym = s
		}
		return []part{{sym, m[2] + m[3], m[4]}}
	}
	lvl := ""
	if m := level.FindStringSubmatch(core); m != nil {
		core, lvl = m[1], m[2]
	}
	toks := strings.Split(core, "_")
	p := part{sym: symbol(toks[0])}
	var subs []string
	for _, t := range toks[1:] {
		subs = append(subs, symbol(t))
	}
	if lvl != "" {
		subs = append(subs, lvl)
	}
	p.sub = strings.Join(subs, ",")
	return []part{p}
}

func symbol(s string) string {
	if g, ok := symbols[s]; ok {
		return g
	}
	return s
}

// massNumber matches the mass number before an element symbol in an
// isotopologue label.
var massNumber = regexp.MustCompile(`([0-9]+)([A-Z][a-z]?)`)

// Species writes an isotopologue label with its mass numbers as superscripts
// ("12C16O" → ¹²C¹⁶O); other text is written as it is, escaped.
func Species(label string) template.HTML {
	return template.HTML(html.EscapeString(SpeciesText(label)))
}

// SpeciesText is Species in plain Unicode (superscript digits), for figures.
func SpeciesText(label string) string {
	if !isLabel(label) {
		return label
	}
	return massNumber.ReplaceAllStringFunc(label, func(m string) string {
		sm := massNumber.FindStringSubmatch(m)
		sup, _ := Super(sm[1])
		return sup + sm[2]
	})
}

// isLabel reports whether s looks like an isotopologue label: mass numbers
// and element symbols only ("12C16O", "1H35Cl"), at least one of each.
var labelRE = regexp.MustCompile(`^(?:[0-9]+[A-Z][a-z]?[0-9]?)+$`)

func isLabel(s string) bool { return labelRE.MatchString(s) }
