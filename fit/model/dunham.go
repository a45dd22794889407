package model

import (
	"fmt"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"bandwright/fit/species"
	"bandwright/fit/states"
	"bandwright/units"
)

// Dunham is the Dunham expansion of the rovibrational energy,
//
//	E(v, J) = Σ_kl Y_kl (v+½)^k x^l,   x = J(J+1)   [cm⁻¹],
//
// over a chosen list of (k, l) terms, for one or several isotopologues of one
// molecule fitted jointly through the mass-reduced coefficients U_kl:
//
//	Y_kl(s) = U_kl μ_s^−(k+2l)/2 [1 + (m_e/M_A)Δ_kl^A + (m_e/M_B)Δ_kl^B].
//
// The fitted parameters are the Y_kl of the reference isotopologue r and, when
// Born–Oppenheimer breakdown is requested for a term and an element X that is
// isotopically substituted in the data, δ_kl^X = U_kl Δ_kl^X μ_r^−(k+2l)/2
// (cm⁻¹, named "BOB{k}{l}_{X}"). With S_X(s) = Σ 1/M over the atoms of element X
// in isotopologue s (atomic masses in u),
//
//	Y_kl(s) = (μ_r/μ_s)^((k+2l)/2) · [Y_kl(r) + m_e Σ_X (S_X(s) − S_X(r)) δ_kl^X],
//
// which is linear in the parameters and reduces to the plain mass scaling
// without breakdown terms. Y00 is not part of the model: energies are measured
// from the potential minimum.
//
// With electronic states (DunhamOptions.States) every state has its own Y_kl
// ("A:Y01" for state A) and an excited state its term energy T_e between
// potential minima ("A:T_e"); a state with fine structure has Dunham-type
// expansions of its constants, X_v = X_e − α_X (v+½) (parameters "A_e",
// "alpha_A", "gamma_e", …) and the v-independent distortion constants
// ("A_D", "gamma_D", …), mass-scaled as the Y_kl (see dunhamfine.go and the
// package doc). Breakdown terms belong to the ground state's Y_kl.
type Dunham struct {
	electronic
	species  []string
	isos     []species.Isotopologue
	terms    [][2]int // (k, l) of each Y parameter, parameter index = term index
	elements []string // elements with breakdown terms
	params   []Param
	// scale[s][t] = (μ_r/μ_s)^((k+2l)/2)
	scale [][]float64
	// bob[t] lists the breakdown parameters of term t: parameter index and,
	// per species, m_e (S_X(s) − S_X(r)).
	bob  [][]bobTerm
	maxK int
	maxL int
	// contrib lists, per electronic state, every contribution of a parameter
	// to an effective constant of a vibronic level (see dunhamfine.go).
	contrib [][]contribution
}

type bobTerm struct {
	param int
	coef  []float64 // per species
}

var dunhamName = regexp.MustCompile(`^Y(\d)(\d)$`)

// ParseDunhamTerm parses "Y01" into (0, 1). Indices are single digits.
func ParseDunhamTerm(s string) (k, l int, err error) {
	m := dunhamName.FindStringSubmatch(strings.TrimSpace(s))
	if m == nil {
		return 0, 0, fmt.Errorf("model: %q is not a Dunham term (write Y<k><l>, e.g. Y10, Y01, Y11)", s)
	}
	k, _ = strconv.Atoi(m[1])
	l, _ = strconv.Atoi(m[2])
	if k == 0 && l == 0 {
		return 0, 0, fmt.Errorf("model: Y00 is not fitted (energies are measured from the potential minimum; it cancels in every transition)")
	}
	return k, l, nil
}

// DunhamName returns "Y{k}{l}".
func DunhamName(k, l int) string { return fmt.Sprintf("Y%d%d", k, l) }

// BOBName returns "BOB{k}{l}_{element}".
func BOBName(k, l int, element string) string { return fmt.Sprintf("BOB%d%d_%s", k, l, element) }

// DunhamOptions chooses the terms of a Dunham model.
type DunhamOptions struct {
	// Terms are "Y10", "Y01", … and the fine-structure terms ("A_e",
	// "alpha_A", "gamma_D", …), each "NAME" or "STATE:NAME": a state whose
	// label prefixes some term has exactly those, every other state the
	// unprefixed ones its case has.
	Terms     []string
	BOBTerms  []string // terms that get breakdown parameters for each substituted element
	Reference int      // index of the reference isotopologue
	Fixes     []Fix
	// States are the electronic states, the ground state first; nil: a ¹Σ⁺
	// ground state alone.
	States []states.State
}

// NewDunham builds a Dunham model for the isotopologues isos (all of one
// molecule: the same two elements). Parameters named in fixes but absent from
// Terms are added as fixed parameters.
func NewDunham(isos []species.Isotopologue, o DunhamOptions) (*Dunham, error) {
	m, err := newDunhamSpecies(isos, o.Reference)
	if err != nil {
		return nil, err
	}
	if m.electronic, err = newElectronic(o.States); err != nil {
		return nil, err
	}
	fixes := groundFixes(o.Fixes, m.states[0].Label)
	lists, err := m.dunhamTermLists(o.Terms, fixes)
	if err != nil {
		return nil, err
	}
	if err := m.setTerms(lists[0].ys, nil); err != nil {
		return nil, err
	}
	if len(o.BOBTerms) > 0 {
		if err := m.addBreakdown(o.BOBTerms); err != nil {
			return nil, err
		}
	}
	if err := m.addStates(lists); err != nil {
		return nil, err
	}
	if err := applyFixes(m.params, fixes); err != nil {
		return nil, err
	}
	return m, nil
}

// newDunhamSpecies checks that isos are isotopologues of one molecule, each
// listed once, and returns a model without terms over them, the reference
// (index ref of isos) first.
func newDunhamSpecies(isos []species.Isotopologue, ref int) (*Dunham, error) {
	if len(isos) == 0 {
		return nil, ErrNoLevels
	}
	if ref < 0 || ref >= len(isos) {
		return nil, fmt.Errorf("model: reference isotopologue index %d out of range", ref)
	}
	refEl := elementsOf(isos[ref])
	for _, iso := range isos {
		if elementsOf(iso) != refEl {
			return nil, fmt.Errorf("model: a joint Dunham fit needs isotopologues of one molecule; %s and %s differ in their elements", isos[ref].Label, iso.Label)
		}
	}
	m := &Dunham{}
	order := []int{ref}
	for i := range isos {
		if i != ref {
			order = append(order, i)
		}
	}
	seen := map[string]bool{}
	for _, i := range order {
		if seen[isos[i].Label] {
			return nil, fmt.Errorf("model: isotopologue %s listed twice", isos[i].Label)
		}
		seen[isos[i].Label] = true
		m.isos = append(m.isos, isos[i])
		m.species = append(m.species, isos[i].Label)
	}
	return m, nil
}

// setTerms gives the model its Y_kl parameters: the terms named, plus those
// only held by a fix, ordered by l then k; and the mass-scaling factors
// scale[s][t] = (μ_r/μ_s)^((k+2l)/2).
func (m *Dunham) setTerms(terms []string, fixes []Fix) error {
	names := append([]string(nil), terms...)
	for _, f := range fixes {
		if dunhamName.MatchString(f.Name) && !contains(names, f.Name) {
			names = append(names, f.Name)
		}
	}
	have := map[[2]int]bool{}
	for _, n := range names {
		k, l, err := ParseDunhamTerm(n)
		if err != nil {
			return err
		}
		if !have[[2]int{k, l}] {
			have[[2]int{k, l}] = true
			m.terms = append(m.terms, [2]int{k, l})
		}
	}
	if len(m.terms) == 0 {
		return fmt.Errorf("model: no Dunham terms given (e.g. --terms Y10,Y20,Y01,Y11,Y02)")
	}
	sort.Slice(m.terms, func(a, b int) bool {
		if m.terms[a][1] != m.terms[b][1] {
			return m.terms[a][1] < m.terms[b][1]
		}
		return m.terms[a][0] < m.terms[b][0]
	})
	for _, t := range m.terms {
		m.params = append(m.params, Param{Name: DunhamName(t[0], t[1]), V: -1, K: t[0], L: t[1], Species: m.species[0]})
		m.maxK = max(m.maxK, t[0])
		m.maxL = max(m.maxL, t[1])
	}
	m.scale = make([][]float64, len(m.isos))
	muR := m.isos[0].ReducedMass()
	for s, iso := range m.isos {
		m.scale[s] = make([]float64, len(m.terms))
		for t, kl := range m.terms {
			m.scale[s][t] = math.Pow(muR/iso.ReducedMass(), float64(kl[0]+2*kl[1])/2)
		}
	}
	m.bob = make([][]bobTerm, len(m.terms))
	return nil
}

// addBreakdown adds a breakdown parameter δ_kl^X for each term named in
// bobTerms and each element X substituted among the isotopologues, with its
// coefficients m_e (S_X(s) − S_X(r)) per species.
func (m *Dunham) addBreakdown(bobTerms []string) error {
	m.elements = append(m.elements, substitutedElements(m.isos)...)
	if len(m.elements) == 0 {
		return fmt.Errorf("model: Born–Oppenheimer-breakdown terms need isotopologues that differ in the isotope of at least one element; all given isotopologues are %s", m.species[0])
	}
	for _, n := range bobTerms {
		k, l, err := ParseDunhamTerm(n)
		if err != nil {
			return err
		}
		t := m.termIndex(k, l)
		if t < 0 {
			return fmt.Errorf("model: breakdown term %s needs %s among the fitted terms", BOBName(k, l, "X"), DunhamName(k, l))
		}
		if len(m.bob[t]) > 0 {
			continue
		}
		for _, el := range m.elements {
			bt := bobTerm{param: len(m.params), coef: make([]float64, len(m.isos))}
			sr := m.isos[0].InverseMass(el)
			for s, iso := range m.isos {
				bt.coef[s] = units.ElectronMass * (iso.InverseMass(el) - sr)
			}
			m.bob[t] = append(m.bob[t], bt)
			m.params = append(m.params, Param{Name: BOBName(k, l, el), V: -1, K: k, L: l, Element: el})
		}
	}
	return nil
}

func elementsOf(iso species.Isotopologue) string {
	a, b := iso.A.Symbol, iso.B.Symbol
	if a > b {
		a, b = b, a
	}
	return a + "+" + b
}

// substitutedElements returns the elements whose isotope differs between
// isotopologues, in the order they appear in the reference.
func substitutedElements(isos []species.Isotopologue) []string {
	var out []string
	for _, el := range []string{isos[0].A.Symbol, isos[0].B.Symbol} {
		if contains(out, el) {
			continue
		}
		r := isos[0].InverseMass(el)
		for _, iso := range isos[1:] {
			if iso.InverseMass(el) != r {
				out = append(out, el)
				break
			}
		}
	}
	return out
}

func (m *Dunham) termIndex(k, l int) int {
	for i, t := range m.terms {
		if t[0] == k && t[1] == l {
			return i
		}
	}
	return -1
}

// Kind returns KindDunham.
func (m *Dunham) Kind() string { return KindDunham }

// Species returns the isotopologue labels, reference first.
func (m *Dunham) Species() []string { return append([]string(nil), m.species...) }

// Isotopologues returns the isotopologues, reference first.
func (m *Dunham) Isotopologues() []species.Isotopologue {
	return append([]species.Isotopologue(nil), m.isos...)
}

// Params returns a copy of the parameter list: the Y_kl of the reference
// isotopologue (ordered by l, then k), then the breakdown parameters.
func (m *Dunham) Params() []Param { return append([]Param(nil), m.params...) }

// Terms returns the (k, l) pairs of the Y parameters, in parameter order.
func (m *Dunham) Terms() [][2]int { return append([][2]int(nil), m.terms...) }

// BOBElements returns the elements that carry breakdown parameters.
func (m *Dunham) BOBElements() []string { return append([]string(nil), m.elements...) }

// HasLevel is always true: the expansion covers every level (extrapolation is
// the caller's concern).
func (m *Dunham) HasLevel(s, v int) bool { return v >= 0 && s >= 0 && s < len(m.species) }

// MaxK returns the largest vibrational power in the model.
func (m *Dunham) MaxK() int { return m.maxK }

// Y returns Y_kl of species s for parameter vector p and, when grad is not nil,
// ∂Y_kl(s)/∂p_j in grad (len(p)). It returns 0 and an all-zero gradient when
// (k, l) is not a term of the model.
func (m *Dunham) Y(s, k, l int, p []float64, grad []float64) float64 {
	if grad != nil {
		clear(grad)
	}
	t := m.termIndex(k, l)
	if t < 0 {
		return 0
	}
	sc := m.scale[s][t]
	y := p[t]
	if grad != nil {
		grad[t] = sc
	}
	for _, b := range m.bob[t] {
		y += b.coef[s] * p[b.param]
		if grad != nil {
			grad[b.param] = sc * b.coef[s]
		}
	}
	return sc * y
}

// Scale returns (μ_r/μ_s)^((k+2l)/2) for term (k, l) of species s.
func (m *Dunham) Scale(s, k, l int) float64 {
	if t := m.termIndex(k, l); t >= 0 {
		return m.scale[s][t]
	}
	return math.Pow(m.isos[0].ReducedMass()/m.isos[s].ReducedMass(), float64(k+2*l)/2)
}

// Energy evaluates E(v, J) of species s; see the type's doc comment.
func (m *Dunham) Energy(s, v, J int, p []float64, grad []float64) float64 {
	if grad != nil {
		clear(grad)
	}
	var vp, xp [10]float64
	vh := float64(v) + 0.5
	q := 1.0
	for i := 0; i <= m.maxK && i < len(vp); i++ {
		vp[i] = q
		q *= vh
	}
	xPow(J, min(m.maxL, len(xp)-1), xp[:])
	e := 0.0
	for t, kl := range m.terms {
		basis := vp[kl[0]] * xp[kl[1]]
		sc := m.scale[s][t]
		c := sc * basis
		y := p[t]
		if grad != nil {
			grad[t] = c
		}
		for _, b := range m.bob[t] {
			y += b.coef[s] * p[b.param]
			if grad != nil {
				grad[b.param] = c * b.coef[s]
			}
		}
		e += c * y
	}
	return e
}

// Transition evaluates ν = E(v′, J′) − E(v″, J″) of species s term by term,
// Σ_t s_t [(v′+½)^k x′^l − (v″+½)^k x″^l]·[Y_kl(r) + Σ_X b_X δ_kl^X], with the
// scale s_t and breakdown coefficients b_X of Energy; see model.Transitioner.
func (m *Dunham) Transition(s, vUp, jUp, vLo, jLo int, p []float64, grad []float64) (nu, mag float64) {
	if grad != nil {
		clear(grad)
	}
	var au, al, xu, xl [10]float64
	powers(au[:], float64(vUp)+0.5, m.maxK)
	powers(al[:], float64(vLo)+0.5, m.maxK)
	powers(xu[:], float64(jUp)*float64(jUp+1), m.maxL)
	powers(xl[:], float64(jLo)*float64(jLo+1), m.maxL)
	sc := m.scale[s]
	for t, kl := range m.terms {
		k, l := kl[0], kl[1]
		// (v+½)^k·x^0 = (v+½)^k and (v+½)^0·x^l = x^l exactly, so the
		// difference is exactly 0 for l = 0 when v′ = v″ and for k = 0 when
		// J′ = J″.
		c := sc[t] * (au[k]*xu[l] - al[k]*xl[l])
		y := p[t]
		if grad != nil {
			grad[t] = c
		}
		for _, b := range m.bob[t] {
			y += b.coef[s] * p[b.param]
			if grad != nil {
				grad[b.param] = c * b.coef[s]
			}
		}
		term := c * y
		nu += term
		mag += math.Abs(term)
	}
	return nu, mag
}
