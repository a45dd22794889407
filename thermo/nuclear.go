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

// NuclearSpinWeights returns the nuclear-spin weights g_ns of the even-N and
// odd-N rotational levels of an electronic state with projection Λ and symmetry
// sym, in the given convention: the weights of the spin-statistics rule
// (species.Isotopologue.NuclearSpinWeights, which counts every nuclear-spin
// state) in SpinLineIntensity, and those divided by (2I_A+1)(2I_B+1) in
// SpinThermochemistry. An unknown convention, or a homonuclear state without
// the symmetry the rule needs, is an error.
func NuclearSpinWeights(iso species.Isotopologue, lambda int, sym species.StateSymmetry, convention string) (even, odd float64, err error) {
	var norm float64
	switch convention {
	case SpinThermochemistry:
		norm = float64(iso.NuclearSpinStates())
	case SpinLineIntensity:
		norm = 1
	default:
		return 0, 0, fmt.Errorf("nuclear-spin convention %q: choose %s or %s", convention, SpinThermochemistry, SpinLineIntensity)
	}
	even, odd, err = iso.NuclearSpinWeights(lambda, sym)
	if err != nil {
		return 0, 0, err
	}
	return even / norm, odd / norm, nil
}

// ElectronicDegeneracy returns g_e = (2S+1)(2 − δ_Λ0) for spin multiplicity
// 2S+1 and projection Λ.
func ElectronicDegeneracy(multiplicity, lambda int) float64 {
	if lambda == 0 {
		return float64(multiplicity)
	}
	return 2 * float64(multiplicity)
}

// nuclearSpinWeightsByParity returns the nuclear-spin weights of the levels
// of total parity + and − of a state with symmetry sym in the given
// convention (species.Isotopologue.NuclearSpinWeightsByParity, divided by
// (2I_A+1)(2I_B+1) in SpinThermochemistry). A heteronuclear state needs no
// symmetry; a homonuclear one without g/u gets 0 weights and an error only
// when it is used (see levelSum.weighStates).
func nuclearSpinWeightsByParity(iso species.Isotopologue, sym species.StateSymmetry, convention string) (plus, minus float64, err error) {
	norm := 1.0
	if convention == SpinThermochemistry {
		norm = float64(iso.NuclearSpinStates())
	}
	plus, minus, err = iso.NuclearSpinWeightsByParity(sym)
	if err != nil {
		return 0, 0, err
	}
	return plus / norm, minus / norm, nil
}
