package model

import (
	"bandwright/fit/states"
)

// Level identifies a rovibronic level of one isotopologue.
type Level struct {
	// State indexes the model's States(); 0 is the ground state.
	State int
	V     int
	// J2 is 2J (J may be a half-integer).
	J2 int
	// F is the spin component 1 … 2S+1 (package states); 0 in singlet states.
	F int
	// Parity is e or f; it selects the level of a Π state and is implied by
	// J and F in a Σ state, where it is not read.
	Parity states.Parity
}

// LevelModel is a model with electronic states and fine structure; both
// models of this package implement it. Its energies are those of the
// effective Hamiltonian of each state's case (see the package doc):
// eigenvalues of a 1×1 or 2×2 matrix for each J and parity, with gradients
// from the Hellmann–Feynman theorem, ∂E/∂p_j = ⟨ψ|∂H/∂p_j|ψ⟩.
//
// For a model whose only state is a ¹Σ ground state, LevelEnergy(s,
// Level{V: v, J2: 2J}) equals Energy(s, v, J).
type LevelModel interface {
	Model
	// States lists the electronic states, the ground state first.
	States() []states.State
	// Linear reports whether every energy is linear in the parameters (no
	// state of case ³Σ or ²Π); otherwise a fit iterates.
	Linear() bool
	// HasVibronic reports whether the model has parameters for vibrational
	// level v of state st of species s.
	HasVibronic(s, st, v int) bool
	// LevelEnergy returns E of level lv of species s in cm⁻¹ for parameter
	// vector p and, when grad is not nil, ∂E/∂p_j in grad[j] (len(p)). It
	// returns NaN for a level the state does not have or the model has no
	// parameters for.
	LevelEnergy(s int, lv Level, p []float64, grad []float64) float64
	// LevelTransition returns ν = E(up) − E(lo) of species s, with ∂ν/∂p_j
	// in grad when it is not nil, and the size of what was summed (see
	// Transitioner). The term energies of the two levels cancel exactly when
	// both lie in the same vibronic level.
	LevelTransition(s int, up, lo Level, p []float64, grad []float64) (nu, mag float64)
	// Sublevels calls fn for every level of vibrational level v of state st
	// of species s with J ≤ j2max/2, in increasing J (see Sublevel).
	Sublevels(s, st, v, j2max int, p []float64, withGrad bool, fn func(Sublevel))
}

// Sublevel is one level as LevelModel.Sublevels enumerates it: its identity
// (Label: J, the case-(b) N, F and parity), its energy in cm⁻¹ (from the
// model's zero, as LevelEnergy) and, when asked for, ∂E/∂p_j over all model
// parameters. Grad is reused between calls: copy what must be kept.
type Sublevel struct {
	Level
	N    int
	E    float64
	Grad []float64
}
