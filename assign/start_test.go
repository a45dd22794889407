package assign_test

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/fit/linelist"
	"bandwright/fit/species"
	"bandwright/internal/failure"
)

const coStart = `# rough constants
[[species]]
name = "12C16O"
omega_e = 2169.8
omega_e_x_e = 13.29
B_e = 1.9313
alpha_e = 0.0175
D_e = 6.1e-6
abundance = 1.0     # optional

[[species]]
name = "13C16O"
abundance = 0.011
`

func TestReadStart(t *testing.T) {
	st, err := assign.ReadStart(strings.NewReader(coStart), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	if len(st.Species) != 2 || st.Species[1].ScaledFrom != "12C16O" || st.Species[1].Abundance != 0.011 {
		t.Fatalf("%+v", st.Species)
	}
	E := func(i, v, J int) float64 {
		s := st.Species[i]
		return s.Constants.Energy(s.Index, v, J, nil)
	}
	// Band origin of 1-0 in the equilibrium notation: ωe − 2ωexe (common practice).
	if got, want := E(0, 1, 0)-E(0, 0, 0), 2169.8-2*13.29; math.Abs(got-want) > 1e-9 {
		t.Errorf("origin %v, want %v", got, want)
	}
	// B_v = Be − αe(v+½), and E(0,1) − E(0,0) = 2B_0 − 4D_0 (D_v = De here).
	if got, want := E(0, 0, 1)-E(0, 0, 0), 2*(1.9313-0.0175/2)-4*6.1e-6; math.Abs(got-want) > 1e-12 {
		t.Errorf("2B0: %v, want %v", got, want)
	}
	// Mass scaling to 13C16O: B_e ∝ 1/μ (Dunham, first order).
	c12, _ := species.Parse("12C16O")
	c13, _ := species.Parse("13C16O")
	rho2 := c12.ReducedMass() / c13.ReducedMass()
	b13 := (E(1, 0, 1) - E(1, 0, 0) + 4*6.1e-6*rho2*rho2) / 2
	if want := 1.9313*rho2 - 0.0175*math.Pow(rho2, 1.5)/2; math.Abs(b13-want) > 1e-9 {
		t.Errorf("B0(13C16O) = %v, want %v", b13, want)
	}
	// Natural abundance when none is given: IUPAC 12C × 16O (from the species table).
	st2, err := assign.ReadStart(strings.NewReader(strings.Replace(coStart, "abundance = 1.0", "", 1)), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	if want := c12.A.Abundance * c12.B.Abundance; st2.Species[0].Abundance != want || want < 0.98 {
		t.Errorf("natural abundance %v", st2.Species[0].Abundance)
	}
}

func TestReadStartErrors(t *testing.T) {
	cases := []struct{ name, in, want string }{
		{"unknown key", strings.Replace(coStart, "D_e = 6.1e-6", "D_e = 6.1e-6\nomega_ex_e = 13", 1), "s.toml:9: species.omega_ex_e: unknown key"},
		{"top key", "temperature = 3\n" + coStart, "s.toml:1: temperature: unknown key"},
		{"no B", strings.Replace(coStart, "B_e = 1.9313\n", "", 1), "s.toml:2: 12C16O: missing B_e (or B_0)"},
		{"B_0 with equilibrium constants", strings.Replace(coStart, "B_e = 1.9313\n", "B_0 = 1.9225\n", 1), "s.toml:2: 12C16O: B_0 and D_0 give the constants of v = 0 alone; leave out omega_e, omega_e_x_e, alpha_e, D_e"},
		{"D_0 alone", "[[species]]\nname = \"12C16O\"\nD_0 = 6.1e-6\n", "s.toml:1: 12C16O: D_0 without B_0"},
		{"unit", "unit = \"THz\"\n" + coStart, "s.toml:1: unit: unknown unit \"THz\": use cm-1, MHz or GHz"},
		{"species", strings.Replace(coStart, "12C16O", "12C16X", 1), "s.toml:3: species[1].name: unknown isotopologue"},
		{"negative B", strings.Replace(coStart, "B_e = 1.9313", "B_e = -1.9313", 1), "s.toml:6: 12C16O.B_e: must be > 0"},
		{"syntax", "[[species]\nname=1", "s.toml:2: expected end of table array name"},
		{"type", strings.Replace(coStart, "2169.8", "\"fast\"", 1), "omega_e"},
		{"twice", coStart + "\n[[species]]\nname = \"12C16O\"\n", "listed twice"},
		{"orphan", "[[species]]\nname = \"1H35Cl\"\n", "no constants, and no isotopologue of the same molecule"},
		{"none", "", "no [[species]] table"},
	}
	for _, c := range cases {
		_, err := assign.ReadStart(strings.NewReader(c.in), "s.toml")
		if err == nil || !strings.HasPrefix(err.Error(), "assign: ") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want %q", c.name, err, c.want)
		}
	}
}

// FuzzReadStart: ReadStart never panics; errors are *InputError naming the
// file; a success has species with finite energies.
func FuzzReadStart(f *testing.F) {
	f.Add([]byte(coStart))
	f.Add([]byte("[[species]]\nname = \"D35Cl\"\nomega_e = 2145\nomega_e_x_e = 27\nB_e = 5.4\nalpha_e = 0.11\nD_e = 1.4e-4\n"))
	f.Add([]byte("x = [1, {a = 2}]\n[[species]]\n"))
	// Deep nesting: dotted tables, dotted keys, inline tables, arrays.
	f.Add([]byte("[" + strings.Repeat("a.", 2000) + "z]\n"))
	f.Add([]byte(strings.Repeat("a.", 70) + "z = 1\n[[species]]\n"))
	f.Add([]byte("x = " + strings.Repeat("{a = ", 100) + "1" + strings.Repeat("}", 100) + "\n"))
	f.Add([]byte("x = " + strings.Repeat("[", 100) + strings.Repeat("]", 100) + "\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		st, err := assign.ReadStart(bytes.NewReader(data), "f.toml")
		if err != nil {
			var ie *assign.InputError
			if !errors.As(err, &ie) || len(ie.Problems) == 0 || ie.Problems[0].File != "f.toml" {
				t.Fatalf("error %T %v", err, err)
			}
			return
		}
		for _, s := range st.Species {
			e := s.Constants.Energy(s.Index, 1, 3, nil)
			if math.IsNaN(e) || math.IsInf(e, 0) || !(s.Abundance > 0) {
				t.Fatalf("species %s: E = %v, abundance %v", s.Label, e, s.Abundance)
			}
		}
	})
}

// TestStartBandsNeedConstants: a species given by B alone serves pure
// rotation in v = 0; any other band is refused with the start file's line and
// the constants it lacks.
func TestStartBandsNeedConstants(t *testing.T) {
	pl, err := assign.ReadPeaks(strings.NewReader("position\n2143.2\n2147.1\n"), "p.csv", linelist.Wavenumber)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		start string
		bands []linelist.Band
		want  string
	}{
		{"[[species]]\nname = \"12C16O\"\nB_e = 1.93\n", []linelist.Band{{VUp: 1, VLo: 0}},
			"assign: s.toml:1: 12C16O: band 1-0 needs omega_e, omega_e_x_e, alpha_e, D_e, which the start file does not give"},
		{"\n[[species]]\nname = \"12C16O\"\nB_0 = 1.92\n", []linelist.Band{{VUp: 0, VLo: 0}, {VUp: 1, VLo: 1}},
			"assign: s.toml:2: 12C16O: band 1-1 needs the equilibrium constants"},
	} {
		st, err := assign.ReadStart(strings.NewReader(tc.start), "s.toml")
		if err != nil {
			t.Fatal(err)
		}
		_, err = assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: tc.bands, Spectrum: assign.Rotation}, assign.Settings{})
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) || failure.ExitCode(err) != 1 {
			t.Errorf("got %v (exit %d), want %q (exit 1)", err, failure.ExitCode(err), tc.want)
		}
	}
}
