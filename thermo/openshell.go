package thermo

import (
	"fmt"
	"math"

	"bandwright/fit/species"
	"bandwright/internal/failure"
	"bandwright/units"
)

// OpenShell is a diatomic molecule whose ground electronic state is not ¹Σ⁺,
// with the spread of the spin components of its rotational levels.
type OpenShell struct {
	Elements     [2]string // element symbols, sorted
	Term         string    // ground-state term symbol
	Multiplicity int       // 2S+1
	Lambda       int       // |Λ|
	// Width is the spread of the spin (or spin–orbit) components of a
	// rotational level, cm⁻¹: |A| for ²Π, 2|λ| for ³Σ, γ(N+½) at N ≈ 50 for ²Σ.
	Width float64
}

// openShells lists diatomic molecules whose ground state is not ¹Σ⁺, keyed by
// their elements (every isotopologue). Terms and the constants behind the
// widths (spin–orbit A, spin–spin λ, spin–rotation γ): Huber & Herzberg,
// Constants of Diatomic Molecules (1979), from memory.
var openShells = []OpenShell{
	{[2]string{"O", "O"}, "X ³Σg⁻", 3, 0, 3.97}, // λ = 1.985
	{[2]string{"N", "O"}, "X ²Πr", 2, 1, 123.1}, // A = 123.1
	{[2]string{"H", "O"}, "X ²Πi", 2, 1, 139.2}, // A = −139.2
	{[2]string{"C", "H"}, "X ²Πr", 2, 1, 28.1},  // A = 28.1
	{[2]string{"C", "N"}, "X ²Σ⁺", 2, 0, 0.4},   // γ = 0.0072
	{[2]string{"O", "S"}, "X ³Σ⁻", 3, 0, 10.6},  // λ = 5.28
	{[2]string{"Cl", "O"}, "X ²Πi", 2, 1, 318},  // A ≈ −318
	{[2]string{"N", "S"}, "X ²Πr", 2, 1, 223},   // A = 223
	{[2]string{"H", "N"}, "X ³Σ⁻", 3, 0, 1.84},  // λ = 0.92
	{[2]string{"H", "S"}, "X ²Πi", 2, 1, 377},   // A = −377
	{[2]string{"S", "S"}, "X ³Σg⁻", 3, 0, 23.6}, // λ = 11.8
	{[2]string{"C", "F"}, "X ²Πr", 2, 1, 77.1},  // A = 77.1
	{[2]string{"Br", "O"}, "X ²Πi", 2, 1, 975},  // A ≈ −975
}

// OpenShellGround returns the entry of the molecule of iso in the embedded
// list of open-shell ground states; ok is false for molecules not in it.
func OpenShellGround(iso species.Isotopologue) (OpenShell, bool) {
	key := elementKey(iso)
	for _, o := range openShells {
		if o.Elements == key {
			return o, true
		}
	}
	return OpenShell{}, false
}

// checkClosedShell refuses a problem without electronic states for a molecule
// whose ground state is known not to be ¹Σ⁺: the level sum would silently
// treat it as closed-shell (wrong degeneracy, levels that do not exist).
func checkClosedShell(p Problem, iso species.Isotopologue) error {
	if len(p.States) > 0 || len(recordStates(p.Constants, iso)) > 0 {
		return nil
	}
	o, ok := OpenShellGround(iso)
	if !ok {
		return nil
	}
	return failure.Errorf(failure.BadInput, "thermo: %s: the ground state of this molecule is %s, not ¹Σ⁺ (Huber & Herzberg 1979): give its electronic states in an electronic-states file (--states), with spin_multiplicity = %d and lambda = %d for the ground state; without one the sum would treat it as closed-shell",
		iso.Label, o.Term, o.Multiplicity, o.Lambda)
}

// fineStructure is the fine-structure entry of the budget: for each state the
// number of spin components n and their spread W (cm⁻¹; 0: none or unknown).
type fineStructure struct {
	n     []int
	width []float64
	h298  float64
}

// addFineStructure adds the fine-structure contribution for the states with
// electron spin whose spread of spin components is known (the
// electronic-states file, else the embedded list for the ground state), and a
// warning for every open-shell state, with the size of the neglected effect
// where known.
func (sys *System) addFineStructure() {
	fs := &fineStructure{n: make([]int, len(sys.states)), width: make([]float64, len(sys.states))}
	known, any := false, false
	for i, st := range sys.states {
		if (st.Multiplicity < 2 && st.Lambda == 0) || sys.manifolds[sys.stateMan[i]].src.fine != nil {
			// No fine structure, or every component resolved.
			continue
		}
		if st.Multiplicity < 2 {
			sys.warnings = append(sys.warnings, fmt.Sprintf("state %s: Λ-doubling neglected (each level's two Λ components at one energy; they split symmetrically, so the effect is of second order in the splitting)", st.Label))
			continue
		}
		any = true
		w, from := sys.fineWidth(i)
		if w <= 0 {
			sys.warnings = append(sys.warnings, fmt.Sprintf("state %s (2S+1 = %d): fine structure neglected and its size unknown: each N carries %d spin components at one energy. Give fine_structure_width in the electronic-states file to have its effect on H°(T)−H°(0) and S° estimated; at temperatures where kT is not large against the splitting, S° can be off by up to R ln %d = %.3g J mol-1 K-1",
				st.Label, st.Multiplicity, st.Multiplicity, st.Multiplicity, units.GasConstant*math.Log(float64(st.Multiplicity))))
			continue
		}
		fs.n[i], fs.width[i] = st.Multiplicity, w
		known = true
		sys.warnings = append(sys.warnings, sys.fineWarning(i, w, from))
	}
	if !any || !known {
		return
	}
	bu := sys.budget
	bu.fine = fs
	bu.fineIdx = bu.addContribution(Contribution{Name: ContribFineStructure,
		What:         "the fine structure of the open-shell states, which the models do not resolve (spin components at one energy, energy zero at the centre of the lowest rotational level)",
		Alternatives: []string{"spin components split over the width W of each state"},
		Method:       methodFine,
		Rule:         "W from fine_structure_width of the electronic-states file, else from the embedded list of open-shell ground states (|A| for ²Π, 2|λ| for ³Σ; Huber & Herzberg 1979, from memory)"})
}

// fineWidth returns the spread of the spin components of state i and where it
// comes from.
func (sys *System) fineWidth(i int) (float64, string) {
	st := sys.states[i]
	if st.FineStructureWidth != nil {
		return *st.FineStructureWidth, "fine_structure_width of the electronic-states file"
	}
	if st.TermEnergy == 0 {
		if o, ok := OpenShellGround(sys.iso); ok && o.Multiplicity == st.Multiplicity && o.Lambda == st.Lambda {
			return o.Width, fmt.Sprintf("the embedded list of open-shell ground states (%s, Huber & Herzberg 1979, from memory)", o.Term)
		}
	}
	return 0, ""
}

// fineWarning states the neglected fine structure of state i and the size of
// its effect: the energy zero sits at the centre of the lowest rotational
// level, a = W(n−1)/n above its lowest spin component, so H°(T) − H°(0) is low
// by about R·c₂·a once kT ≫ W.
func (sys *System) fineWarning(i int, w float64, from string) string {
	st := sys.states[i]
	n := float64(st.Multiplicity)
	a := w * (n - 1) / n
	msg := fmt.Sprintf("state %s (2S+1 = %d): fine structure neglected (the %d spin components of each level at one energy; spread W = %.3g cm-1 from %s)",
		st.Label, st.Multiplicity, st.Multiplicity, w, from)
	if i == sys.zero.state {
		z := sys.zp
		msg += fmt.Sprintf("; the energy zero sits at the centre of the lowest rotational level (v=%d, N=%d), about %.2g cm-1 above its lowest spin component: H°(T)−H°(0) is low by about %.2g kJ mol-1 once kT ≫ W",
			z.V, z.N, a, units.GasConstant*units.SecondRadiation*a/1000)
	}
	return msg + "; the fine_structure entry of the uncertainty budget gives the effect on every function"
}

// fineMoments sets acc to the moments at β of the sum with the fine structure
// of fs: each level of a state with n components of spread W splits into one
// component a = W(n−1)/n below it (weight 1/n) and n−1 components b = W/n
// above it (weight (n−1)/n), keeping the weighted centre; energies are
// measured from the new lowest level, a_zero below the old zero. state is
// scratch of 3·len(states) (the per-state moments).
func (sys *System) fineMoments(beta float64, fs *fineStructure, acc *moments, state []float64) {
	clear(state)
	n := sys.cut(beta)
	for i, e := range sys.e[:n] {
		t := sys.w[i] * boltzmann(-beta*e)
		s := 3 * int(sys.st[i])
		state[s] += t
		state[s+1] += t * e
		state[s+2] += t * e * e
	}
	shift := 0.0
	if zs := sys.zero.state; fs.n[zs] > 1 {
		shift = fs.width[zs] * float64(fs.n[zs]-1) / float64(fs.n[zs])
	}
	var a0, a1, a2 float64
	for s := range sys.states {
		m0, m1, m2 := state[3*s], state[3*s+1], state[3*s+2]
		comps := [][2]float64{{0, 1}} // offset, weight
		if k := fs.n[s]; k > 1 && fs.width[s] > 0 {
			w := fs.width[s]
			fk := float64(k)
			comps = [][2]float64{{-w * (fk - 1) / fk, 1 / fk}, {w / fk, (fk - 1) / fk}}
		}
		for _, c := range comps {
			o := c[0] + shift
			f := c[1] * math.Exp(-beta*o)
			a0 += f * m0
			a1 += f * (m1 + o*m0)
			a2 += f * (m2 + 2*o*m1 + o*o*m0)
		}
	}
	acc.a0, acc.a1, acc.a2, acc.ext = a0, a1, a2, 0
}

// fineSizeWarning states the largest effect of the neglected fine structure
// over the rows on H°(T) − H°(0) and S° (the fine_structure contribution of
// the budget); "" when there is none.
func fineSizeWarning(budget []Contribution, rows []Row) string {
	k := -1
	for i, c := range budget {
		if c.Name == ContribFineStructure {
			k = i
		}
	}
	if k < 0 || len(rows) == 0 {
		return ""
	}
	var h, s, th, ts float64
	for _, r := range rows {
		if m := r.Model[k]; m.HmH0 > h {
			h, th = m.HmH0, r.T
		}
		if m := r.Model[k]; m.S > s {
			s, ts = m.S, r.T
		}
	}
	return fmt.Sprintf("fine structure neglected: over this table its effect reaches %.2g kJ mol-1 on H°(T)−H°(0) (at %g K) and %.2g J mol-1 K-1 on S° (at %g K); it is the fine_structure entry of σ_model", h, th, s, ts)
}
