package thermo

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/species"
)

func mustParse(t *testing.T, label string) species.Isotopologue {
	t.Helper()
	iso, err := species.Parse(label)
	if err != nil {
		t.Fatal(err)
	}
	return iso
}

func mustSym(t *testing.T, s string) Symmetry {
	t.Helper()
	y, err := ParseSymmetry(s)
	if err != nil {
		t.Fatal(err)
	}
	return y
}

// TestNuclearSpinWeights checks the even-N and odd-N weights derived from the
// spin-statistics rules. Expected values are worked out by hand from the rules
// (common practice): a nucleus of spin I gives (2I+1)(I+1) symmetric and (2I+1)I
// antisymmetric spin functions; bosons pair symmetric rotational levels with
// symmetric spin functions, fermions with antisymmetric ones; in a Σg⁻ (and
// Σu⁺) state the even-N levels are antisymmetric, in Σg⁺ (and Σu⁻) symmetric.
// Spins: 14N I=1, 1H I=½, 16O I=0 (NUBASE2020, from memory).
func TestNuclearSpinWeights(t *testing.T) {
	cases := []struct {
		label, sym string
		lambda     int
		even, odd  float64 // line-intensity convention
		total      float64 // (2I_A+1)(2I_B+1)
	}{
		// The three cases of the issue: Σg⁻ state.
		{"14N14N", "g-", 0, 3, 6, 9}, // spin-1 boson: even a → (2I+1)I = 3, odd s → (2I+1)(I+1) = 6
		{"1H1H", "g-", 0, 3, 1, 4},   // spin-½ fermion: even a → (2I+1)(I+1) = 3, odd s → (2I+1)I = 1
		{"16O16O", "g-", 0, 0, 1, 1}, // spin-0 boson: even a → 0, odd s → 1 (the ground state of O2: odd N only)
		// Σg⁺: the familiar ground states of N2 and H2 (ortho/para 1:3).
		{"14N14N", "g+", 0, 6, 3, 9},
		{"1H1H", "g+", 0, 1, 3, 4},
		{"16O16O", "g+", 0, 1, 0, 1},
		// Σu⁺ behaves as Σg⁻, Σu⁻ as Σg⁺.
		{"1H1H", "u+", 0, 3, 1, 4},
		{"1H1H", "u-", 0, 1, 3, 4},
		// Λ > 0: one s and one a component per N, weight per component ((2I+1)²)/2.
		{"14N14N", "g", 1, 4.5, 4.5, 9},
		{"16O16O", "u", 2, 0.5, 0.5, 1},
		// Spin-3/2 fermion (35Cl): (2I+1)I = 6, (2I+1)(I+1) = 10, Σg⁺ even s → 6.
		{"35Cl35Cl", "g+", 0, 6, 10, 16},
		// Heteronuclear: (2I_A+1)(2I_B+1) for every N; 1H35Cl 2·4 = 8, 12C16O 1.
		{"1H35Cl", "+", 0, 8, 8, 8},
		{"12C16O", "", 0, 1, 1, 1},
		// Same element, different isotopes: no exchange symmetry; 14N15N 3·2 = 6.
		{"14N15N", "g+", 0, 6, 6, 6},
	}
	for _, tc := range cases {
		iso := mustParse(t, tc.label)
		y := mustSym(t, tc.sym)
		ev, od, err := NuclearSpinWeights(iso, tc.lambda, y, SpinLineIntensity)
		if err != nil {
			t.Fatalf("%s %s: %v", tc.label, tc.sym, err)
		}
		if !scalar.EqualWithinAbs(ev, tc.even, 1e-15) || !scalar.EqualWithinAbs(od, tc.odd, 1e-15) {
			t.Errorf("%s Λ=%d %s line-intensity: even %g odd %g, want %g %g", tc.label, tc.lambda, tc.sym, ev, od, tc.even, tc.odd)
		}
		te, to, err := NuclearSpinWeights(iso, tc.lambda, y, SpinThermochemistry)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbs(te, tc.even/tc.total, 1e-15) || !scalar.EqualWithinAbs(to, tc.odd/tc.total, 1e-15) {
			t.Errorf("%s %s thermochemistry: even %g odd %g, want %g %g", tc.label, tc.sym, te, to, tc.even/tc.total, tc.odd/tc.total)
		}
		// Every homonuclear Σ state shares the (2I+1)² spin states between even and odd N.
		if iso.Homonuclear() && !scalar.EqualWithinAbs(ev+od, tc.total, 1e-12) {
			t.Errorf("%s: even + odd = %g, want (2I+1)² = %g", tc.label, ev+od, tc.total)
		}
	}
}

func TestNuclearSpinWeightsNeedSymmetry(t *testing.T) {
	n2 := mustParse(t, "14N14N")
	if _, _, err := NuclearSpinWeights(n2, 0, Symmetry{}, SpinThermochemistry); err == nil {
		t.Error("homonuclear Σ state without g/u accepted")
	}
	if _, _, err := NuclearSpinWeights(n2, 0, Symmetry{Parity: 'g'}, SpinThermochemistry); err == nil {
		t.Error("homonuclear Σ state without ± accepted")
	}
	if _, _, err := NuclearSpinWeights(n2, 0, Symmetry{Parity: 'g', Reflection: '+'}, "full"); err == nil {
		t.Error("unknown convention accepted")
	}
	for _, bad := range []string{"x+", "g+-", "gu", "G+", "+g"} {
		if _, err := ParseSymmetry(bad); err == nil {
			t.Errorf("symmetry %q accepted", bad)
		}
	}
}

func TestElectronicDegeneracy(t *testing.T) {
	// g_e = (2S+1)(2 − δ_Λ0): ¹Σ 1, ³Σ 3, ²Π 4, ¹Δ 2 (common practice).
	for _, c := range []struct{ mult, lambda, want int }{{1, 0, 1}, {3, 0, 3}, {2, 1, 4}, {1, 2, 2}} {
		if g := ElectronicDegeneracy(c.mult, c.lambda); !scalar.EqualWithinAbs(g, float64(c.want), 0) {
			t.Errorf("g_e(%d, Λ=%d) = %g, want %d", c.mult, c.lambda, g, c.want)
		}
	}
}

func parseForExample(label string) (species.Isotopologue, error) { return species.Parse(label) }
