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

// TestNuclearSpinWeights: the line-intensity convention keeps the weights of
// the spin-statistics rule (tested in fit/species), the thermochemistry
// convention divides them by (2I_A+1)(2I_B+1): 16O2 X³Σg⁻ 0 and 1 of 1 spin
// state, 14N2 Σg⁺ 6 and 3 of 9, 1H35Cl 8 of 8 (spins from NUBASE2020, from
// memory; weights worked out by hand from the rule, common practice).
func TestNuclearSpinWeights(t *testing.T) {
	for _, tc := range []struct {
		label, sym string
		lambda     int
		even, odd  float64 // line-intensity convention
		total      float64 // (2I_A+1)(2I_B+1)
	}{
		{"16O16O", "g-", 0, 0, 1, 1},
		{"14N14N", "g+", 0, 6, 3, 9},
		{"14N14N", "g", 1, 4.5, 4.5, 9},
		{"1H1H", "g+", 0, 1, 3, 4},
		{"1H35Cl", "+", 0, 8, 8, 8},
	} {
		iso := mustParse(t, tc.label)
		y, err := species.ParseStateSymmetry(tc.sym)
		if err != nil {
			t.Fatal(err)
		}
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
	}
}

func TestNuclearSpinWeightsNeedSymmetry(t *testing.T) {
	n2 := mustParse(t, "14N14N")
	if _, _, err := NuclearSpinWeights(n2, 0, species.StateSymmetry{}, SpinThermochemistry); err == nil {
		t.Error("homonuclear Σ state without g/u accepted")
	}
	if _, _, err := NuclearSpinWeights(n2, 0, species.StateSymmetry{Parity: 'g'}, SpinThermochemistry); err == nil {
		t.Error("homonuclear Σ state without ± accepted")
	}
	if _, _, err := NuclearSpinWeights(n2, 0, species.StateSymmetry{Parity: 'g', Reflection: '+'}, "full"); err == nil {
		t.Error("unknown convention accepted")
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
