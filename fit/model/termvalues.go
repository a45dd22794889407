package model

import (
	"fmt"
	"math"
	"sort"

	"bandwright/fit/states"
)

// rotTerms are the rotational terms of the term-values model in their fixed order.
var rotTerms = []string{"B", "D", "H", "L"}

// RotTerms returns the rotational terms of the term-values model in their
// fixed order: B, D, H, L.
func RotTerms() []string { return append([]string(nil), rotTerms...) }

// FineTerms returns the fine-structure constants of a state of case c in
// their fixed order, as the term-values model names them (package doc):
// ²Σ gamma, gamma_D, gamma_H; ³Σ gamma, gamma_D, gamma_H, lambda, lambda_D,
// lambda_H; ¹Π q, q_D, q_H; ²Π A, A_D, A_H, gamma, gamma_D, gamma_H, p, q, p_D,
// q_D, p_H, q_H.
func FineTerms(c states.Case) []string {
	var out []string
	for q := fineStart; q < nQ; q++ {
		if hasQuantity(c, q) {
			out = append(out, quantityNames[q])
		}
	}
	return out
}

// TermValues is the band-by-band term-value model. For isotopologue s,
// electronic state σ and vibrational level v it has one set of constants: the
// term value T_v and the rotational constants B_v, D_v, H_v, L_v, and for a
// state with fine structure the constants of its case (A_v, gamma_v, p_v, …;
// package doc). A ¹Σ level has
//
//	E(v, J) = T_v + B_v·x − D_v·x² + H_v·x³ + L_v·x⁴,   x = J(J+1)   [cm⁻¹];
//
// every other level is T_v plus an eigenvalue of its state's effective
// Hamiltonian. T_v of the lowest level of the ground state of each
// isotopologue is held at 0 (the energy zero of that isotopologue); every
// other T_v floats, those of excited states being their term energies above
// that zero. Which terms exist is chosen once for all levels of a state.
type TermValues struct {
	electronic
	species []string
	params  []Param
	// The fast path of the ground state (Energy, Transition): its rotational
	// terms, their powers of x and signs, and the index of T_v of each
	// (s, v); the rotational terms follow T_v in order.
	terms  []string
	pows   []int
	signs  []float64
	base   map[[2]int]int
	maxPow int
	// vib maps (s, state, v) to the parameter index of each effective
	// constant of the vibronic level, -1 where the level has none.
	vib map[[3]int]*[nQ]int32
}

// LevelSpec lists the vibrational levels of one isotopologue in one
// electronic state (State indexes the states given to the model, 0 the ground
// state).
type LevelSpec struct {
	Species string
	State   int
	V       []int
}

// NewTermValues builds a term-values model of a ¹Σ ground state over the given
// levels with the rotational terms listed in terms (a subset of B, D, H, L;
// "T" is accepted and ignored, T_v always exists). Parameters named in fixes
// but absent from terms are added as fixed parameters (for example --terms B
// --fix D=6.1e-6).
func NewTermValues(specs []LevelSpec, terms []string, fixes []Fix) (*TermValues, error) {
	return NewTermValuesStates(nil, specs, terms, fixes)
}

// NewTermValuesStates builds a term-values model over the electronic states
// sts (the ground state first; nil: a ¹Σ⁺ ground state alone) and the levels
// of specs. terms names the constants of every state, "NAME" or "STATE:NAME":
// a state whose label prefixes some term has exactly those, every other state
// the unprefixed ones that its case has (FineTerms); a term no state has is
// an error. Parameters named in fixes but absent from terms are added as
// fixed parameters of the states the fixes name.
func NewTermValuesStates(sts []states.State, specs []LevelSpec, terms []string, fixes []Fix) (*TermValues, error) {
	if len(specs) == 0 {
		return nil, ErrNoLevels
	}
	el, err := newElectronic(sts)
	if err != nil {
		return nil, err
	}
	fixes = groundFixes(fixes, el.states[0].Label)
	m := &TermValues{electronic: el, base: map[[2]int]int{}, vib: map[[3]int]*[nQ]int32{}}
	qs, err := m.stateQuantities(terms, fixes)
	if err != nil {
		return nil, err
	}
	m.setFastPath(qs[0])
	if err := m.addLevels(specs, qs); err != nil {
		return nil, err
	}
	if err := applyFixes(m.params, fixes); err != nil {
		return nil, err
	}
	return m, nil
}

// stateQuantities returns the constants (after T) of each state, in quantity
// order.
func (m *TermValues) stateQuantities(terms []string, fixes []Fix) ([][]quantity, error) {
	lists, err := m.termLists(terms)
	if err != nil {
		return nil, err
	}
	want := make([][nQ]bool, len(m.states))
	used := map[string]bool{}
	for st, list := range lists {
		for _, t := range list {
			if t.name == "T" || t.name == "" {
				used[t.name] = true
				continue
			}
			q := quantityOf(t.name)
			if q < 0 {
				return nil, noTermValuesTerm(t.name)
			}
			if !hasQuantity(m.cases[st], q) {
				if t.own {
					return nil, fmt.Errorf("model: term %s:%s: state %s has no such constant (it has %v)", m.states[st].Label, t.name, m.states[st].Term(), FineTerms(m.cases[st]))
				}
				continue
			}
			want[st][q] = true
			used[t.name] = true
		}
	}
	for _, list := range lists {
		for _, t := range list {
			if !used[t.name] {
				return nil, fmt.Errorf("model: term %s: no electronic state of the model has it (%s is a constant of %s states)", t.name, t.name, casesWith(quantityOf(t.name)))
			}
		}
	}
	for _, f := range fixes {
		q, st := quantityOf(f.Name), m.fixState(f)
		if q > qT && st >= 0 && hasQuantity(m.cases[st], q) {
			want[st][q] = true
		}
	}
	out := make([][]quantity, len(m.states))
	for st := range want {
		for q := qB; q < nQ; q++ {
			if want[st][q] {
				out[st] = append(out[st], q)
			}
		}
	}
	return out, nil
}

// casesWith names the cases whose states have constant q.
func casesWith(q quantity) string {
	var out []string
	names := map[states.Case]string{states.DoubletSigma: "2Sigma", states.TripletSigma: "3Sigma", states.SingletPi: "1Pi", states.DoubletPi: "2Pi"}
	for _, c := range []states.Case{states.DoubletSigma, states.TripletSigma, states.SingletPi, states.DoubletPi} {
		if hasQuantity(c, q) {
			out = append(out, names[c])
		}
	}
	if len(out) == 0 {
		return "no"
	}
	return fmt.Sprint(out)
}

// setFastPath records the rotational terms of the ground state for Energy and
// Transition.
func (m *TermValues) setFastPath(qs []quantity) {
	for _, q := range qs {
		if q >= fineStart {
			break
		}
		m.terms = append(m.terms, quantityNames[q])
		m.pows = append(m.pows, int(q-qB)+1)
		m.signs = append(m.signs, termSign[quantityNames[q]])
	}
	m.maxPow = 0
	if n := len(m.pows); n > 0 {
		m.maxPow = m.pows[n-1]
	}
}

// addLevels adds the parameters of every vibronic level of specs: T_v, then
// the state's constants, species by species in the order given, the states
// of a species in model order, levels ascending. T_v of the lowest level of
// the ground state of each species is fixed at 0.
func (m *TermValues) addLevels(specs []LevelSpec, qs [][]quantity) error {
	byKey := map[[2]int][]int{}
	var order []string
	for _, sp := range specs {
		if len(sp.V) == 0 {
			return fmt.Errorf("model: %s: no vibrational levels", sp.Species)
		}
		if sp.State < 0 || sp.State >= len(m.states) {
			return fmt.Errorf("model: %s: state index %d out of range", sp.Species, sp.State)
		}
		si := indexOf(order, sp.Species)
		if si < 0 {
			si = len(order)
			order = append(order, sp.Species)
		}
		byKey[[2]int{si, sp.State}] = append(byKey[[2]int{si, sp.State}], sp.V...)
	}
	m.species = order
	for si, sp := range order {
		if len(byKey[[2]int{si, 0}]) == 0 {
			return fmt.Errorf("model: %s: no levels of the ground state (%s): its lowest level is the energy zero", sp, m.states[0].Label)
		}
		for st := range m.states {
			vs := append([]int(nil), byKey[[2]int{si, st}]...)
			sort.Ints(vs)
			for i, v := range vs {
				if i > 0 && v == vs[i-1] {
					continue
				}
				m.addLevel(si, st, v, qs[st], st == 0 && i == 0)
			}
		}
	}
	return nil
}

// addLevel adds the parameters of vibronic level (s, st, v).
func (m *TermValues) addLevel(s, st, v int, qs []quantity, zero bool) {
	idx := new([nQ]int32)
	for q := range idx {
		idx[q] = -1
	}
	label := m.stateLabel(st)
	idx[qT] = int32(len(m.params))
	if st == 0 {
		m.base[[2]int{s, v}] = len(m.params)
	}
	m.params = append(m.params, Param{Name: "T", V: v, K: -1, L: -1, Species: m.species[s], State: label, Fixed: zero})
	for _, q := range qs {
		idx[q] = int32(len(m.params))
		m.params = append(m.params, Param{Name: quantityNames[q], V: v, K: -1, L: -1, Species: m.species[s], State: label})
	}
	m.vib[[3]int{s, st, v}] = idx
}

// Kind returns KindTermValues.
func (m *TermValues) Kind() string { return KindTermValues }

// Species returns the isotopologue labels.
func (m *TermValues) Species() []string { return append([]string(nil), m.species...) }

// Params returns a copy of the parameter list.
func (m *TermValues) Params() []Param { return append([]Param(nil), m.params...) }

// Terms returns the rotational terms of the ground state (subset of B, D, H, L).
func (m *TermValues) Terms() []string { return append([]string(nil), m.terms...) }

// HasLevel reports whether level v of the ground state of species s has
// parameters.
func (m *TermValues) HasLevel(s, v int) bool {
	_, ok := m.base[[2]int{s, v}]
	return ok
}

// HasVibronic reports whether level v of state st of species s has parameters.
func (m *TermValues) HasVibronic(s, st, v int) bool {
	_, ok := m.vib[[3]int{s, st, v}]
	return ok
}

// LevelsOf returns the vibrational levels of the ground state of species s
// in ascending order.
func (m *TermValues) LevelsOf(s int) []int {
	var vs []int
	for k := range m.base {
		if k[0] == s {
			vs = append(vs, k[1])
		}
	}
	sort.Ints(vs)
	return vs
}

// Index returns the index of the parameter name ("T", "B", …) of level v of
// the ground state of species s, or -1.
func (m *TermValues) Index(s, v int, name string) int {
	b, ok := m.base[[2]int{s, v}]
	if !ok {
		return -1
	}
	if name == "T" {
		return b
	}
	if i := indexOf(m.terms, name); i >= 0 {
		return b + 1 + i
	}
	return -1
}

// termSign is the sign of each rotational term in E: +B x − D x² + H x³ + L x⁴.
var termSign = map[string]float64{"B": 1, "D": -1, "H": 1, "L": 1}

// Energy evaluates E(v, J) of the ground state of species s; see the type's
// doc comment. For a ground state with fine structure it is the energy
// without it, T_v + B_v·N(N+1) − …, with J read as N.
func (m *TermValues) Energy(s, v, J int, p []float64, grad []float64) float64 {
	b, ok := m.base[[2]int{s, v}]
	if grad != nil {
		clear(grad)
	}
	if !ok {
		return math.NaN()
	}
	var xp [5]float64
	xPow(J, 4, xp[:])
	e := p[b]
	if grad != nil {
		grad[b] = 1
	}
	for i, pow := range m.pows {
		c := m.signs[i] * xp[pow]
		e += c * p[b+1+i]
		if grad != nil {
			grad[b+1+i] = c
		}
	}
	return e
}

// Transition evaluates ν = E(v′, J′) − E(v″, J″) of the ground state of
// species s term by term; within one level (pure rotation) T_v cancels
// exactly and each rotational term enters once with x′^n − x″^n. See
// model.Transitioner.
func (m *TermValues) Transition(s, vUp, jUp, vLo, jLo int, p []float64, grad []float64) (nu, mag float64) {
	bu, okU := m.base[[2]int{s, vUp}]
	bl, okL := m.base[[2]int{s, vLo}]
	if grad != nil {
		clear(grad)
	}
	if !okU || !okL {
		return math.NaN(), math.NaN()
	}
	var xu, xl [5]float64
	xPow(jUp, 4, xu[:])
	xPow(jLo, 4, xl[:])
	add := func(j int, c float64) {
		if grad != nil {
			grad[j] += c
		}
		t := c * p[j]
		nu += t
		mag += math.Abs(t)
	}
	if bu != bl {
		add(bu, 1)
		add(bl, -1)
		for i, pow := range m.pows {
			add(bu+1+i, m.signs[i]*xu[pow])
			add(bl+1+i, -m.signs[i]*xl[pow])
		}
		return nu, mag
	}
	for i, pow := range m.pows {
		add(bu+1+i, m.signs[i]*(xu[pow]-xl[pow]))
	}
	return nu, mag
}

// vibConstants implements vibSource: each constant is one parameter.
func (m *TermValues) vibConstants(s, st, v int, p []float64) (c [nQ]float64, ok bool) {
	idx, ok := m.vib[[3]int{s, st, v}]
	if !ok {
		return c, false
	}
	for q, j := range idx {
		if j >= 0 {
			c[q] = p[j]
		}
	}
	return c, true
}

// vibGradient implements vibSource.
func (m *TermValues) vibGradient(s, st, v int, dE [nQ]float64, w float64, grad []float64) {
	idx := m.vib[[3]int{s, st, v}]
	for q, j := range idx {
		if j >= 0 {
			grad[j] += w * dE[q]
		}
	}
}

// LevelEnergy implements LevelModel.
func (m *TermValues) LevelEnergy(s int, lv Level, p []float64, grad []float64) float64 {
	if m.closedShell() {
		if lv.State != 0 || lv.J2%2 != 0 {
			if grad != nil {
				clear(grad)
			}
			return math.NaN()
		}
		return m.Energy(s, lv.V, lv.J2/2, p, grad)
	}
	return m.levelEnergy(m, s, lv, p, grad)
}

// LevelTransition implements LevelModel.
func (m *TermValues) LevelTransition(s int, up, lo Level, p []float64, grad []float64) (nu, mag float64) {
	if m.closedShell() {
		return closedLevelTransition(m, s, up, lo, p, grad)
	}
	return m.levelTransition(m, s, up, lo, p, grad)
}

// Sublevels implements LevelModel.
func (m *TermValues) Sublevels(s, st, v, j2max int, p []float64, withGrad bool, fn func(Sublevel)) {
	if m.closedShell() {
		closedSublevels(m, s, v, j2max, p, withGrad, fn)
		return
	}
	m.sublevels(m, len(m.params), s, st, v, j2max, p, withGrad, fn)
}

// LevelSpecs returns the vibronic levels of the model: for each species and
// state the levels that have parameters.
func (m *TermValues) LevelSpecs() []LevelSpec {
	var out []LevelSpec
	for s, sp := range m.species {
		for st := range m.states {
			var vs []int
			for k := range m.vib {
				if k[0] == s && k[1] == st {
					vs = append(vs, k[2])
				}
			}
			if len(vs) > 0 {
				sort.Ints(vs)
				out = append(out, LevelSpec{Species: sp, State: st, V: vs})
			}
		}
	}
	return out
}

func contains(xs []string, s string) bool { return indexOf(xs, s) >= 0 }

func indexOf(xs []string, s string) int {
	for i, x := range xs {
		if x == s {
			return i
		}
	}
	return -1
}
