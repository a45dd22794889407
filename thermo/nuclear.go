package thermo

import (
	"fmt"

	"bandwright/fit/species"
)

// Nuclear-spin conventions.
const (
	// SpinThermochemistry divides the nuclear-spin degeneracy (2I_A+1)(2I_B+1)
	// out of Q: heteronuclear weights are 1, homonuclear weights are
	// g_ns(J)/(2I+1)², which at high T amounts to the symmetry number σ = 2. The
	// convention of thermochemical tables (nuclear-spin entropy excluded).
	SpinThermochemistry = "thermochemistry"
	// SpinLineIntensity keeps the full nuclear-spin degeneracy: (2I_A+1)(2I_B+1)
	// for heteronuclear molecules, g_ns(J) for homonuclear ones. The convention
	// of line-intensity databases.
	SpinLineIntensity = "line-intensity"
)

// Symmetry is the symmetry of an electronic state: Parity is 'g', 'u' or 0
// (heteronuclear, or not given); Reflection is '+', '-' or 0 (Λ > 0, or not
// given).
type Symmetry struct {
	Parity     byte
	Reflection byte
}

// ParseSymmetry reads "g+", "g-", "u+", "u-", "g", "u", "+", "-" or "" (a
// Unicode minus "−" is accepted for "-").
func ParseSymmetry(s string) (Symmetry, error) {
	var y Symmetry
	rest := s
	if len(rest) > 0 && (rest[0] == 'g' || rest[0] == 'u') {
		y.Parity = rest[0]
		rest = rest[1:]
	}
	switch rest {
	case "":
	case "+":
		y.Reflection = '+'
	case "-", "−":
		y.Reflection = '-'
	default:
		return Symmetry{}, fmt.Errorf("%q is not one of g+, g-, u+, u-, g, u, +, -", s)
	}
	return y, nil
}

// String returns the symmetry as written in a card ("g-", "u", "+", "").
func (y Symmetry) String() string {
	var b []byte
	if y.Parity != 0 {
		b = append(b, y.Parity)
	}
	if y.Reflection != 0 {
		b = append(b, y.Reflection)
	}
	return string(b)
}

// NuclearSpinWeights returns the nuclear-spin weights g_ns of the even-N and
// odd-N rotational levels of an electronic state with projection Λ and symmetry
// sym, in the given convention (SpinThermochemistry or SpinLineIntensity).
//
// Homonuclear molecules (both nuclei the same isotope, spin I): the nuclear-spin
// functions are (2I+1)(I+1) symmetric and (2I+1)I antisymmetric under exchange of
// the nuclei. A rotational level of a Σ state has parity (−1)^N in a Σ⁺ state and
// (−1)^(N+1) in a Σ⁻ state; it is symmetric (s) under exchange when its parity is
// + in a g state or − in a u state, antisymmetric (a) otherwise. The total wave
// function must be symmetric for bosons (integer I) and antisymmetric for
// fermions (half-integer I), so
//
//	bosons:   g_ns(s) = (2I+1)(I+1),  g_ns(a) = (2I+1)I
//	fermions: g_ns(s) = (2I+1)I,      g_ns(a) = (2I+1)(I+1).
//
// For Λ > 0 each N has two Λ components of opposite parity, one s and one a; the
// weight per component is the mean [(2I+1)²]/2 (the factor 2 of the Λ doubling is
// in g_e). Heteronuclear molecules: (2I_A+1)(2I_B+1) for every N. In the
// thermochemistry convention every weight is divided by (2I_A+1)(2I_B+1).
//
// A homonuclear Σ state needs both Parity and Reflection, a homonuclear Λ > 0
// state needs Parity; otherwise an error says what is missing.
func NuclearSpinWeights(iso species.Isotopologue, lambda int, sym Symmetry, convention string) (even, odd float64, err error) {
	total := float64(iso.NuclearSpinStates())
	var norm float64
	switch convention {
	case SpinThermochemistry:
		norm = total
	case SpinLineIntensity:
		norm = 1
	default:
		return 0, 0, fmt.Errorf("nuclear-spin convention %q: choose %s or %s", convention, SpinThermochemistry, SpinLineIntensity)
	}
	if !iso.Homonuclear() {
		return total / norm, total / norm, nil
	}
	symStates, antiStates, _ := iso.SpinExchangeStates()
	gs, ga := float64(symStates), float64(antiStates) // weight of s and a levels for bosons
	if !iso.A.IsBoson() {
		gs, ga = ga, gs
	}
	if sym.Parity == 0 {
		return 0, 0, fmt.Errorf("%s is homonuclear: the state needs its g/u symmetry", iso.Label)
	}
	if lambda > 0 {
		m := (gs + ga) / 2 / norm
		return m, m, nil
	}
	if sym.Reflection == 0 {
		return 0, 0, fmt.Errorf("%s is homonuclear: a Σ state needs g+, g-, u+ or u-", iso.Label)
	}
	// Parity of even-N levels: + for Σ⁺, − for Σ⁻.
	evenPlus := sym.Reflection == '+'
	// Even levels are s when (parity + and g) or (parity − and u).
	evenSym := evenPlus == (sym.Parity == 'g')
	if evenSym {
		return gs / norm, ga / norm, nil
	}
	return ga / norm, gs / norm, nil
}

// ElectronicDegeneracy returns g_e = (2S+1)(2 − δ_Λ0) for spin multiplicity
// 2S+1 and projection Λ.
func ElectronicDegeneracy(multiplicity, lambda int) float64 {
	if lambda == 0 {
		return float64(multiplicity)
	}
	return 2 * float64(multiplicity)
}
