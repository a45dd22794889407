package states

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/species"
)

const o2States = `
species = "16O16O"
dissociation_energy = 41260.0     # D0 in cm-1, optional
[[state]]
label = "X"                       # free text
term_energy = 0.0                 # cm-1
spin_multiplicity = 3             # 2S+1
lambda = 0                        # |Λ|: 0 Σ, 1 Π, 2 Δ
symmetry = "g-"
[[state]]
label = "a"
term_energy = 7918.1
spin_multiplicity = 1
lambda = 2
symmetry = "g"
constants = "a-state.json"
`

func TestRead(t *testing.T) {
	c, err := Read(strings.NewReader(o2States), "o2.toml")
	if err != nil {
		t.Fatal(err)
	}
	if c.Species != "16O16O" || !scalar.EqualWithinAbs(c.DissociationEnergy, 41260, 0) || len(c.States) != 2 {
		t.Fatalf("states %+v", c)
	}
	x, a := c.States[0], c.States[1]
	if x.Label != "X" || x.Multiplicity != 3 || x.Lambda != 0 || x.Symmetry != (species.StateSymmetry{Parity: 'g', Reflection: '-'}) || x.Constants != "" {
		t.Errorf("X: %+v", x)
	}
	if a.Label != "a" || !scalar.EqualWithinAbs(a.TermEnergy, 7918.1, 0) || a.Lambda != 2 || a.Symmetry != (species.StateSymmetry{Parity: 'g'}) || a.Constants != "a-state.json" {
		t.Errorf("a: %+v", a)
	}
	if err := c.Check(mustParse(t, "16O16O")); err != nil {
		t.Error(err)
	}
	if err := c.Check(mustParse(t, "16O18O")); err == nil || !strings.Contains(err.Error(), "species") {
		t.Errorf("species mismatch: %v", err)
	}
}

// TestReadStatesErrors: every bad electronic-states file is an error that
// names the file and the field.
func TestReadStatesErrors(t *testing.T) {
	state := func(extra string) string {
		return "[[state]]\nlabel = \"X\"\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\n" + extra
	}
	cases := []struct{ text, field string }{
		{state("colour = \"blue\"\n"), "state.colour"},
		{"speciess = \"12C16O\"\n" + state(""), "speciess"},
		{state("symmetry = \"x+\"\n"), "symmetry"},
		{state("symmetry = \"g+-\"\n"), "symmetry"},
		{"[[state]]\nspin_multiplicity = 1\nlambda = 0\n", "term_energy"},
		{"[[state]]\nterm_energy = 0.0\nlambda = 0\n", "spin_multiplicity"},
		{"[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\n", "lambda"},
		{state("") + "[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\n", "term_energy"},
		{"[[state]]\nterm_energy = 100.0\nspin_multiplicity = 1\nlambda = 0\n", "term_energy"},
		{"[[state]]\nterm_energy = -1.0\nspin_multiplicity = 1\nlambda = 0\n", "term_energy"},
		{"[[state]]\nterm_energy = nan\nspin_multiplicity = 1\nlambda = 0\n", "term_energy"},
		{"[[state]]\nterm_energy = 0.0\nspin_multiplicity = 0\nlambda = 0\n", "spin_multiplicity"},
		{"[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = -1\n", "lambda"},
		{"[[state]]\nterm_energy = 0.0\nspin_multiplicity = 2\nlambda = 1\nsymmetry = \"g+\"\n", "symmetry"},
		{state("constants = \"x.json\"\n"), "constants"},
		{"dissociation_energy = -5.0\n" + state(""), "dissociation_energy"},
		{"species = \"12C16\"\n" + state(""), "species"},
		{"species = \"12C16O\"\n", "state"},
		{"[[state]]\nterm_energy = 0.0\nspin_multiplicity = \"three\"\nlambda = 0\n", "spin_multiplicity"},
		{"[[state]\n", "states.toml:2: "},
	}
	for _, tc := range cases {
		_, err := Read(strings.NewReader(tc.text), "states.toml")
		if err == nil {
			t.Errorf("accepted:\n%s", tc.text)
			continue
		}
		msg := err.Error()
		if !strings.HasPrefix(msg, "states: states.toml") || !strings.Contains(msg, tc.field) {
			t.Errorf("error %q does not name the file and %q", msg, tc.field)
		}
	}
	// Lines: the message names the line of the key, and a decimal comma gets a hint.
	for _, tc := range []struct{ text, want string }{
		{"# O2\n\n[[state]]\nlabel = \"X\"\nterm_energy = 0.0\nspin_multiplicity = 3\nlambda = 11\n", "states: states.toml:7: state 1 (X): lambda: 11 must be within 0…10"},
		{"[[state]]\nterm_energy = 0.0\nlambda = 0\n", "states: states.toml:1: state 1: spin_multiplicity: missing"},
		{"dissociation_energy = 41260,5\n" + state(""), "states.toml:1: "},
		{"dissociation_energy = 41260,5\n" + state(""), "(decimal comma?"},
		{state("") + "[[state]]\nlabel = \"a\"\nterm_energy = 7918.1\nspin_multiplicity = 1\nlambda = 2\ncolour = 1\n", "states.toml:11: unknown key \"state.colour\""},
		{"[[state]]\nlabel = \"X\xff\"\n", "states.toml:2: state.label: invalid UTF-8"},
	} {
		_, err := Read(strings.NewReader(tc.text), "states.toml")
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: %v, want %q", tc.text, err, tc.want)
		}
	}
	// Symmetry checks against the molecule.
	for _, tc := range []struct{ label, text string }{
		{"14N14N", state("")},                                                           // homonuclear: g/u and ± needed
		{"14N14N", state("symmetry = \"g\"\n")},                                         // homonuclear Σ: ± needed
		{"1H35Cl", state("symmetry = \"g+\"\n")},                                        // two elements: no g/u
		{"14N14N", "[[state]]\nterm_energy = 0.0\nspin_multiplicity = 2\nlambda = 1\n"}, // homonuclear Π: g or u needed
	} {
		c, err := Read(strings.NewReader(tc.text), "states.toml")
		if err != nil {
			t.Fatal(err)
		}
		if err := c.Check(mustParse(t, tc.label)); err == nil || !strings.Contains(err.Error(), "states.toml") || !strings.Contains(err.Error(), "symmetry") {
			t.Errorf("%s: %v", tc.label, err)
		}
	}
}

// TestReadAnharmonicity: omega_e_x_e and its σ are read with omega_e (OH
// X²Π: ω_e = 3737.76, ω_e x_e = 84.88 cm⁻¹; Huber & Herzberg 1979, from
// memory), and every misuse is an error naming the file, the line, the state
// and the key.
func TestReadAnharmonicity(t *testing.T) {
	state := func(extra string) string {
		return "[[state]]\nlabel = \"X\"\nterm_energy = 0.0\nspin_multiplicity = 2\nlambda = 1\n" + extra
	}
	c, err := Read(strings.NewReader(state("omega_e = 3737.76\nomega_e_sigma = 1.0\nomega_e_x_e = 84.88\nomega_e_x_e_sigma = 0.5\n")), "oh.toml")
	if err != nil {
		t.Fatal(err)
	}
	if x := c.States[0]; x.OmegaEXE != 84.88 || x.OmegaEXESigma != 0.5 || x.OmegaE != 3737.76 {
		t.Errorf("X: %+v", x)
	}
	for _, tc := range []struct{ extra, want string }{
		{"omega_e_x_e = 84.88\n", "oh.toml:6: state 1 (X): omega_e_x_e: given without omega_e"},
		{"omega_e = 3737.76\nomega_e_x_e = 1868.88\n", "oh.toml:7: state 1 (X): omega_e_x_e: 1868.88 cm-1 must be a finite number > 0 and below omega_e/2 = 1868.88"},
		{"omega_e = 3737.76\nomega_e_x_e = -84.88\n", "oh.toml:7: state 1 (X): omega_e_x_e: -84.88 cm-1 must be"},
		{"omega_e = 3737.76\nomega_e_x_e = 0.0\n", "state 1 (X): omega_e_x_e: 0 cm-1 must be"},
		{"omega_e = 3737.76\nomega_e_x_e = nan\n", "state 1 (X): omega_e_x_e: NaN cm-1 must be"},
		{"omega_e = 3737.76\nomega_e_x_e = 84.88\nomega_e_x_e_sigma = -0.5\n", "oh.toml:8: state 1 (X): omega_e_x_e_sigma: -0.5 cm-1 must be a finite number ≥ 0 and below omega_e_x_e"},
		{"omega_e = 3737.76\nomega_e_x_e = 84.88\nomega_e_x_e_sigma = 90.0\n", "omega_e_x_e_sigma: 90 cm-1 must be"},
		{"omega_e = 3737.76\nomega_e_x_e_sigma = 0.5\n", "oh.toml:7: state 1 (X): omega_e_x_e_sigma: given without omega_e_x_e"},
	} {
		_, err := Read(strings.NewReader(state(tc.extra)), "oh.toml")
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%q: %v, want %q", tc.extra, err, tc.want)
		}
	}
}

// FuzzReadStates: the electronic-states reader never panics, and whatever it
// accepts is a valid electronic-states file (one ground state, finite
// non-negative energies).
func FuzzReadStates(f *testing.F) {
	f.Add(o2States)
	f.Add("[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\n")
	f.Add("species = \"14N2\"\n[[state]]\nterm_energy = 0\nspin_multiplicity = 1\nlambda = 0\nsymmetry = \"g+\"\n")
	f.Add("[[state]\n")
	f.Add("[[state]]\nterm_energy = 0.0\nspin_multiplicity = 2\nlambda = 1\nomega_e = 3737.76\nomega_e_x_e = 84.88\nomega_e_x_e_sigma = 0.5\n")
	f.Add("state = 5")
	f.Add("[" + strings.Repeat("state.", 2000) + "x]\n")
	f.Add("x = " + strings.Repeat("{a = ", 100) + "1" + strings.Repeat("}", 100) + "\n")
	f.Add("dissociation_energy = 41260,5\n[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\n")
	f.Add("species = \"12C16O\"\n[[state]]\nlabel = \"caf\xe9\"\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\n")
	f.Fuzz(func(t *testing.T, s string) {
		c, err := Read(strings.NewReader(s), "fuzz.toml")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "states: fuzz.toml") {
				t.Fatalf("error without file name: %v", err)
			}
			return
		}
		ground := 0
		for _, st := range c.States {
			if !(st.TermEnergy >= 0) || st.Multiplicity < 1 || st.Lambda < 0 {
				t.Fatalf("accepted bad state %+v", st)
			}
			if st.OmegaEXE < 0 || (st.OmegaEXE > 0 && !(st.OmegaEXE < st.OmegaE/2)) || st.OmegaEXESigma > st.OmegaEXE {
				t.Fatalf("accepted bad ω_e x_e %+v", st)
			}
			if st.TermEnergy == 0 {
				ground++
			}
		}
		if ground != 1 {
			t.Fatalf("accepted a file with %d ground states", ground)
		}
		for _, l := range []string{"12C16O", "14N14N", "16O16O"} {
			_ = c.Check(mustParse(t, l))
		}
	})
}

func mustParse(t testing.TB, label string) species.Isotopologue {
	t.Helper()
	iso, err := species.Parse(label)
	if err != nil {
		t.Fatal(err)
	}
	return iso
}
