package model

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// rotTerms are the rotational terms of the term-values model in their fixed order.
var rotTerms = []string{"B", "D", "H", "L"}

// RotTerms returns the rotational terms of the term-values model in their
// fixed order: B, D, H, L.
func RotTerms() []string { return append([]string(nil), rotTerms...) }

// TermValues is the band-by-band term-value model. For isotopologue s and
// vibrational level v,
//
//	E(v, J) = T_v + B_v·x − D_v·x² + H_v·x³ + L_v·x⁴,   x = J(J+1)   [cm⁻¹]
//
// with one set of constants per level. T_v of the lowest level of each
// isotopologue is held at 0 (the energy zero of that isotopologue); every other
// T_v floats. Which rotational terms exist is chosen once for all levels.
type TermValues struct {
	species []string
	params  []Param
	terms   []string       // rotational terms present, in rotTerms order
	pows    []int          // power of x of each term (B 1, D 2, H 3, L 4)
	signs   []float64      // sign of each term in E (termSign)
	base    map[[2]int]int // (s, v) → index of T_v; terms follow in order
	maxPow  int
}

// LevelSpec lists the vibrational levels of one isotopologue.
type LevelSpec struct {
	Species string
	V       []int
}

// NewTermValues builds a term-values model over the given levels with the rotational
// terms listed in terms (a subset of B, D, H, L; "T" is accepted and ignored,
// T_v always exists). Parameters named in fixes but absent from terms are added
// as fixed parameters (for example --terms B --fix D=6.1e-6).
func NewTermValues(specs []LevelSpec, terms []string, fixes []Fix) (*TermValues, error) {
	if len(specs) == 0 {
		return nil, ErrNoLevels
	}
	want := map[string]bool{}
	for _, t := range terms {
		t = strings.TrimSpace(t)
		if t == "T" || t == "" {
			continue
		}
		if !contains(rotTerms, t) {
			return nil, fmt.Errorf("model: term-values model has no term %q (terms: T, B, D, H, L)", t)
		}
		want[t] = true
	}
	for _, f := range fixes {
		if contains(rotTerms, f.Name) {
			want[f.Name] = true
		}
	}
	m := &TermValues{base: map[[2]int]int{}}
	for _, t := range rotTerms {
		if want[t] {
			m.terms = append(m.terms, t)
		}
	}
	for _, t := range m.terms {
		m.pows = append(m.pows, indexOf(rotTerms, t)+1)
		m.signs = append(m.signs, termSign[t])
	}
	m.maxPow = len(m.terms)
	if idx := indexOf(rotTerms, lastOf(m.terms)); idx >= 0 {
		m.maxPow = idx + 1
	}
	for si, sp := range specs {
		if len(sp.V) == 0 {
			return nil, fmt.Errorf("model: %s: no vibrational levels", sp.Species)
		}
		vs := append([]int(nil), sp.V...)
		sort.Ints(vs)
		m.species = append(m.species, sp.Species)
		for i, v := range vs {
			if i > 0 && v == vs[i-1] {
				continue
			}
			m.base[[2]int{si, v}] = len(m.params)
			t := Param{Name: "T", V: v, K: -1, L: -1, Species: sp.Species}
			if i == 0 {
				t.Fixed = true // energy zero of this isotopologue
			}
			m.params = append(m.params, t)
			for _, name := range m.terms {
				m.params = append(m.params, Param{Name: name, V: v, K: -1, L: -1, Species: sp.Species})
			}
		}
	}
	if err := applyFixes(m.params, fixes); err != nil {
		return nil, err
	}
	return m, nil
}

// Kind returns KindTermValues.
func (m *TermValues) Kind() string { return KindTermValues }

// Species returns the isotopologue labels.
func (m *TermValues) Species() []string { return append([]string(nil), m.species...) }

// Params returns a copy of the parameter list.
func (m *TermValues) Params() []Param { return append([]Param(nil), m.params...) }

// Terms returns the rotational terms present (subset of B, D, H, L).
func (m *TermValues) Terms() []string { return append([]string(nil), m.terms...) }

// HasLevel reports whether level v of species s has parameters.
func (m *TermValues) HasLevel(s, v int) bool {
	_, ok := m.base[[2]int{s, v}]
	return ok
}

// LevelsOf returns the vibrational levels of species s in ascending order.
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
// species s, or -1.
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

// Energy evaluates E(v, J) of species s; see the type's doc comment.
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

// Transition evaluates ν = E(v′, J′) − E(v″, J″) of species s term by term;
// within one level (pure rotation) T_v cancels exactly and each rotational
// term enters once with x′^n − x″^n. See model.Transitioner.
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

func contains(xs []string, s string) bool { return indexOf(xs, s) >= 0 }

func indexOf(xs []string, s string) int {
	for i, x := range xs {
		if x == s {
			return i
		}
	}
	return -1
}

func lastOf(xs []string) string {
	if len(xs) == 0 {
		return ""
	}
	return xs[len(xs)-1]
}
