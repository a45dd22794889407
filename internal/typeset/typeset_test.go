package typeset

import (
	"testing"

	"bandwright/constants"
)

func TestNumber(t *testing.T) {
	for in, want := range map[string]string{
		"2169.81(3)":      "2169.81(3)",
		"-6.1215(12)e-06": "−6.1215(12)×10⁻⁶",
		"2.76e+03":        "2.76×10³",
		"1e-05":           "1×10⁻⁵",
		"-0.5":            "−0.5",
		"3e+00":           "3",
		"12":              "12",
		"—":               "—",
		"first":           "first",
		"1-0":             "1-0",
		"2.5(":            "2.5(",
		"e5":              "e5",
		"1.2e":            "1.2e",
		"12C16O":          "12C16O",
	} {
		if got := Number(in); got != want {
			t.Errorf("Number(%q) = %q, want %q", in, got, want)
		}
	}
	// What constants.FormatParen writes is typeset whole.
	if got := Number(constants.FormatParen(-6.1215e-6, 1.2e-9)); got != "−6.1215(12)×10⁻⁶" {
		t.Errorf("Number(FormatParen) = %q", got)
	}
}

func TestUnit(t *testing.T) {
	for in, want := range map[string]string{
		"cm-1":        "cm⁻¹",
		"J mol-1 K-1": "J mol⁻¹ K⁻¹",
		"kJ mol-1":    "kJ mol⁻¹",
		"angstrom":    "Å",
		"MHz":         "MHz",
		"cm-1 u^0.5":  "cm⁻¹ u^0.5",
		"cm-1 u^2":    "cm⁻¹ u²",
		"1":           "1",
		"":            "",
		"K":           "K",
	} {
		if got := Unit(in); got != want {
			t.Errorf("Unit(%q) = %q, want %q", in, got, want)
		}
	}
	if got := UnitHTML("cm-1 u^0.5"); got != "cm⁻¹ u<sup>0.5</sup>" {
		t.Errorf("UnitHTML = %q", got)
	}
	if got := UnitHTML("<b>"); got != "&lt;b&gt;" {
		t.Errorf("UnitHTML does not escape: %q", got)
	}
}

// The names of the trade (common practice: ω_e, ω_e x_e, B_e, α_e, the
// Dunham Y_kl, the open-shell A, γ, λ, p, q of a level).
func TestName(t *testing.T) {
	for in, want := range map[string]string{
		"omega_e":             "ω<sub>e</sub>",
		"omega_e_x_e":         "ω<sub>e</sub>x<sub>e</sub>",
		"omega_e_y_e[13C16O]": "ω<sub>e</sub>y<sub>e</sub> (¹³C¹⁶O)",
		"B_e":                 "B<sub>e</sub>",
		"alpha_e":             "α<sub>e</sub>",
		"D_e_Kratzer":         "D<sub>e</sub> (Kratzer)",
		"Y10":                 "Y<sub>10</sub>",
		"U01":                 "U<sub>01</sub>",
		"BOB01_C":             "δ<sub>01</sub><sup>C</sup>",
		"Delta01_C":           "Δ<sub>01</sub><sup>C</sup>",
		"B_v1[12C16O]":        "B<sub>1</sub> (¹²C¹⁶O)",
		"T_v0[12C16O]":        "T<sub>0</sub> (¹²C¹⁶O)",
		"A:gamma_v0[14N16O]":  "A: γ<sub>0</sub> (¹⁴N¹⁶O)",
		"X:A_D_v1[14N16O]":    "X: A<sub>D,1</sub> (¹⁴N¹⁶O)",
		"lambda_v0[16O16O]":   "λ<sub>0</sub> (¹⁶O¹⁶O)",
		"p_v0[14N16O]":        "p<sub>0</sub> (¹⁴N¹⁶O)",
		"alpha_gamma":         "α<sub>γ</sub>",
		"A_e":                 "A<sub>e</sub>",
		"nu0_1-0[12C16O]":     "ν<sub>0</sub>(1–0) (¹²C¹⁶O)",
		"kappa[cell <b>.csv]": "κ (cell &lt;b&gt;.csv)",
		"kappa_vs_reference":  "κ<sub>ref</sub>",
		"r_e":                 "r<sub>e</sub>",
		"Delta_G":             "ΔG",
		"B_avg":               "B<sub>avg</sub>",
		"<script>":            "&lt;script&gt;",
	} {
		if got := Name(in); string(got) != want {
			t.Errorf("Name(%q) = %q, want %q", in, got, want)
		}
	}
}

func TestSpecies(t *testing.T) {
	for in, want := range map[string]string{"12C16O": "¹²C¹⁶O", "1H35Cl": "¹H³⁵Cl", "X": "X", "<i>": "<i>"} {
		if got := SpeciesText(in); got != want {
			t.Errorf("SpeciesText(%q) = %q, want %q", in, got, want)
		}
	}
	if got := Species("<i>"); got != "&lt;i&gt;" {
		t.Errorf("Species does not escape: %q", got)
	}
}
