package model

import (
	"bandwright/fit/states"
)

// Effective holds the effective constants c_q of one vibronic level in the
// order of QuantityNames (cm⁻¹, with the signs of the package doc: D enters
// as −D N⁴). A level's energy is c_T plus an eigenvalue of Σ_q c_q M_q.
//
// The thermo stage works with these: it takes the constants of the
// vibronic levels a record describes (VibronicConstants,
// VibronicGradient), extrapolates those of the levels it lacks, and
// evaluates the levels of any of them (EffectiveComponents).
type Effective [nQ]float64

// NumQuantities is the number of effective constants (the length of
// Effective).
const NumQuantities = int(nQ)

// QuantityNames returns the names of the effective constants in the order
// of Effective: T, B, D, H, L, A, A_D, A_H, gamma, gamma_D, gamma_H, lambda,
// lambda_D, lambda_H, p, q, p_D, q_D, p_H, q_H.
func QuantityNames() []string { return append([]string(nil), quantityNames[:]...) }

// QuantityIndex returns the index in Effective of the constant named name,
// or -1.
func QuantityIndex(name string) int { return int(quantityOf(name)) }

// VibronicConstants returns the effective constants of vibrational level v
// of electronic state st (index into States) of species s at parameters p,
// and false when m has no parameters for that level or is not a model of
// this package.
func VibronicConstants(m LevelModel, s, st, v int, p []float64) (Effective, bool) {
	src, ok := m.(vibSource)
	if !ok || !m.HasVibronic(s, st, v) {
		return Effective{}, false
	}
	c, ok := src.vibConstants(s, st, v, p)
	return Effective(c), ok
}

// VibronicGradient stores ∂c_q/∂p_j of the effective constant q (an index
// of Effective) of the vibronic level (s, st, v) in grad[j] for every model
// parameter j (len(p) of the model). The constants are linear in the
// parameters, so this is exact and does not depend on p.
func VibronicGradient(m LevelModel, s, st, v, q int, grad []float64) {
	clear(grad)
	src, ok := m.(vibSource)
	if !ok || q < 0 || q >= NumQuantities || !m.HasVibronic(s, st, v) {
		return
	}
	var unit [nQ]float64
	unit[q] = 1
	src.vibGradient(s, st, v, unit, 1, grad)
}

// EffectiveComponents calls fn for every level of state st at J = J2/2 of a
// vibronic level with effective constants c (vibrational level v, for the
// level's identity): its label (J, the case-(b) N, F, parity) and energy
// c_T + eigenvalue in cm⁻¹, as Sublevels gives them, and ∂E/∂c_q in dE
// (Hellmann–Feynman, dE[T] = 1; reused between calls). The ²Π J = ½ level
// is labelled F1 when c_A ≥ 0 and F2 otherwise, as in Sublevels.
func EffectiveComponents(st states.State, c *Effective, v, j2 int, fn func(l Sublevel, dE *Effective)) {
	cs := st.Case()
	if cs == states.Unsupported {
		return
	}
	var b block
	var buf [4]states.Label
	var dE [nQ]float64
	cq := (*[nQ]float64)(c)
	for _, lab := range st.AppendComponents(buf[:0], j2, c[qA] >= 0) {
		lv := Level{V: v, J2: j2, F: lab.F, Parity: lab.Parity}
		if !b.setBlock(st, cs, lv) {
			continue
		}
		er, _ := b.solve(cq, &dE)
		fn(Sublevel{Level: lv, N: lab.N, E: c[qT] + er}, (*Effective)(&dE))
	}
}

// EffectiveLevel returns the energy of level lv of state st (lv.State is not
// read) for effective constants c, cm⁻¹, and false when the state has no
// such level.
func EffectiveLevel(st states.State, c *Effective, lv Level) (float64, bool) {
	var dE Effective
	return EffectiveLevelGradient(st, c, lv, &dE)
}

// EffectiveLevelGradient is EffectiveLevel that also stores ∂E/∂c_q in dE
// (Hellmann–Feynman, dE[T] = 1).
func EffectiveLevelGradient(st states.State, c *Effective, lv Level, dE *Effective) (float64, bool) {
	var b block
	if !b.setBlock(st, st.Case(), lv) {
		return 0, false
	}
	er, _ := b.solve((*[nQ]float64)(c), (*[nQ]float64)(dE))
	return c[qT] + er, true
}

// VibronicSeries returns the coefficients a_k of the effective constant q
// (an index of Effective) of state st of species s as a series in v + ½,
// c_q(v) = Σ_k a_k (v+½)^k (cm⁻¹; for a fine-structure constant X of the
// Dunham model a_0 = X_e and a_1 = −α_X, mass-scaled to species s), and
// false for a model whose constants are not such series (term values).
func VibronicSeries(m LevelModel, s, st, q int, p []float64) ([]float64, bool) {
	d, ok := m.(*Dunham)
	if !ok || q < 0 || q >= NumQuantities || s < 0 || s >= len(d.species) || st < 0 || st >= len(d.states) {
		return nil, false
	}
	var out []float64
	for _, t := range d.contrib[st] {
		if int(t.q) != q {
			continue
		}
		for len(out) <= t.k {
			out = append(out, 0)
		}
		out[t.k] += t.coef[s] * p[t.param]
	}
	return out, true
}

// RotationalOrder returns the rotational order of the fine-structure
// constant q (an index of Effective): the power of B its leading
// contribution carries — 0 for A and λ, 1 for γ, p and the first
// distortions of A and λ, 2 for q, … (see Dunham's mass scaling) — and -1
// for a constant that is not a fine-structure constant.
func RotationalOrder(q int) int {
	if q < int(fineStart) || q >= NumQuantities {
		return -1
	}
	return rotOrder(quantity(q))
}
