// Package states describes the electronic states of a diatomic molecule as the
// fitting models, the line-list checks, the constants record and the thermo
// stage see them: a label, the spin multiplicity 2S+1, the projection |Λ| of
// the electronic orbital angular momentum and the g/u and ± symmetry.
//
// # Which states bandwright models
//
// The energy-level models (package model) describe states of five cases, each
// with its own effective Hamiltonian (written out in the package doc of
// model): ¹Σ, ²Σ, ³Σ, ¹Π and ²Π. Hund's case is not a setting: the
// Hamiltonian of each case is diagonalised exactly for every J and parity,
// which covers the whole range from case (a) to case (b).
//
// # Level labels
//
// A level of a state is identified by v, J, and where the state needs them F
// and the rotationless parity e/f (Brown et al., J. Mol. Spectrosc. 55, 500
// (1975)): levels with parity +(−1)^(J−½) (half-integer J) or +(−1)^J (integer
// J) are e, the others f. N is the rotational quantum number without electron
// spin (Hund's case (b)); F_i numbers the spin components 1 … 2S+1 with F1 the
// component of the highest J for a given N (J = N + S), F2 the next (J = N + S
// − 1), and so on. The rules of each case:
//
//	¹Σ±   J = N; no F; parity e (Σ⁺) or f (Σ⁻) for every J
//	²Σ±   F1: J = N + ½, F2: J = N − ½; Σ⁺: F1 e, F2 f; Σ⁻: F1 f, F2 e
//	³Σ±   F1: J = N + 1, F2: J = N, F3: J = N − 1; Σ⁻: F2 f, F1 and F3 e;
//	      Σ⁺: F2 e, F1 and F3 f
//	¹Π    J = N ≥ 1; no F; an e and an f level for every J
//	²Π    F1, F2 with an e and an f level each; J ≥ 3/2 for both components,
//	      J = ½ once (Ω = ½); N = J − ½ for F1 and J + ½ for F2 (case (b))
//
// For Σ states the parity follows from N and the ± symmetry: a level has
// parity (−1)^N in a Σ⁺ state and −(−1)^N in a Σ⁻ state. For ²Π, F1 is the
// component that is mostly Ω = ½ when the spin–orbit constant A > 0 and mostly
// Ω = 3/2 when A < 0 (common practice); for J ≥ 3/2 it is the lower of the two
// levels of the same J and parity. The single J = ½ level is F1 when A > 0 in
// the case-(a) labelling and F2 (N = 1) in the case-(b) labelling: both labels
// are read as that level.
package states

import (
	"fmt"
	"strings"

	"bandwright/fit/species"
)

// State is one electronic state.
type State struct {
	Label        string
	Multiplicity int // 2S+1
	Lambda       int // |Λ|: 0 Σ, 1 Π, 2 Δ
	Symmetry     species.StateSymmetry
	// TermEnergy is the energy of the state's zero above the ground state's
	// (cm⁻¹), 0 for the ground state (see File); a fit takes it as the
	// starting value of the state's term energy.
	TermEnergy float64
	// Constants is the path of a constants record of the state, as written in
	// the electronic-states file (relative to it); empty when none is given.
	Constants string
	// OmegaE and OmegaESigma are ω_e and its 1σ, cm⁻¹; 0 when not given (for
	// the thermo stage, see File).
	OmegaE, OmegaESigma float64
	// OmegaEXE and OmegaEXESigma are ω_e x_e and its 1σ, cm⁻¹; 0 when not
	// given (thermo: the anharmonicity of a record with one vibrational
	// level, which otherwise comes from a prior).
	OmegaEXE, OmegaEXESigma float64
	// FineStructureWidth is the spread of the spin components of a level,
	// cm⁻¹; nil when not given (thermo).
	FineStructureWidth *float64
	// ProductsEnergy is the energy of the state's dissociation products above
	// those of the ground state, cm⁻¹ (0: the same asymptote; thermo).
	ProductsEnergy float64
}

// Ground is the state the models assume when no states are given: a
// closed-shell ¹Σ⁺ ground state labelled "X".
func Ground() State {
	return State{Label: "X", Multiplicity: 1, Symmetry: species.StateSymmetry{Reflection: '+'}}
}

// SameTerm reports whether two states have the same label, multiplicity, Λ
// and symmetry (what the models and the record describe of a state).
func (s State) SameTerm(o State) bool {
	return s.Label == o.Label && s.Multiplicity == o.Multiplicity && s.Lambda == o.Lambda && s.Symmetry == o.Symmetry
}

// TwiceS returns 2S = multiplicity − 1.
func (s State) TwiceS() int { return s.Multiplicity - 1 }

// HalfIntegerJ reports whether J is a half-integer in this state (even
// multiplicity).
func (s State) HalfIntegerJ() bool { return s.Multiplicity%2 == 0 }

// Term writes the state's label and term symbol: "X ²Π", "b ¹Σg⁺".
func (s State) Term() string {
	var b strings.Builder
	b.WriteString(s.Label)
	b.WriteByte(' ')
	sup := []rune("⁰¹²³⁴⁵⁶⁷⁸⁹")
	for _, d := range fmt.Sprint(s.Multiplicity) {
		b.WriteRune(sup[d-'0'])
	}
	names := []string{"Σ", "Π", "Δ", "Φ", "Γ"}
	if s.Lambda >= 0 && s.Lambda < len(names) {
		b.WriteString(names[s.Lambda])
	} else {
		fmt.Fprintf(&b, "(Λ=%d)", s.Lambda)
	}
	if s.Symmetry.Parity != 0 {
		b.WriteByte(s.Symmetry.Parity)
	}
	switch s.Symmetry.Reflection {
	case '+':
		b.WriteString("⁺")
	case '-':
		b.WriteString("⁻")
	}
	return b.String()
}

// Case is the kind of effective Hamiltonian a state needs.
type Case int

// The cases bandwright models; Unsupported for any other state.
const (
	Unsupported  Case = iota
	Singlet           // ¹Σ
	DoubletSigma      // ²Σ
	TripletSigma      // ³Σ
	SingletPi         // ¹Π
	DoubletPi         // ²Π
)

// Case returns the case of the state, Unsupported for a state the models do
// not describe.
func (s State) Case() Case {
	switch {
	case s.Lambda == 0 && s.Multiplicity == 1:
		return Singlet
	case s.Lambda == 0 && s.Multiplicity == 2:
		return DoubletSigma
	case s.Lambda == 0 && s.Multiplicity == 3:
		return TripletSigma
	case s.Lambda == 1 && s.Multiplicity == 1:
		return SingletPi
	case s.Lambda == 1 && s.Multiplicity == 2:
		return DoubletPi
	}
	return Unsupported
}

// Supported returns nil when the models describe the state, and otherwise an
// error naming the state and the states they describe.
func (s State) Supported() error {
	if s.Case() != Unsupported {
		return nil
	}
	return fmt.Errorf("state %s is not modelled: the energy-level models describe ¹Σ, ²Σ, ³Σ, ¹Π and ²Π states", s.Term())
}

// Index returns the index of the state labelled label in ss, or -1.
func Index(ss []State, label string) int {
	for i, s := range ss {
		if s.Label == label {
			return i
		}
	}
	return -1
}
