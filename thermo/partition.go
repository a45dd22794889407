package thermo

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/floats"

	"bandwright/fit/states"
	"bandwright/units"
)

// moments are the weighted Boltzmann sums of one pass at β = c₂/T:
//
//	a0 = Σ w e^(−βE) = Q,  a1 = Σ w E e^(−βE),  a2 = Σ w E² e^(−βE),
//	g0 = Σ w g e^(−βE),    g1 = Σ w E g e^(−βE), g2 = Σ w E² g e^(−βE),
//
// E in cm⁻¹ above the zero, g = ∂E/∂x (the fitted parameters, then the
// budget's directions), and ext the part of a0 from levels outside the
// fitted data. t, te, te2 are scratch (w e^(−βE) times 1, E, E²).
type moments struct {
	a0, a1, a2 float64
	ext        float64
	g0, g1, g2 []float64
	t, te, te2 []float64
}

func newMoments(p int) *moments {
	return &moments{g0: make([]float64, p), g1: make([]float64, p), g2: make([]float64, p)}
}

// cut returns the number of levels in a pass at β: those with βE ≤ cutExponent
// (the levels are sorted by E).
func (sys *System) cut(beta float64) int {
	limit := cutExponent / beta
	return sort.Search(len(sys.e), func(i int) bool { return sys.e[i] > limit })
}

// accumulate fills acc with the moments of the nominal levels at β. With grad
// false only a0, a1, a2 and ext are formed. The Boltzmann factors use the
// reduced-argument exponential of boltzmann (inlined here); the gradient sums
// are dot products over the column-major ∂E/∂x.
func (sys *System) accumulate(beta float64, acc *moments, grad bool) {
	n := sys.cut(beta)
	es := sys.e[:n]
	ws := sys.w[:n]
	ext := sys.ext[:n]
	q := sys.p + sys.pm
	grad = grad && q > 0
	if grad && cap(acc.t) < n {
		acc.t, acc.te, acc.te2 = make([]float64, len(sys.e)), make([]float64, len(sys.e)), make([]float64, len(sys.e))
	}
	var ts, tes, te2s []float64
	if grad {
		ts, tes, te2s = acc.t[:n], acc.te[:n], acc.te2[:n]
	}
	var a0, a1, a2, xs float64
	for i, e := range es {
		// e^(−βE), reduced argument (see boltzmann); −βE ∈ [−50, 0].
		x := -beta * e
		k := int(x*expInvLn2 - 0.5) // nearest integer for x ≤ 0 (see boltzmann)
		fk := float64(k)
		r := (x - fk*expLn2Hi) - fk*expLn2Lo
		p := 1 + r*(1+r*(0.5+r*(1.0/6+r*(1.0/24+r*(1.0/120)))))
		t := ws[i] * expTable[k&255] * p * math.Float64frombits(uint64((k>>8)+1023)<<52)
		te := t * e
		te2 := te * e
		a0 += t
		a1 += te
		a2 += te2
		if ext[i] {
			xs += t
		}
		if grad {
			ts[i], tes[i], te2s[i] = t, te, te2
		}
	}
	acc.a0, acc.a1, acc.a2, acc.ext = a0, a1, a2, xs
	if !grad {
		return
	}
	N := len(sys.e)
	for k := 0; k < q; k++ {
		col := sys.g[k*N : k*N+n]
		acc.g0[k] = floats.Dot(ts, col)
		acc.g1[k] = floats.Dot(tes, col)
		acc.g2[k] = floats.Dot(te2s, col)
	}
}

// accumulateAt fills a0, a1, a2 of acc for level energies e (same order and
// truncation as the nominal levels: a level is in the pass when its nominal
// energy is).
func (sys *System) accumulateAt(e []float64, beta float64, acc *moments) {
	n := sys.cut(beta)
	ws := sys.w[:n]
	e = e[:n]
	var a0, a1, a2 float64
	for i, ei := range e {
		x := -beta * ei
		var b float64
		if x >= -700 && x <= 700 {
			k := int(x*expInvLn2 - 0.5)
			fk := float64(k)
			r := (x - fk*expLn2Hi) - fk*expLn2Lo
			p := 1 + r*(1+r*(0.5+r*(1.0/6+r*(1.0/24+r*(1.0/120)))))
			b = expTable[k&255] * p * math.Float64frombits(uint64((k>>8)+1023)<<52)
		} else {
			b = math.Exp(x)
		}
		t := ws[i] * b
		te := t * ei
		a0 += t
		a1 += te
		a2 += te * ei
	}
	acc.a0, acc.a1, acc.a2, acc.ext = a0, a1, a2, 0
}

// ClosedForm returns the closed high-temperature form of Q at temperature T:
//
//	Q_cf = Σ_states Σ_v f_ns·g_e·e^(−c₂(T_s + G_v − E₀)/T) · T/(σc₂B_v) · (1 + u/3 + u²/15 + 4u³/315),
//
// u = c₂B_v/T (Mulholland 1928), σ = 2 for homonuclear molecules, f_ns = 1 in
// the thermochemistry convention and (2I_A+1)(2I_B+1) in the line-intensity
// convention, over the same vibrational levels v as the exact sum (G_v = E(v, J=0),
// B_v the rotational constant of level v). It differs from the exact Q only in
// the rotational sum, so its relative error shows where the rigid-rotor integral
// fails: low T, light molecules, strong centrifugal distortion at high T. For a
// state whose fine structure is resolved G_v is the vibronic term value T_v and
// its g_e components sit there: the form then also fails where kT is not large
// against the fine-structure splitting (NO ²Π below about 1000 K).
func (sys *System) ClosedForm(T float64) float64 {
	beta := units.SecondRadiation / T
	eNeg := cutExponent * sys.tMax / units.SecondRadiation
	q := 0.0
	for i, st := range sys.states {
		m := sys.manifolds[sys.stateMan[i]]
		ge := ElectronicDegeneracy(st.Multiplicity, st.Lambda) * sys.spinFactor
		for _, r := range m.rot {
			if !(r.b > 0) {
				continue
			}
			de := sys.stateTerm[i] + r.g - sys.e0
			if de > eNeg {
				continue
			}
			u := units.SecondRadiation * r.b / T
			rot := T / (float64(sys.sigmaNumber) * units.SecondRadiation * r.b) * (1 + u/3 + u*u/15 + 4*u*u*u/315)
			q += ge * math.Exp(-beta*de) * rot
		}
	}
	return q
}

// Population is the fraction of molecules in one rovibrational level (all its
// 2J+1 components and nuclear-spin states together). N is J for a level
// whose fine structure is not resolved; F and Parity identify a
// fine-structure component (0 and NoParity otherwise).
type Population struct {
	State    string
	V, N     int
	J        float64
	F        int
	Parity   states.Parity
	Energy   float64 // cm⁻¹ above the zero
	Fraction float64
}

// Populations returns the fraction w_i e^(−c₂E_i/T)/Q of every level in the sum
// at temperature T, in order of energy.
func (sys *System) Populations(T float64) []Population {
	beta := units.SecondRadiation / T
	acc := newMoments(0)
	sys.accumulate(beta, acc, false)
	out := make([]Population, len(sys.e))
	for i, e := range sys.e {
		st := int(sys.st[i])
		m := sys.manifolds[sys.stateMan[st]]
		k := sys.lv[i]
		out[i] = Population{State: sys.states[st].Label, V: int(m.v[k]), N: int(m.J[k]), J: float64(m.j2[k]) / 2, F: int(m.f[k]), Parity: states.Parity(m.ef[k]), Energy: e,
			Fraction: sys.w[i] * math.Exp(-beta*e) / acc.a0}
	}
	return out
}
