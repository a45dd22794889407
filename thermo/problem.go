package thermo

import (
	"math"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// State is one electronic state of the level sum.
type State struct {
	Label string
	// TermEnergy is the energy of the state's model zero above the ground
	// state's model zero, cm⁻¹ (T_e between potential minima for Dunham models).
	TermEnergy   float64
	Multiplicity int // 2S+1
	Lambda       int // |Λ|
	Symmetry     species.StateSymmetry
	// Constants of the state. Nil for the ground state (TermEnergy 0, which
	// takes Problem.Constants) and for a state that is the ground-state
	// manifold shifted by TermEnergy.
	Constants *constants.Set
	// Observed lists the levels of the state's fitted data (extrapolation check).
	Observed []constants.LevelRange
	// Source names the state's constants record in messages.
	Source string
	// OmegaE and OmegaESigma are ω_e and its 1σ (cm⁻¹) from the
	// electronic-states file, used when the state's record has a single
	// vibrational level; 0 when not given.
	OmegaE, OmegaESigma float64
	// OmegaEXE and OmegaEXESigma are ω_e x_e and its 1σ (cm⁻¹) from the
	// electronic-states file: with OmegaE, the anharmonicity x_e =
	// OmegaEXE/OmegaE of a record with a single vibrational level, in place
	// of the prior; 0 when not given.
	OmegaEXE, OmegaEXESigma float64
	// FineStructureWidth is the spread of the spin components of a level,
	// cm⁻¹ (nil: not given; the embedded list of open-shell ground states
	// supplies it for the ground states it knows).
	FineStructureWidth *float64
	// ProductsEnergy is the energy of the state's dissociation products above
	// those of the ground state, cm⁻¹; the state's levels end at
	// D0 + ProductsEnergy above the lowest level.
	ProductsEnergy float64
}

// StateOf returns the thermo view of a state of an electronic-states file:
// its label, term energy, case, ω_e, ω_e x_e, fine-structure width and products
// energy. Constants, Observed and Source stay empty: the caller loads the
// state's record, if the file names one.
func StateOf(s states.State) State {
	return State{Label: s.Label, TermEnergy: s.TermEnergy, Multiplicity: s.Multiplicity, Lambda: s.Lambda, Symmetry: s.Symmetry,
		OmegaE: s.OmegaE, OmegaESigma: s.OmegaESigma, OmegaEXE: s.OmegaEXE, OmegaEXESigma: s.OmegaEXESigma, FineStructureWidth: s.FineStructureWidth, ProductsEnergy: s.ProductsEnergy}
}

// Problem is what the thermo stage works on: the fitted constants of the ground
// state, the electronic states and the dissociation energy. It holds no settings.
type Problem struct {
	// Species is the isotopologue label; empty: the first species of the record.
	Species string
	// Constants of the ground electronic state (a fit record turned back into a model).
	Constants *constants.Set
	// Observed lists the levels reached by the fitted data (constants.Record.Observed).
	Observed []constants.LevelRange
	// Source names the constants record in messages and outputs.
	Source string
	// States lists the electronic states; nil means the states of the
	// constants record where it resolves their fine structure (see
	// recordStates), else one ¹Σ⁺ state (¹Σg⁺ for a homonuclear molecule).
	// Exactly one state has TermEnergy 0.
	States []State
	// DissociationEnergy is D0 in cm⁻¹ above the lowest level; 0 when unknown
	// (then it is estimated, see the package doc).
	DissociationEnergy float64
	// DissociationSigma is the 1σ of a given D0, cm⁻¹ (0: taken as exact).
	DissociationSigma float64
}

// defaultStates returns the state list used without an electronic-states file.
func defaultStates(iso species.Isotopologue) []State {
	s := State{Label: "X", Multiplicity: 1, Symmetry: species.StateSymmetry{Reflection: '+'}}
	if iso.Homonuclear() {
		s.Symmetry.Parity = 'g'
	}
	return []State{s}
}

// recordStates returns the states of a constants record that resolves their
// fine structure (a fit with an electronic-states file), as the sum takes
// them without an electronic-states file: the record's ground state with
// term energy 0, each other state with the term value T_v of its lowest
// vibrational level of the isotopologue (the record's energies include it;
// the term energy only tells the ground state from the others). nil for a
// record without states or with a ¹Σ state alone, or whose states describe
// no level of iso.
func recordStates(c *constants.Set, iso species.Isotopologue) []State {
	if c == nil || constants.RecordStates(c.Model) == nil {
		return nil
	}
	lm, ok := c.Model.(model.LevelModel)
	sp := model.SpeciesIndex(c.Model, iso.Label)
	if !ok || sp < 0 {
		return nil
	}
	if sts := lm.States(); len(sts) == 1 && sts[0].Case() == states.Singlet {
		return nil // no fine structure: the closed-shell rules apply
	}
	var out []State
	for i, st := range lm.States() {
		s := State{Label: st.Label, Multiplicity: st.Multiplicity, Lambda: st.Lambda, Symmetry: st.Symmetry}
		if i > 0 {
			for v := 0; v <= maxV; v++ {
				if e, ok := model.VibronicConstants(lm, sp, i, v, c.Values); ok {
					s.TermEnergy = math.Max(e[qT], math.SmallestNonzeroFloat64)
					break
				}
			}
			if s.TermEnergy == 0 {
				continue
			}
		}
		out = append(out, s)
	}
	return out
}
