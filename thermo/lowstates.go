package thermo

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"bandwright/fit/species"
	"bandwright/units"
)

// ExcitedState is a low-lying excited electronic state of the embedded list.
type ExcitedState struct {
	Term string // term symbol, e.g. "A²Π"
	// Te is the term energy T_e (between potential minima), TeSigma the
	// uncertainty we give it, cm⁻¹.
	Te, TeSigma  float64
	Multiplicity int // 2S+1
	Lambda       int // |Λ|
	// Symmetry: g/u (homonuclear molecules) and ± (Σ states).
	Symmetry species.StateSymmetry
	// ProductsEnergy is the energy of the atoms the state dissociates to
	// above the ground state's, cm⁻¹ (0: the same atoms).
	ProductsEnergy float64
}

// Atomic excitation energies of dissociation products, cm⁻¹ (the lowest
// level of the term above the atom's ground level; NIST Atomic Spectra
// Database, from memory).
const (
	oxygen1D   = 15867.9 // O ¹D₂
	nitrogen2D = 19224.5 // N ²D (centre)
	carbon1D   = 10192.6 // C ¹D₂
	sulfur1D   = 9238.6  // S ¹D₂
	chlorineP  = 882.35  // Cl ²P½ above ²P3/2
)

func sym(parity, reflection byte) species.StateSymmetry {
	return species.StateSymmetry{Parity: parity, Reflection: reflection}
}

// excitedStates lists, per molecule (elements sorted, every isotopologue),
// the excited electronic states below about 55 000 cm⁻¹ (a few above for
// CO and N2, whose populations at 6000 K still pass the threshold of
// missingStates) whose term energies we are confident of. T_e: Huber &
// Herzberg, Constants of Diatomic Molecules (1979), from memory; TeSigma is
// our margin on the recalled value (and on T_e against T_0), wider where the
// recollection is rough. Left out because we do not recall them well enough
// (a known gap: the sum of these molecules can still miss a state): SO
// c¹Σ⁻ and A″³Σ⁺ (near 30 000 cm⁻¹), S2 A³Σu⁺, A'³Δu, c¹Σu⁻ (near 22 000)
// and B″³Πu, the A²Π states of ClO (near 31 000) and BrO (near 26 000), and
// every excited state of NS and CF. H2, HF and HCl have no bound excited
// state below 55 000 cm⁻¹ (their lowest excited states are repulsive).
var excitedStates = map[[2]string][]ExcitedState{
	{"O", "O"}: {
		{"a¹Δg", 7918.1, 5, 1, 2, sym('g', 0), 0},
		{"b¹Σg⁺", 13195.1, 5, 1, 0, sym('g', '+'), 0},
		{"c¹Σu⁻", 33057.3, 100, 1, 0, sym('u', '-'), 0},
		{"A'³Δu", 34690, 500, 3, 2, sym('u', 0), 0},
		{"A³Σu⁺", 35397.8, 100, 3, 0, sym('u', '+'), 0},
		{"B³Σu⁻", 49793.3, 50, 3, 0, sym('u', '-'), oxygen1D},
	},
	{"N", "O"}: {
		{"a⁴Π", 38440, 500, 4, 1, sym(0, 0), 0},
		{"A²Σ⁺", 44200, 100, 2, 0, sym(0, '+'), nitrogen2D},
		{"B²Π", 45940, 300, 2, 1, sym(0, 0), nitrogen2D},
		{"b⁴Σ⁻", 48680, 1000, 4, 0, sym(0, '-'), 0},
	},
	{"H", "O"}: {
		{"A²Σ⁺", 32684.1, 50, 2, 0, sym(0, '+'), oxygen1D},
	},
	{"C", "H"}: {
		{"a⁴Σ⁻", 5844, 300, 4, 0, sym(0, '-'), 0},
		{"A²Δ", 23150, 150, 2, 2, sym(0, 0), carbon1D},
		{"B²Σ⁻", 26044, 200, 2, 0, sym(0, '-'), 0},
		{"C²Σ⁺", 31801.5, 100, 2, 0, sym(0, '+'), carbon1D},
	},
	{"C", "N"}: {
		{"A²Π", 9245.3, 10, 2, 1, sym(0, 0), 0},
		{"B²Σ⁺", 25752.0, 10, 2, 0, sym(0, '+'), 0},
	},
	{"O", "S"}: {
		{"a¹Δ", 6350, 150, 1, 2, sym(0, 0), 0},
		{"b¹Σ⁺", 10510, 150, 1, 0, sym(0, '+'), 0},
		{"A³Π", 38455, 500, 3, 1, sym(0, 0), oxygen1D},
		{"B³Σ⁻", 41629, 300, 3, 0, sym(0, '-'), oxygen1D},
	},
	{"H", "N"}: {
		{"a¹Δ", 12688, 150, 1, 2, sym(0, 0), nitrogen2D},
		{"b¹Σ⁺", 21202, 50, 1, 0, sym(0, '+'), nitrogen2D},
		{"A³Π", 29807, 50, 3, 1, sym(0, 0), nitrogen2D},
		{"c¹Π", 43744, 100, 1, 1, sym(0, 0), nitrogen2D},
	},
	{"H", "S"}: {
		{"A²Σ⁺", 30840, 300, 2, 0, sym(0, '+'), sulfur1D},
	},
	{"S", "S"}: {
		{"a¹Δg", 4395, 100, 1, 2, sym('g', 0), 0},
		{"b¹Σg⁺", 7981, 100, 1, 0, sym('g', '+'), 0},
		{"B³Σu⁻", 31835, 100, 3, 0, sym('u', '-'), sulfur1D},
	},
	{"C", "O"}: {
		{"a³Π", 48687.4, 5, 3, 1, sym(0, 0), 0},
		{"a'³Σ⁺", 55825.5, 10, 3, 0, sym(0, '+'), 0},
		{"d³Δ", 61120.1, 10, 3, 2, sym(0, 0), 0},
		{"e³Σ⁻", 64230.2, 10, 3, 0, sym(0, '-'), 0},
		{"A¹Π", 65075.7, 10, 1, 1, sym(0, 0), 0},
	},
	{"N", "N"}: {
		{"A³Σu⁺", 50203.6, 5, 3, 0, sym('u', '+'), 0},
		{"B³Πg", 59619.3, 5, 3, 1, sym('g', 0), 0},
		{"W³Δu", 59808, 50, 3, 2, sym('u', 0), 0},
		{"B'³Σu⁻", 66272, 50, 3, 0, sym('u', '-'), 0},
		{"a'¹Σu⁻", 68152.7, 10, 1, 0, sym('u', '-'), 0},
		{"a¹Πg", 69283.1, 10, 1, 1, sym('g', 0), 0},
	},
	// The A³Π1u and B³Π0u⁺ states of Cl2 (Hund's case (c), near 17 400 and
	// 18 300 cm⁻¹) as one ³Πu manifold at their middle, the margin
	// spanning both.
	{"Cl", "Cl"}: {
		{"A/B ³Πu", 17900, 600, 3, 1, sym('u', 0), chlorineP},
	},
}

// elementKey returns the sorted element symbols of iso (D and T as H).
func elementKey(iso species.Isotopologue) [2]string {
	el := []string{iso.A.Symbol, iso.B.Symbol}
	for i, s := range el {
		if s == "D" || s == "T" {
			el[i] = "H"
		}
	}
	slices.Sort(el)
	return [2]string{el[0], el[1]}
}

// KnownExcitedStates returns the excited electronic states of the molecule
// of iso in the embedded list (nil for a molecule without entries).
func KnownExcitedStates(iso species.Isotopologue) []ExcitedState {
	return excitedStates[elementKey(iso)]
}

// Rules of the electronic_states entry.
const (
	// lowStateShare: a listed state matters where its Boltzmann factor
	// g_e·e^(−c₂(T_e − σ)/T) at the highest temperature of the sum exceeds
	// it (g_e = (2S+1)(2 − δ_Λ0)); at that share it adds about
	// R(c₂T_e/T)²·10⁻⁶ ≲ 0.002 J mol⁻¹ K⁻¹ to Cp°.
	lowStateShare = 1e-6
	// lowStateMatchAbs, lowStateMatchRel: a state of the problem with the
	// same 2S+1 and |Λ| whose term energy lies within max(3σ,
	// lowStateMatchAbs + lowStateMatchRel·T_e) of a listed T_e is that state
	// (the file may give T_0 or the term value of another level: CO a³Π
	// has T_0 ≈ T_e − 214 cm⁻¹).
	lowStateMatchAbs = 300.0
	lowStateMatchRel = 0.02
)

// missingStates returns the states of the embedded list that the problem
// does not include (neither its states nor the states of its record, by the
// rule of lowStateMatchAbs) and that matter at tMax (lowStateShare).
func (sys *System) missingStates(p Problem, tMax float64) []ExcitedState {
	have := append(append([]State(nil), sys.states...), recordStates(p.Constants, sys.iso)...)
	var out []ExcitedState
	for _, x := range KnownExcitedStates(sys.iso) {
		g := ElectronicDegeneracy(x.Multiplicity, x.Lambda)
		if g*math.Exp(-units.SecondRadiation*(x.Te-x.TeSigma)/tMax) <= lowStateShare {
			continue
		}
		tol := math.Max(3*x.TeSigma, lowStateMatchAbs+lowStateMatchRel*x.Te)
		given := slices.ContainsFunc(have, func(s State) bool {
			return s.TermEnergy > 0 && s.Multiplicity == x.Multiplicity && s.Lambda == x.Lambda && math.Abs(s.TermEnergy-x.Te) <= tol
		})
		if !given {
			out = append(out, x)
		}
	}
	return out
}

// asState returns x as a state of the sum without constants of its own (the
// ground record's spin-free levels shifted by T_e + shift), labelled so that
// it cannot take a state of the record; g/u is dropped for a molecule that
// is not homonuclear.
func (x ExcitedState) asState(iso species.Isotopologue, shift float64) State {
	s := State{Label: x.Term + " (embedded list)", TermEnergy: x.Te + shift, Multiplicity: x.Multiplicity, Lambda: x.Lambda,
		Symmetry: x.Symmetry, ProductsEnergy: x.ProductsEnergy}
	if !iso.Homonuclear() {
		s.Symmetry.Parity = 0
	}
	return s
}

// lowStates is the electronic_states entry of the budget: the missing
// states and the index of the entry's first alternative in budget.sets.
type lowStates struct {
	missing []ExcitedState
	first   int
}

// addMissingStates adds the electronic_states entry: the level sum with the
// missing states of the embedded list added (missingStates), each at T_e − σ
// and at T_e + σ (two alternatives), recomputed like the other set
// alternatives; the nominal sum stays what the problem gives.
func (sys *System) addMissingStates(p Problem, s Settings, tMax float64) error {
	miss := sys.missingStates(p, tMax)
	if len(miss) == 0 {
		return nil
	}
	bu := sys.budget
	var names []string
	for _, x := range miss {
		names = append(names, fmt.Sprintf("%s (T_e = %g ± %g cm-1)", x.Term, x.Te, x.TeSigma))
	}
	ci := bu.addContribution(Contribution{Name: ContribElectronicStates,
		What:         "excited electronic states of this molecule that the problem does not include: " + strings.Join(names, ", "),
		Alternatives: []string{"the missing states added at T_e − σ", "the missing states added at T_e + σ"},
		Method:       methodRecomputed,
		Rule: fmt.Sprintf("states of the embedded list of low-lying states (Huber & Herzberg 1979, from memory) whose Boltzmann factor (2S+1)(2−δ_Λ0)·e^(−c₂(T_e−σ)/T) exceeds %g at %g K, the highest temperature of the sum, and that no state of the problem matches (same 2S+1 and |Λ|, term energy within max(3σ, %g cm-1 + %g·T_e)); each added as the ground-state levels shifted by its term energy, with its own degeneracy and dissociation products",
			lowStateShare, tMax, lowStateMatchAbs, lowStateMatchRel)})
	bu.low = &lowStates{missing: miss, first: len(bu.sets)}
	for _, sign := range []float64{-1, 1} {
		q := p
		q.States = slices.Clone(sys.states)
		for _, x := range miss {
			q.States = append(q.States, x.asState(sys.iso, sign*x.TeSigma))
		}
		alt, err := enumerate(q, s, tMax, buildOptions{xe: xePriorCentre, alphaScale: 1, alternative: true})
		if err != nil {
			return fmt.Errorf("%w (alternative of the uncertainty budget: %s)", err, ContribElectronicStates)
		}
		bu.sets = append(bu.sets, setAlternative{contrib: ci, sys: alt})
	}
	return nil
}

// missingStatesWarning states the missing states, their term energies and
// the mean change of Cp° and S° at T (K) over the entry's two alternatives,
// and asks for them in the electronic-states file; "" without missing
// states. Call after prepareBudget.
func (sys *System) missingStatesWarning(T float64) string {
	lo := sys.budget.low
	if lo == nil {
		return ""
	}
	beta := units.SecondRadiation / T
	acc := newMoments(0)
	sys.accumulate(beta, acc, false)
	f := sys.functions(T, acc, 0)
	var dCp, dS float64
	alts := sys.budget.sets[lo.first : lo.first+2]
	for _, a := range alts {
		a.sys.accumulate(beta, acc, false)
		g := a.sys.functions(T, acc, 0)
		dCp += (g.Cp - f.Cp) / float64(len(alts))
		dS += (g.S - f.S) / float64(len(alts))
	}
	var names []string
	for _, x := range lo.missing {
		names = append(names, fmt.Sprintf("%s at T_e = %g cm-1", x.Term, x.Te))
	}
	return fmt.Sprintf("electronic states missing from the sum: %s (embedded list of low-lying states, Huber & Herzberg 1979, from memory); at %g K they would add about %+.3g J mol-1 K-1 to Cp° and %+.3g to S° (as shifted copies of the ground-state levels). The table leaves them out and carries their effect as the %s entry of σ_model; add them to the electronic-states file (label, term_energy, spin_multiplicity, lambda, and symmetry for a homonuclear molecule) to have them in the sum",
		strings.Join(names, ", "), T, dCp, dS, ContribElectronicStates)
}
