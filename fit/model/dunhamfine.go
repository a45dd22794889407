package model

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/fit/states"
)

// The electronic states and fine structure of the Dunham model.
//
// Each effective constant c_q of a vibronic level (isotopologue s, state σ,
// level v) is a sum of contributions coef_s·(v+½)^k·p_j: the Y_kl of the
// state give T (l = 0, plus T_e for an excited state), B (l = 1), D (l = 2,
// with a minus sign: D_v = −Σ_k Y_k2 (v+½)^k), H (l = 3) and L (l = 4); a
// fine-structure constant X contributes X_e (k = 0) and −α_X (k = 1). The mass
// scaling of Y_kl, (μ_r/μ_s)^((k+2l)/2), applies to the fine-structure terms
// with l replaced by the rotational order of the constant: 0 for A and λ, 1
// for γ, p, A_D and λ_D, 2 for q, γ_D, p_D, A_H and λ_H, 3 for q_D, γ_H and
// p_H, 4 for q_H (the order of the power of B in their leading contributions,
// each distortion one order above the constant it distorts; common practice,
// and it fails where a constant has contributions of another order, such as
// the second-order spin–orbit part of λ).

// contribution is one term of an effective constant: c_q += coef[s]·(v+½)^k·p[param].
type contribution struct {
	q     quantity
	k     int
	param int
	coef  []float64 // per species
}

// rotOrder is the rotational order of each fine-structure constant (see
// above): that of the constant it distorts plus the power of N² for a
// distortion constant.
func rotOrder(q quantity) int {
	base := [nQ]int{qA: 0, qGamma: 1, qLambda: 0, qP: 1, qQ: 2}
	if d, ok := distortionOf[q]; ok {
		return base[d.base] + d.power
	}
	return base[q]
}

// isDistortion reports whether q is a distortion constant (A_D, gamma_D,
// lambda_H, …), which has no v-expansion.
func isDistortion(q quantity) bool {
	_, ok := distortionOf[q]
	return ok
}

// FineDunhamName returns the Dunham model's name of the v-expansion term k of
// fine-structure constant name ("A", "gamma", "p", "A_D", …): "A_e" (k = 0),
// "alpha_A" (k = 1); a distortion constant keeps its name ("A_D").
func FineDunhamName(name string, k int) string {
	q := quantityOf(name)
	switch {
	case q >= 0 && isDistortion(q):
		return name
	case k == 0:
		return name + "_e"
	}
	return "alpha_" + name
}

// parseFineDunham reads a fine-structure term of the Dunham model.
func parseFineDunham(name string) (quantity, int, bool) {
	if rest, ok := strings.CutPrefix(name, "alpha_"); ok {
		q := quantityOf(rest)
		if q >= fineStart && !isDistortion(q) {
			return q, 1, true
		}
		return 0, 0, false
	}
	if rest, ok := strings.CutSuffix(name, "_e"); ok {
		q := quantityOf(rest)
		if q >= fineStart && !isDistortion(q) {
			return q, 0, true
		}
		return 0, 0, false
	}
	if q := quantityOf(name); q >= fineStart && isDistortion(q) {
		return q, 0, true
	}
	return 0, 0, false
}

// fineTerm is one fine-structure term of a state: constant q, power k.
type fineTerm struct {
	q quantity
	k int
}

// dunhamStateTerms are the terms of one state: its Y_kl names and its
// fine-structure terms.
type dunhamStateTerms struct {
	ys   []string
	fine []fineTerm
}

// dunhamTermLists sorts the terms (and the terms only held by a fix) into the
// lists of each state.
func (m *Dunham) dunhamTermLists(terms []string, fixes []Fix) ([]dunhamStateTerms, error) {
	lists, err := m.termLists(terms)
	if err != nil {
		return nil, err
	}
	out := make([]dunhamStateTerms, len(m.states))
	used := map[string]bool{}
	add := func(st int, name string, own bool) error {
		if name == "T" || name == "" { // T_e exists for every excited state
			used[name] = true
			return nil
		}
		if dunhamName.MatchString(name) {
			if !contains(out[st].ys, name) {
				out[st].ys = append(out[st].ys, name)
			}
			used[name] = true
			return nil
		}
		q, k, ok := parseFineDunham(name)
		if !ok {
			if _, _, err := ParseDunhamTerm(name); err != nil && strings.HasPrefix(name, "Y") {
				return err
			}
			return noDunhamTerm(name)
		}
		switch {
		case hasQuantity(m.cases[st], q):
			used[name] = true
			ft := fineTerm{q, k}
			for _, x := range out[st].fine {
				if x == ft {
					return nil
				}
			}
			out[st].fine = append(out[st].fine, ft)
		case own:
			return fmt.Errorf("model: term %s:%s: state %s has no such constant", m.states[st].Label, name, m.states[st].Term())
		}
		return nil
	}
	for st, list := range lists {
		for _, t := range list {
			if err := add(st, t.name, t.own); err != nil {
				return nil, err
			}
		}
	}
	for _, list := range lists {
		for _, t := range list {
			if !used[t.name] {
				return nil, fmt.Errorf("model: term %s: no electronic state of the model has it", t.name)
			}
		}
	}
	for _, f := range fixes {
		if st := m.fixState(f); st >= 0 {
			if err := add(st, f.Name, false); err != nil && dunhamName.MatchString(f.Name) {
				return nil, err
			}
		}
	}
	for st := range out {
		sort.Slice(out[st].fine, func(a, b int) bool {
			x, y := out[st].fine[a], out[st].fine[b]
			if x.q != y.q {
				return x.q < y.q
			}
			return x.k < y.k
		})
	}
	return out, nil
}

// addStates adds the fine-structure terms of the ground state and the
// parameters of every excited state (T_e, Y_kl, fine-structure terms), and
// builds the contributions of each state.
func (m *Dunham) addStates(lists []dunhamStateTerms) error {
	m.contrib = make([][]contribution, len(m.states))
	if err := m.groundContributions(); err != nil {
		return err
	}
	m.addFine(0, lists[0].fine)
	for st := 1; st < len(m.states); st++ {
		label := m.states[st].Label
		te := len(m.params)
		m.params = append(m.params, Param{Name: "T_e", V: -1, K: -1, L: -1, State: label})
		m.contrib[st] = append(m.contrib[st], contribution{q: qT, param: te, coef: m.ones()})
		kls, err := sortedTerms(lists[st].ys)
		if err != nil {
			return err
		}
		for _, kl := range kls {
			q, sign, err := m.yQuantity(st, kl)
			if err != nil {
				return err
			}
			j := len(m.params)
			m.params = append(m.params, Param{Name: DunhamName(kl[0], kl[1]), V: -1, K: kl[0], L: kl[1], Species: m.species[0], State: label})
			m.contrib[st] = append(m.contrib[st], contribution{q: q, k: kl[0], param: j, coef: m.scaled(kl[0]+2*kl[1], sign)})
		}
		m.addFine(st, lists[st].fine)
	}
	return nil
}

// groundContributions turns the ground state's Y_kl and breakdown terms into
// contributions (only needed when levels are evaluated through the general
// path, that is when the model is not a ¹Σ ground state alone).
func (m *Dunham) groundContributions() error {
	for t, kl := range m.terms {
		q, sign, err := m.yQuantity(0, kl)
		if err != nil {
			if m.closedShell() {
				continue
			}
			return err
		}
		m.contrib[0] = append(m.contrib[0], contribution{q: q, k: kl[0], param: t, coef: m.scaled(kl[0]+2*kl[1], sign)})
		for _, b := range m.bob[t] {
			c := m.scaled(kl[0]+2*kl[1], sign)
			for s := range c {
				c[s] *= b.coef[s]
			}
			m.contrib[0] = append(m.contrib[0], contribution{q: q, k: kl[0], param: b.param, coef: c})
		}
	}
	return nil
}

// yQuantity returns the effective constant a Y_kl of state st contributes to
// and its sign.
func (m *Dunham) yQuantity(st int, kl [2]int) (quantity, float64, error) {
	switch kl[1] {
	case 0:
		return qT, 1, nil
	case 1:
		return qB, 1, nil
	case 2:
		return qD, -1, nil
	case 3:
		return qH, 1, nil
	case 4:
		return qL, 1, nil
	}
	return 0, 0, fmt.Errorf("model: %s of state %s: with electronic states or fine structure the rotational terms go up to l = 4 (Y_k4)", DunhamName(kl[0], kl[1]), m.states[st].Label)
}

// addFine adds the fine-structure parameters of state st.
func (m *Dunham) addFine(st int, fine []fineTerm) {
	for _, ft := range fine {
		j := len(m.params)
		name := FineDunhamName(quantityNames[ft.q], ft.k)
		m.params = append(m.params, Param{Name: name, V: -1, K: ft.k, L: -1, Species: m.species[0], State: m.stateLabel(st)})
		sign := 1.0
		if ft.k == 1 {
			sign = -1 // X_v = X_e − α_X (v+½)
		}
		m.contrib[st] = append(m.contrib[st], contribution{q: ft.q, k: ft.k, param: j, coef: m.scaled(ft.k+2*rotOrder(ft.q), sign)})
	}
}

// ones returns a coefficient of 1 for every species.
func (m *Dunham) ones() []float64 {
	c := make([]float64, len(m.isos))
	for i := range c {
		c[i] = 1
	}
	return c
}

// scaled returns sign·(μ_r/μ_s)^(n/2) for every species s.
func (m *Dunham) scaled(n int, sign float64) []float64 {
	c := make([]float64, len(m.isos))
	muR := m.isos[0].ReducedMass()
	for s, iso := range m.isos {
		c[s] = sign * math.Pow(muR/iso.ReducedMass(), float64(n)/2)
	}
	return c
}

// sortedTerms parses Y_kl names and orders them by l, then k.
func sortedTerms(names []string) ([][2]int, error) {
	var out [][2]int
	for _, n := range names {
		k, l, err := ParseDunhamTerm(n)
		if err != nil {
			return nil, err
		}
		out = append(out, [2]int{k, l})
	}
	sort.Slice(out, func(a, b int) bool {
		if out[a][1] != out[b][1] {
			return out[a][1] < out[b][1]
		}
		return out[a][0] < out[b][0]
	})
	return out, nil
}

// HasVibronic reports whether the model evaluates level v of state st of
// species s (any v ≥ 0 of a state of the model).
func (m *Dunham) HasVibronic(s, st, v int) bool {
	return v >= 0 && s >= 0 && s < len(m.species) && st >= 0 && st < len(m.states)
}

// vibConstants implements vibSource.
func (m *Dunham) vibConstants(s, st, v int, p []float64) (c [nQ]float64, ok bool) {
	if !m.HasVibronic(s, st, v) {
		return c, false
	}
	var vp [10]float64
	powers(vp[:], float64(v)+0.5, len(vp)-1)
	for _, t := range m.contrib[st] {
		c[t.q] += t.coef[s] * vp[t.k] * p[t.param]
	}
	return c, true
}

// vibGradient implements vibSource.
func (m *Dunham) vibGradient(s, st, v int, dE [nQ]float64, w float64, grad []float64) {
	var vp [10]float64
	powers(vp[:], float64(v)+0.5, len(vp)-1)
	for _, t := range m.contrib[st] {
		grad[t.param] += w * dE[t.q] * t.coef[s] * vp[t.k]
	}
}

// LevelEnergy implements LevelModel.
func (m *Dunham) LevelEnergy(s int, lv Level, p []float64, grad []float64) float64 {
	if m.closedShell() {
		if lv.State != 0 || lv.J2%2 != 0 || !m.HasVibronic(s, 0, lv.V) {
			return math.NaN()
		}
		return m.Energy(s, lv.V, lv.J2/2, p, grad)
	}
	return m.levelEnergy(m, s, lv, p, grad)
}

// LevelTransition implements LevelModel.
func (m *Dunham) LevelTransition(s int, up, lo Level, p []float64, grad []float64) (nu, mag float64) {
	if m.closedShell() {
		return closedLevelTransition(m, s, up, lo, p, grad)
	}
	return m.levelTransition(m, s, up, lo, p, grad)
}

// Sublevels implements LevelModel.
func (m *Dunham) Sublevels(s, st, v, j2max int, p []float64, withGrad bool, fn func(Sublevel)) {
	if m.closedShell() {
		closedSublevels(m, s, v, j2max, p, withGrad, fn)
		return
	}
	m.sublevels(m, len(m.params), s, st, v, j2max, p, withGrad, fn)
}

// closedLevelTransition is LevelTransition of a model of one ¹Σ ground
// state through Transition: NaN (and a zero gradient) for a level that is
// not one of its levels (another state, half-integer J, negative v).
func closedLevelTransition(m Transitioner, s int, up, lo Level, p []float64, grad []float64) (nu, mag float64) {
	if up.State != 0 || lo.State != 0 || up.J2%2 != 0 || lo.J2%2 != 0 || up.V < 0 || lo.V < 0 {
		if grad != nil {
			clear(grad)
		}
		return math.NaN(), math.NaN()
	}
	return m.Transition(s, up.V, up.J2/2, lo.V, lo.J2/2, p, grad)
}

// closedSublevels enumerates the levels of a ¹Σ ground state through
// Energy.
func closedSublevels(m Model, s, v, j2max int, p []float64, withGrad bool, fn func(Sublevel)) {
	if !m.HasLevel(s, v) {
		return
	}
	var grad []float64
	if withGrad {
		grad = make([]float64, len(p))
	}
	for J := 0; 2*J <= j2max; J++ {
		e := m.Energy(s, v, J, p, grad)
		fn(Sublevel{Level: Level{V: v, J2: 2 * J, Parity: states.ParityE}, N: J, E: e, Grad: grad})
	}
}

// FineConstant returns the fine-structure constant a parameter belongs to in
// the trade's name ("A", "gamma", "p", "A_D", …) and its v-power k (0 for a
// term-values constant or X_e, 1 for α_X), or ok false for a parameter that
// is not a fine-structure constant.
func FineConstant(p Param) (name string, k int, ok bool) {
	if q := quantityOf(p.Name); q >= fineStart {
		return p.Name, 0, true
	}
	if p.V >= 0 {
		return "", 0, false
	}
	if q, k, ok := parseFineDunham(p.Name); ok {
		return quantityNames[q], k, true
	}
	return "", 0, false
}

// RotationalConstant returns the rotational constant ("B", "D", "H", "L") a
// parameter is, or the one a Dunham Y_k1 … Y_k4 contributes to with its
// v-power k; ok false otherwise.
func RotationalConstant(p Param) (name string, k int, ok bool) {
	if q := quantityOf(p.Name); q >= qB && q < fineStart {
		return p.Name, 0, true
	}
	if p.K >= 0 && p.L >= 1 && p.L <= 4 && p.Element == "" {
		return quantityNames[qB+quantity(p.L-1)], p.K, true
	}
	return "", 0, false
}
