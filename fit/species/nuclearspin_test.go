package species

import (
	"fmt"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

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
		even, odd  float64
		total      float64 // (2I_A+1)(2I_B+1)
	}{
		// Σg⁻ states.
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
		iso, err := Parse(tc.label)
		if err != nil {
			t.Fatal(err)
		}
		y, err := ParseStateSymmetry(tc.sym)
		if err != nil {
			t.Fatal(err)
		}
		ev, od, err := iso.NuclearSpinWeights(tc.lambda, y)
		if err != nil {
			t.Fatalf("%s %s: %v", tc.label, tc.sym, err)
		}
		if !scalar.EqualWithinAbs(ev, tc.even, 1e-15) || !scalar.EqualWithinAbs(od, tc.odd, 1e-15) {
			t.Errorf("%s Λ=%d %s: even %g odd %g, want %g %g", tc.label, tc.lambda, tc.sym, ev, od, tc.even, tc.odd)
		}
		if got := float64(iso.NuclearSpinStates()); got != tc.total {
			t.Errorf("%s: %g nuclear-spin states, want %g", tc.label, got, tc.total)
		}
		// Every homonuclear Σ state shares the (2I+1)² spin states between even and odd N.
		if iso.Homonuclear() && !scalar.EqualWithinAbs(ev+od, tc.total, 1e-12) {
			t.Errorf("%s: even + odd = %g, want (2I+1)² = %g", tc.label, ev+od, tc.total)
		}
	}
}

func TestNuclearSpinWeightsNeedSymmetry(t *testing.T) {
	n2, err := Parse("14N14N")
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := n2.NuclearSpinWeights(0, StateSymmetry{}); err == nil {
		t.Error("homonuclear Σ state without g/u accepted")
	}
	if _, _, err := n2.NuclearSpinWeights(0, StateSymmetry{Parity: 'g'}); err == nil {
		t.Error("homonuclear Σ state without ± accepted")
	}
	if _, _, err := n2.NuclearSpinWeights(1, StateSymmetry{}); err == nil {
		t.Error("homonuclear Π state without g/u accepted")
	}
	for _, bad := range []string{"x+", "g+-", "gu", "G+", "+g"} {
		if _, err := ParseStateSymmetry(bad); err == nil {
			t.Errorf("symmetry %q accepted", bad)
		}
	}
	for _, good := range []string{"g+", "g-", "u+", "u-", "g", "u", "+", "-", ""} {
		y, err := ParseStateSymmetry(good)
		if err != nil || y.String() != good {
			t.Errorf("symmetry %q: %v, %v", good, y, err)
		}
	}
	if y, err := ParseStateSymmetry("g−"); err != nil || y != (StateSymmetry{'g', '-'}) {
		t.Errorf("Unicode minus: %v, %v", y, err)
	}
}

// TestCheckStateSymmetry: the symmetry labels a molecule's states need
// (homonuclear: g/u, and ± for Σ) and may not have (two elements: no g/u).
func TestCheckStateSymmetry(t *testing.T) {
	for _, c := range []struct {
		label, sym string
		lambda     int
		ok         bool
	}{
		{"16O16O", "g-", 0, true},
		{"16O16O", "g", 1, true},
		{"16O16O", "", 0, false},
		{"16O16O", "g", 0, false},
		{"16O16O", "+", 1, false},
		{"16O18O", "g+", 0, true}, // one element: g/u may be given
		{"16O18O", "+", 0, true},
		{"12C16O", "+", 0, true},
		{"12C16O", "g+", 0, false},
	} {
		iso, err := Parse(c.label)
		if err != nil {
			t.Fatal(err)
		}
		y, err := ParseStateSymmetry(c.sym)
		if err != nil {
			t.Fatal(err)
		}
		if err := iso.CheckStateSymmetry(c.lambda, y); (err == nil) != c.ok {
			t.Errorf("%s Λ=%d %q: %v, want ok=%v", c.label, c.lambda, c.sym, err, c.ok)
		}
	}
}

func ExampleIsotopologue_NuclearSpinWeights() {
	o2, _ := Parse("16O16O")
	x, _ := ParseStateSymmetry("g-") // the ground state of O2, X³Σg⁻
	even, odd, _ := o2.NuclearSpinWeights(0, x)
	fmt.Println(even, odd)
	// Output: 0 1
}

// TestNuclearSpinWeightsByParity: the weights by total parity agree with the
// weights by N in every Σ state (parity (−1)^N in Σ⁺, −(−1)^N in Σ⁻), and in
// a Λ > 0 state the two parities share the spin states, their mean the
// per-component weight of NuclearSpinWeights (common practice).
func TestNuclearSpinWeightsByParity(t *testing.T) {
	for _, label := range []string{"14N14N", "1H1H", "16O16O", "35Cl35Cl", "1H35Cl", "14N15N"} {
		iso, err := Parse(label)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range []string{"g+", "g-", "u+", "u-"} {
			y, _ := ParseStateSymmetry(s)
			if !iso.SameElement() {
				y.Parity = 0
			}
			plus, minus, err := iso.NuclearSpinWeightsByParity(y)
			if err != nil {
				t.Fatal(err)
			}
			ev, od, err := iso.NuclearSpinWeights(0, y)
			if err != nil {
				t.Fatal(err)
			}
			wantEven, wantOdd := plus, minus // Σ⁺: even N has parity +
			if y.Reflection == '-' {
				wantEven, wantOdd = minus, plus
			}
			if ev != wantEven || od != wantOdd {
				t.Errorf("%s %s: by parity +%g −%g, by N even %g odd %g", label, s, plus, minus, ev, od)
			}
			y.Reflection = 0
			mean, _, err := iso.NuclearSpinWeights(1, y)
			if err != nil {
				t.Fatal(err)
			}
			if p2, m2, _ := iso.NuclearSpinWeightsByParity(y); (p2+m2)/2 != mean {
				t.Errorf("%s %s Λ>0: (%g + %g)/2, mean per component %g", label, s, p2, m2, mean)
			}
		}
	}
	o2, _ := Parse("16O16O")
	if p, m, _ := o2.NuclearSpinWeightsByParity(StateSymmetry{Parity: 'g'}); p != 1 || m != 0 {
		t.Errorf("16O2 g state: + %g, − %g; want 1 and 0 (a¹Δg: one Λ component per J)", p, m)
	}
	if _, _, err := o2.NuclearSpinWeightsByParity(StateSymmetry{}); err == nil {
		t.Error("homonuclear state without g/u accepted")
	}
}
