package assign

import (
	"fmt"
	"strings"

	"bandwright/fit/linelist"
	"bandwright/fit/species"
)

// Spectrum is the kind of spectrum, which fixes the selection rules.
type Spectrum int

const (
	// Infrared: vibrational bands v′ > v″ with ΔJ = J′ − J″ = ±1 (P, R).
	Infrared Spectrum = iota
	// Raman: ΔJ = 0, ±2 (O, Q, S) in vibrational bands; in a pure rotational
	// Raman "band" v′ = v″ only the Stokes lines ΔJ = +2 (S).
	Raman
	// Rotation: pure rotation within a level, v′ = v″, ΔJ = +1 (R).
	Rotation
)

// ParseSpectrum reads "ir" (or "infrared"), "raman" or "rotation" (or
// "microwave"), in any letter case.
func ParseSpectrum(s string) (Spectrum, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "ir", "infrared", "":
		return Infrared, nil
	case "raman":
		return Raman, nil
	case "rotation", "microwave", "mw", "rot":
		return Rotation, nil
	}
	return 0, fmt.Errorf("assign: --spectrum %q: use ir, raman or rotation", s)
}

func (s Spectrum) String() string {
	switch s {
	case Infrared:
		return "ir"
	case Raman:
		return "raman"
	case Rotation:
		return "rotation"
	}
	return fmt.Sprintf("Spectrum(%d)", int(s))
}

// DeltaJ returns the branches (ΔJ = J′ − J″) a band shows in this spectrum,
// or an error when the band does not fit the spectrum's selection rules.
func (s Spectrum) DeltaJ(b linelist.Band) ([]int, error) {
	switch s {
	case Infrared:
		if b.VUp == b.VLo {
			return nil, fmt.Errorf("assign: band %d-%d: v′ = v″ is pure rotation; use --spectrum rotation", b.VUp, b.VLo)
		}
		if b.VUp < b.VLo {
			return nil, fmt.Errorf("assign: band %d-%d: write bands upper-lower (v′-v″, v′ > v″), e.g. %d-%d", b.VUp, b.VLo, b.VLo, b.VUp)
		}
		return []int{-1, 1}, nil
	case Raman:
		if b.VUp < b.VLo {
			return nil, fmt.Errorf("assign: band %d-%d: write bands upper-lower (v′-v″, v′ ≥ v″), e.g. %d-%d", b.VUp, b.VLo, b.VLo, b.VUp)
		}
		if b.VUp == b.VLo {
			return []int{2}, nil
		}
		return []int{-2, 0, 2}, nil
	case Rotation:
		if b.VUp != b.VLo {
			return nil, fmt.Errorf("assign: band %d-%d: pure rotation needs v′ = v″ (e.g. 0-0, 1-1)", b.VUp, b.VLo)
		}
		return []int{1}, nil
	}
	return nil, fmt.Errorf("assign: unknown spectrum %d", int(s))
}

// Transition is a rovibrational transition (v′, J′) ← (v″, J″) of one
// isotopologue.
type Transition struct {
	Species            string
	VUp, JUp, VLo, JLo int
}

// DeltaJ returns J′ − J″.
func (t Transition) DeltaJ() int { return t.JUp - t.JLo }

// Branch returns the branch letter (O, P, Q, R, S).
func (t Transition) Branch() string { return linelist.BranchLetter(t.DeltaJ()) }

// Label writes the transition in the notation of the trade, branch letter and
// lower-state J: "12C16O 1-0 P(12)".
func (t Transition) Label() string {
	return t.Species + " " + linelist.TransitionLabel(t.VUp, t.JUp, t.VLo, t.JLo)
}

// HonlLondon returns the rotational line-strength factor S(J″, ΔJ) of a
// ¹Σ–¹Σ transition, normalised so that the factors of one lower level summed
// over the branches of the spectrum give 2J″+1 (common practice):
//
//	infrared and pure rotation (dipole):  R (ΔJ = +1): J″+1,  P (ΔJ = −1): J″
//	Raman (Placzek–Teller, anisotropic):  S (ΔJ = +2): 3(J+1)(J+2) / (2(2J+3))
//	                                      O (ΔJ = −2): 3J(J−1) / (2(2J−1))
//	                                      Q (ΔJ = 0):  J(J+1)(2J+1) / ((2J−1)(2J+3))
//
// with J = J″. The Raman factors are (2J+1)·b_J with the Placzek–Teller
// coefficients b_J, which sum to 1 over O, Q and S. The isotropic part of the
// vibrational Raman Q branch, (2J+1)·a′², is not in these factors; the
// assignment scales the Q branch and the O and S branches of each band
// separately to the observed intensities.
func HonlLondon(spec Spectrum, jlo, dJ int) float64 {
	J := float64(jlo)
	switch spec {
	case Infrared, Rotation:
		switch dJ {
		case 1:
			return J + 1
		case -1:
			return J
		}
	case Raman:
		switch dJ {
		case 2:
			return 3 * (J + 1) * (J + 2) / (2 * (2*J + 3))
		case -2:
			if jlo < 2 {
				return 0
			}
			return 3 * J * (J - 1) / (2 * (2*J - 1))
		case 0:
			if jlo == 0 {
				return 0
			}
			return J * (J + 1) * (2*J + 1) / ((2*J - 1) * (2*J + 3))
		}
	}
	return 0
}

// ramanQWeight returns the Q-branch strength used for predicted intensities:
// the isotropic part (2J+1), which dominates vibrational Raman Q branches,
// plus the anisotropic Placzek–Teller part with (4/45)γ′²/a′² taken as 1/4 (a
// guess; the Q branch of each band is scaled to the observed intensities).
func ramanQWeight(jlo int) float64 {
	return float64(2*jlo+1) + 0.25*HonlLondon(Raman, jlo, 0)
}

// SpinWeight returns the nuclear-spin statistical weight of rotational level
// J of isotopologue iso in its ground electronic state, taken to be ¹Σ⁺ (¹Σg⁺
// for homonuclear molecules): the even-J or odd-J weight of
// species.Isotopologue.NuclearSpinWeights, which counts every nuclear-spin
// state. For identical nuclei of spin I the symmetric spin functions,
// (2I+1)(I+1), go with even J for bosons and with odd J for fermions, the
// antisymmetric ones, (2I+1)I, with the others (common practice).
// Heteronuclear molecules return (2I_A+1)(2I_B+1) for every J, which cancels
// in relative intensities of one isotopologue.
func SpinWeight(iso species.Isotopologue, J int) float64 {
	// The symmetry is complete, so the rule cannot refuse it.
	even, odd, _ := iso.NuclearSpinWeights(0, groundSigma)
	if J%2 == 0 {
		return even
	}
	return odd
}

// groundSigma is the symmetry SpinWeight assumes: Σg⁺ (the g applies only to
// homonuclear molecules, whose closed-shell ground states are ¹Σg⁺).
var groundSigma = species.StateSymmetry{Parity: 'g', Reflection: '+'}
