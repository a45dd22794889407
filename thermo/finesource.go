package thermo

import (
	"fmt"
	"math"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// fineLevels is the part of a level source for an electronic state whose
// constants record resolves its fine structure: every level is a
// fine-structure or Λ-doubling component (J, F, e/f) of a vibronic level,
// evaluated from the vibronic level's effective constants c_q (T, B, D, …, A,
// γ, λ, p, q; see package fit/model) by the state's effective Hamiltonian.
//
// The constants of the vibrational levels the record describes are linear
// forms over the record's values (model.VibronicConstants and
// model.VibronicGradient); those of the levels it lacks are extrapolated as
// in a ¹Σ source: T_v and B_v from the vibrational structure, D, H, L the
// means over the record's levels, and the fine-structure constants those of
// the nearest record level (nominal) or, as the alternative of the budget
// (fineAlternative), extrapolated linearly in v from the record's levels
// (two or more) or changed by fineRatePerV per vibrational quantum (one).
// A Dunham record with Y20 describes every v, its fine-structure constants
// through their v-expansions; the budget takes the next term of those
// (fineseries.go). The gradient of a level over the record's values is
// Σ_q ∂E/∂c_q·∂c_q/∂vals (Hellmann–Feynman).
type fineLevels struct {
	lm    model.LevelModel
	rst   int          // the state's index in the record's states
	state states.State // as the record describes it
	label string       // "" for the record's ground state (levels_observed)
	// eff[v] holds the forms of the effective constants of level v
	// (model.NumQuantities of them); nil: no such level.
	eff [][]linForm
}

// fineDriftPerV is the least relative change per vibrational quantum of the
// fine-structure constants the budget assumes where the data give them at a
// single vibrational level (fineRatePerV): the spin–orbit constants of NO and
// OH change by about 0.2 % per quantum and the spin–spin constant of O2 by
// less than 1 % (Huber & Herzberg 1979, from memory); 1 % covers them.
const fineDriftPerV = 0.01

// Indices of the effective constants.
var (
	qT = model.QuantityIndex("T")
	qB = model.QuantityIndex("B")
	qA = model.QuantityIndex("A")
)

// polyOrder maps the coefficients a_l of x^l of a ¹Σ level (levelForms: T,
// B, −D, H, L) to the effective constants and their signs.
var polyOrder = [...]struct {
	name string
	sign float64
}{{"T", 1}, {"B", 1}, {"D", -1}, {"H", 1}, {"L", 1}}

// recordFineState returns the index of the state of the record c that
// thermo state st takes its levels from, and whether the record resolves
// its fine structure: a record with electronic states (a fit with an
// electronic-states file) describes st when one of its states carries st's
// label (the ground state of the sum may carry another label: it takes the
// record's ground state). A record whose only state is ¹Σ describes no fine
// structure. The terms must agree.
func recordFineState(c *constants.Set, st State, ground bool) (int, bool, error) {
	if constants.RecordStates(c.Model) == nil {
		return -1, false, nil
	}
	sts := c.States()
	if len(sts) == 1 && sts[0].Case() == states.Singlet {
		return -1, false, nil
	}
	i := states.Index(sts, st.Label)
	if i < 0 && ground {
		i = 0
	}
	if i < 0 {
		return -1, false, nil
	}
	r := sts[i]
	if r.Multiplicity != st.Multiplicity || r.Lambda != st.Lambda || !sameSymmetry(r, st) {
		return -1, false, fmt.Errorf("thermo: state %s: the electronic-states file gives %d%s with symmetry %q, the constants record describes its state %s as %s",
			st.Label, st.Multiplicity, lambdaLetter(st.Lambda), st.Symmetry.String(), r.Label, r.Term())
	}
	return i, true, nil
}

// sameSymmetry reports whether the symmetries agree where both give them.
func sameSymmetry(r states.State, st State) bool {
	a, b := r.Symmetry, st.Symmetry
	return (a.Parity == 0 || b.Parity == 0 || a.Parity == b.Parity) &&
		(a.Reflection == 0 || b.Reflection == 0 || a.Reflection == b.Reflection)
}

func lambdaLetter(l int) string {
	letters := []string{"Σ", "Π", "Δ", "Φ", "Γ"}
	if l < len(letters) {
		return letters[l]
	}
	return fmt.Sprintf("(Λ=%d)", l)
}

// newFineSource makes the level source of state rst of the record c for
// species sp, which resolves the state's fine structure; obs lists the
// levels the fitted data reached in that state.
func newFineSource(c *constants.Set, sp, rst int, obs []int, ch extChoice) *levelSource {
	lm := c.Model.(model.LevelModel)
	st := lm.States()[rst]
	f := &fineLevels{lm: lm, rst: rst, state: st}
	if rst > 0 {
		f.label = st.Label
	}
	s := &levelSource{c: c, sp: sp, choice: ch, fine: f}
	if dm, ok := c.Model.(*model.Dunham); ok && rst == 0 && dunhamAnharmonic(dm) {
		// Every v from the expansions.
		s.vib = dunhamVibration(dm, sp, c.Values, obs)
		return s
	}
	if _, ok := c.Model.(*model.TermValues); ok {
		for v := 0; v <= maxV; v++ {
			if lm.HasVibronic(sp, rst, v) && !(rst == 0 && c.Unconnected(sp, v)) {
				s.recV = append(s.recV, v)
			}
		}
	} else {
		s.recV = append([]int(nil), obs...)
	}
	if len(s.recV) == 0 {
		s.recV = []int{0}
	}
	s.record = map[int]bool{}
	for _, v := range s.recV {
		s.record[v] = true
	}
	s.extendVibration()
	f.extendFine(s)
	return s
}

// recordEffective returns the forms of the effective constants of record
// level v (nil when the record has no such level).
func (f *fineLevels) recordEffective(c *constants.Set, sp, v int) []linForm {
	if v < len(f.eff) && f.eff[v] != nil {
		return f.eff[v]
	}
	val, ok := model.VibronicConstants(f.lm, sp, f.rst, v, c.Values)
	if !ok {
		return nil
	}
	out := make([]linForm, model.NumQuantities)
	for q := range out {
		out[q] = newForm(len(c.Values))
		model.VibronicGradient(f.lm, sp, f.rst, v, q, out[q].g)
		// The constants are linear and homogeneous in the values; c0 keeps
		// any remainder exact.
		out[q].c0 = val[q] - out[q].eval(c.Values) + out[q].c0
	}
	for len(f.eff) <= v {
		f.eff = append(f.eff, nil)
	}
	f.eff[v] = out
	return out
}

// polyForms returns the coefficients a_l of x^l (T, B, −D, H, L) of the
// effective constants eff, as levelForms gives them for a ¹Σ level.
func polyForms(eff []linForm) []linForm {
	out := make([]linForm, len(polyOrder))
	for l, p := range polyOrder {
		f := eff[model.QuantityIndex(p.name)]
		out[l] = linForm{c0: p.sign * f.c0, g: append([]float64(nil), f.g...)}
		for j := range out[l].g {
			out[l].g[j] *= p.sign
		}
	}
	return out
}

// extendFine makes the effective constants of the levels the record lacks
// from the extrapolated coefficients s.ext (see fineLevels).
func (f *fineLevels) extendFine(s *levelSource) {
	for v, ext := range s.ext {
		if ext == nil {
			continue
		}
		a := s.anchor(v)
		va := s.recV[a]
		base := f.recordEffective(s.c, s.sp, va)
		out := make([]linForm, model.NumQuantities)
		for q := range out {
			out[q] = base[q].plus(0, base[q])
		}
		for l, p := range polyOrder {
			q := model.QuantityIndex(p.name)
			out[q] = newForm(len(s.c.Values)).plus(p.sign, ext[l])
			if l+1 >= len(ext) {
				break
			}
		}
		for q := qA; q < model.NumQuantities; q++ {
			out[q] = f.fineExtrapolated(s, q, v, a)
		}
		for len(f.eff) <= v {
			f.eff = append(f.eff, nil)
		}
		f.eff[v] = out
	}
}

// fineExtrapolated returns fine-structure constant q of the extrapolated
// level v with anchor record level index a: the anchor's value, or with the
// build's fineAlternative, the linear extrapolation from the record's levels
// (least squares in v, two or more levels) or the anchor's value changed by
// fineRatePerV·|v − v_a|, in the direction away from zero.
func (f *fineLevels) fineExtrapolated(s *levelSource, q, v, a int) linForm {
	va := s.recV[a]
	base := f.recordEffective(s.c, s.sp, va)[q]
	if !s.choice.fineAlternative {
		return base.plus(0, base)
	}
	if len(s.recV) >= 2 {
		rec := make([][]linForm, len(s.recV))
		for i, rv := range s.recV {
			rec[i] = []linForm{f.recordEffective(s.c, s.sp, rv)[q]}
		}
		coef := leastSquaresForms(s.recV, rec, 0, func(u float64) []float64 { return []float64{1, u} })
		if coef != nil {
			u := float64(v) + 0.5
			return coef[0].plus(u, coef[1])
		}
	}
	return base.plus(fineRatePerV(s.vib, q)*math.Abs(float64(v-va)), base)
}

// constantsAt returns the effective constants of level v at the record's
// values vals (the forms evaluated); the level's forms must have been made
// (extendFine, ensure), as they are for every level enumerated: the Monte
// Carlo draws read them concurrently.
func (f *fineLevels) constantsAt(v int, vals []float64) (model.Effective, bool) {
	var c model.Effective
	if v < 0 || v >= len(f.eff) || f.eff[v] == nil {
		return c, false
	}
	for q, fm := range f.eff[v] {
		c[q] = fm.eval(vals)
	}
	return c, true
}

// ensure makes the forms of every record level available (Dunham records
// of every v make them on demand).
func (f *fineLevels) ensure(s *levelSource, v int) bool {
	if v < len(f.eff) && f.eff[v] != nil {
		return true
	}
	if s.record != nil && !s.record[v] {
		return false
	}
	return f.recordEffective(s.c, s.sp, v) != nil
}

// freeGradients returns ∂c_q/∂x over the record's fitted parameters of level
// v, q-major (len NumQuantities·len(Free)).
func (f *fineLevels) freeGradients(free []int, v int) []float64 {
	n := len(free)
	out := make([]float64, model.NumQuantities*n)
	for q, fm := range f.eff[v] {
		for k, j := range free {
			out[q*n+k] = fm.g[j]
		}
	}
	return out
}

// totalParity returns the parity ± (+1, −1) of a level with rotationless
// parity ef (e +1, f −1) at J = J2/2: e levels have parity +(−1)^(J−½) for
// half-integer J and +(−1)^J for integer J (Brown et al. 1975), f levels the
// opposite.
func totalParity(j2 int, ef states.Parity) int8 {
	sign := int8(1)
	if (j2/2)%2 == 1 {
		sign = -1
	}
	return sign * int8(ef)
}

// hasFineConstants reports whether the state's case has fine-structure
// constants (a ¹Σ state of a record with states has none).
func (f *fineLevels) hasFineConstants() bool {
	return f.state.Multiplicity > 1 || f.state.Lambda > 0
}
