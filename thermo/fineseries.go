package thermo

import (
	"fmt"
	"math"

	"bandwright/fit/model"
	"bandwright/fit/states"
)

// The truncation of the fine-structure v-expansions of a Dunham record.
//
// A Dunham record with the anharmonic term Y20 describes every v, its
// fine-structure constants included: X_v = X_e − α_X (v+½) (or X_e alone), a
// series extrapolated to every unobserved v with nothing in the budget for
// the terms it lacks. The budget's fine_structure_constants entry takes for
// such a record the next term of each constant's series at its expected
// size, applied beyond the highest observed v like the other series entries
// (addDirections):
//
//	δX_v = c_X·P_n(v+½; v_max+½),  δE_i = ∂E_i/∂X·δX_v  (Hellmann–Feynman),
//
// with c_X, n from model.NextTerm (c = α_X²/|X_e|, n = 2, after X_e and α_X: the
// series continued geometrically, common practice for an order of
// magnitude), or, after X_e alone, the slope the constant's rotational order
// suggests, c = |X_e|·max(fineDriftPerV, r·α_e/B_e), n = 1: a constant whose
// leading contribution carries B^r (r = 0 for A and λ, 1 for γ, p and the
// first distortions of A and λ, 2 for q; model.RotationalOrder) is taken to
// change with v like B_v^r, and by at least fineDriftPerV per quantum (our
// own estimate, the rule model.Dunham uses for the mass scaling of these
// constants applied to their v-dependence; α_e/B_e from the record's Y11 and
// Y01). Each constant is one first-order direction; the constants' terms are
// combined in quadrature (independent, of unknown sign).

// fineSeriesSize is the next term c·(v+½)^n of one fine-structure constant's
// series in one manifold (n 0: none).
type fineSeriesSize struct {
	c float64
	n int
}

// fineSeriesSizes returns the next term of the series of fine-structure
// constant q of the manifold's source (see above); n = 0 where the source is
// not a Dunham record's every-v fine-structure source or the constant is
// zero.
func fineSeriesSizes(m *manifold, q int) fineSeriesSize {
	src := m.src
	if src.fine == nil || src.record != nil || !src.fine.hasFineConstants() {
		return fineSeriesSize{}
	}
	a, ok := model.VibronicSeries(src.fine.lm, src.sp, src.fine.rst, q, src.c.Values)
	if !ok {
		return fineSeriesSize{}
	}
	if c, n, ok := model.NextTerm(a, 0); ok {
		return fineSeriesSize{c, n}
	}
	last := -1
	for k, x := range a {
		if x != 0 && !math.IsNaN(x) {
			last = k
		}
	}
	if last != 0 {
		return fineSeriesSize{}
	}
	return fineSeriesSize{math.Abs(a[0]) * fineRatePerV(src.vib, q), 1}
}

// fineRatePerV is the relative change per vibrational quantum taken for
// fine-structure constant q where the data give it at one vibrational level
// only: max(fineDriftPerV, r·|α_e/B_e|), r its rotational order
// (model.RotationalOrder), α_e/B_e from the vibrational structure vib (the
// record's B_v, or the Pekeris α_e after one level). Our own estimate: the
// constant taken to vary with v like B_v^r (as its mass scaling does), and by
// at least fineDriftPerV.
func fineRatePerV(vib vibStructure, q int) float64 {
	rate := fineDriftPerV
	if b := vib.b; len(b) >= 2 && b[0] > 0 {
		rate = math.Max(rate, float64(model.RotationalOrder(q))*math.Abs(b[1]/b[0]))
	}
	return rate
}

// fineSeriesContribution is the budget entry of the directions.
var fineSeriesContribution = Contribution{Name: ContribFineConstants,
	What:         "the fine-structure constants (A, γ, λ, p, q, …) of the vibrational levels the data do not reach",
	Alternatives: []string{"the next term of each fine-structure constant's v-expansion at its expected size beyond the observed v"},
	Method:       methodFirstOrder + "; δE_i = ∂E_i/∂X·δX (Hellmann–Feynman), one direction per constant, combined in quadrature",
	Rule: fmt.Sprintf("Dunham record: next term c·(v+½)^n of X_v = X_e − α_X (v+½) with c = α_X²/|X_e| (the series continued geometrically; common practice: order of magnitude), "+
		"or after X_e alone c = |X_e|·max(%g %%, r·α_e/B_e) per quantum, r the rotational order of X (0 for A and λ, 1 for γ and p, 2 for q; X taken to vary with v like B_v^r, our own estimate), "+
		"applied as c·P_n(v+½; v_max+½) beyond the highest observed v", 100*fineDriftPerV)}

// fineSeriesDirections returns one direction per fine-structure constant
// that some manifold's series has (see above).
func (sys *System) fineSeriesDirections() []direction {
	var dirs []direction
	for q := model.QuantityIndex("A"); q < model.NumQuantities; q++ {
		sizes := map[*manifold]fineSeriesSize{}
		for _, m := range sys.manifolds {
			if s := fineSeriesSizes(m, q); s.n > 0 && s.c != 0 {
				sizes[m] = s
			}
		}
		if len(sizes) == 0 {
			continue
		}
		dirs = append(dirs, direction{c: fineSeriesContribution, phi: fineSeriesPhi(q, sizes)})
	}
	return dirs
}

// fineSeriesPhi returns δE of level k of manifold m for the next term of
// constant q: ∂E/∂c_q·c·P_n(v+½; v_max+½) beyond the highest observed v, 0
// elsewhere. The effective constants of the last v are kept between calls
// (the levels come by v).
func fineSeriesPhi(q int, sizes map[*manifold]fineSeriesSize) func(m *manifold, k int) float64 {
	var cm *manifold
	cv := -1
	var c model.Effective
	return func(m *manifold, k int) float64 {
		s, ok := sizes[m]
		if !ok {
			return 0
		}
		v, vm := int(m.v[k]), m.vObsOr(m.src.vib)
		if v <= vm {
			return 0
		}
		f := m.src.fine
		if m != cm || v != cv {
			if c, ok = f.constantsAt(v, m.src.c.Values); !ok {
				return 0
			}
			cm, cv = m, v
		}
		var dE model.Effective
		lv := model.Level{V: v, J2: int(m.j2[k]), F: int(m.f[k]), Parity: states.Parity(m.ef[k])}
		if _, ok := model.EffectiveLevelGradient(f.state, &c, lv, &dE); !ok {
			return 0
		}
		return dE[q] * s.c * beyond(float64(v)+0.5, float64(vm)+0.5, s.n)
	}
}
