package thermo

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/model"
)

// linForm is a quantity linear in the values of a constants record:
// c0 + Σ_j g_j·vals_j (cm⁻¹). The models of fit/model are linear in their
// parameters, so every coefficient of their energy polynomials is one.
type linForm struct {
	c0 float64
	g  []float64 // len(vals) of the record
}

func newForm(n int) linForm { return linForm{g: make([]float64, n)} }

func (f linForm) eval(vals []float64) float64 { return f.c0 + floats.Dot(f.g, vals) }

// plus returns f + a·o.
func (f linForm) plus(a float64, o linForm) linForm {
	out := linForm{c0: f.c0 + a*o.c0, g: append([]float64(nil), f.g...)}
	floats.AddScaled(out.g, a, o.g)
	return out
}

// levelForms returns the energy of level v of species sp as a polynomial in
// x = J(J+1), E(v, J) = Σ_l a_l(v)·x^l, with every a_l a linForm over the
// record's values: for the term-values model a_0 = T_v, a_1 = B_v, a_2 = −D_v,
// a_3 = H_v, a_4 = L_v; for the Dunham model a_l = Σ_k Y_kl(sp)·(v+½)^k. ok is
// false for a level the record does not have and for other models.
func levelForms(c *constants.Set, sp, v int) (forms []linForm, ok bool) {
	n := len(c.Values)
	switch m := c.Model.(type) {
	case *model.TermValues:
		if !m.HasLevel(sp, v) {
			return nil, false
		}
		forms = []linForm{newForm(n)}
		forms[0].g[m.Index(sp, v, "T")] = 1
		grad := make([]float64, n)
		m.Energy(sp, v, 1, c.Values, grad) // x = 2: ∂E/∂p_t = sign_t·2^pow
		rot := model.RotTerms()
		for _, t := range m.Terms() {
			pow := indexOf(rot, t) + 1
			for len(forms) <= pow {
				forms = append(forms, newForm(n))
			}
			idx := m.Index(sp, v, t)
			forms[pow].g[idx] = grad[idx] / math.Pow(2, float64(pow))
		}
		return forms, true
	case *model.Dunham:
		if v < 0 {
			return nil, false
		}
		u := float64(v) + 0.5
		grad := make([]float64, n)
		for _, kl := range m.Terms() {
			for len(forms) <= kl[1] {
				forms = append(forms, newForm(n))
			}
			m.Y(sp, kl[0], kl[1], c.Values, grad)
			floats.AddScaled(forms[kl[1]].g, math.Pow(u, float64(kl[0])), grad)
		}
		if len(forms) == 0 {
			forms = []linForm{newForm(n)}
		}
		return forms, true
	}
	return nil, false
}

func indexOf(xs []string, s string) int {
	for i, x := range xs {
		if x == s {
			return i
		}
	}
	return -1
}

// Prior of the anharmonicity x_e = ω_e x_e/ω_e where the data cannot give it:
// the ground states of diatomic molecules span roughly 0.002 (heavy molecules,
// I2, Cs2) to 0.03 (hydrides, H2, HF) (Huber & Herzberg 1979, from memory). The
// nominal value is the geometric centre of that range; the two ends are the
// alternatives of the budget.
const (
	xePriorLow  = 0.002
	xePriorHigh = 0.03
)

// xePriorCentre is the geometric centre of the x_e prior.
var xePriorCentre = math.Sqrt(xePriorLow * xePriorHigh)

// extChoice holds the values a level source takes where the record cannot give
// them; the budget's alternatives vary them.
type extChoice struct {
	xe    float64 // x_e of the prior (records with one or two vibrational levels)
	omega float64 // ω_e, cm⁻¹, from the electronic-states file (one vibrational level)
	// omegaX is ω_e x_e, cm⁻¹, from the electronic-states file (one
	// vibrational level, with omega); 0: x_e of the prior. omegaXExact: it
	// was given without σ.
	omegaX      float64
	omegaXExact bool
	alphaScale  float64 // factor on the Pekeris estimate of α_e (one vibrational level)
	// fineAlternative: the fine-structure constants of the levels a
	// fine-structure record lacks are extrapolated (the budget's
	// alternative) instead of held at the nearest record level.
	fineAlternative bool
}

// vibStructure is the vibrational structure of a manifold at the record's
// values: G(v) ≈ Σ_k g_k (v+½)^k and B_v ≈ Σ_k b_k (v+½)^k, as the record
// determines them (Dunham: Y_k0, Y_k1; term values: fitted to the band origins
// and the B_v of the record's levels), with ω_e x_e > 0 where a prior gives it.
type vibStructure struct {
	// determined: the record (or ω_e of the electronic-states file) fixes the
	// vibrational spacing.
	determined bool
	// anharmonic: the anharmonicity comes from the record (not the prior).
	anharmonic bool
	// givenAnharmonic: ω_e x_e comes from the electronic-states file (one
	// vibrational level), not from the prior.
	givenAnharmonic bool
	omega, omegaX   float64   // ω_e, ω_e x_e, cm⁻¹
	g, b            []float64 // coefficients of (v+½)^k in G(v) (g[0] unused) and B_v
	vObsMax         int       // highest vibrational level the record determines directly
}

// levelSource is where the levels of one manifold come from: the constants
// record of a state for the vibrational levels it describes, and an
// extrapolation of its vibrational structure for the levels it lacks (see
// newLevelSource). It is separate from the budget, which only varies the
// choices of the extrapolation and the limits of the sum.
type levelSource struct {
	c  *constants.Set
	sp int
	// blk is the parameter block of the record (index in System.blocks).
	blk int
	// fine is set when the record resolves the state's fine structure: the
	// levels are its components (see fineLevels); nil: the levels of the
	// model's Energy, E(v, J) of a ¹Σ state (J read as N for a state with
	// spin).
	fine *fineLevels
	// record lists the vibrational levels the record describes; nil: every v
	// (a Dunham model with an anharmonic term).
	record map[int]bool
	recV   []int // sorted
	// ext[v] holds the coefficients a_l(v) of an extrapolated level; nil for
	// a level of the record and beyond the extrapolation.
	ext    [][]linForm
	vib    vibStructure
	choice extChoice
	// note says how the extrapolated levels are made (empty: none).
	note string
	// warn holds the source's warnings (levels of the record left out).
	warn []string
}

// has reports whether level v exists in the source.
func (s *levelSource) has(v int) bool {
	if v < 0 {
		return false
	}
	if s.record == nil || s.record[v] {
		return true
	}
	return v < len(s.ext) && s.ext[v] != nil
}

// extrapolated reports whether level v comes from the extrapolation.
func (s *levelSource) extrapolated(v int) bool {
	return s.record != nil && !s.record[v] && s.has(v)
}

// energy returns E(v, J) in the model's zero (cm⁻¹) and ∂E/∂vals in grad
// (len(vals); may be nil); NaN for a level the source does not have.
func (s *levelSource) energy(v, J int, vals, grad []float64) float64 {
	if s.record == nil || s.record[v] {
		return s.c.Model.Energy(s.sp, v, J, vals, grad)
	}
	if grad != nil {
		clear(grad)
	}
	if !s.has(v) {
		return math.NaN()
	}
	x := float64(J) * float64(J+1)
	e, xl := 0.0, 1.0
	for _, f := range s.ext[v] {
		e += xl * f.eval(vals)
		if grad != nil {
			floats.AddScaled(grad, xl, f.g)
		}
		xl *= x
	}
	return e
}

// forms returns the coefficients a_l(v) of level v (nil when not available);
// for a fine-structure source those of its rotational constants (T, B, −D,
// H, L).
func (s *levelSource) forms(v int) []linForm {
	if s.extrapolated(v) && s.fine == nil {
		return s.ext[v]
	}
	if s.fine != nil {
		if !s.fine.ensure(s, v) {
			return nil
		}
		return polyForms(s.fine.eff[v])
	}
	f, ok := levelForms(s.c, s.sp, v)
	if !ok {
		return nil
	}
	return f
}

// recordForms returns the coefficients a_l(v) of record level v (see
// forms); ok is false when they cannot be had.
func (s *levelSource) recordForms(v int) ([]linForm, bool) {
	if s.fine != nil {
		eff := s.fine.recordEffective(s.c, s.sp, v)
		if eff == nil {
			return nil, false
		}
		return polyForms(eff), true
	}
	return levelForms(s.c, s.sp, v)
}

// origin returns the vibrational term of level v at the record's values
// vals: E(v, J=0) of a ¹Σ source, the vibronic term value T_v of a
// fine-structure source; NaN for a level the source does not have.
func (s *levelSource) origin(v int, vals []float64) float64 {
	if s.fine != nil {
		if !s.has(v) || !s.fine.ensure(s, v) {
			return math.NaN()
		}
		return s.fine.eff[v][qT].eval(vals)
	}
	return s.energy(v, 0, vals, nil)
}

// rotationPositive reports whether level v has a rotational structure:
// E(v, J=1) > E(v, J=0) of a ¹Σ source, B_v > 0 of a fine-structure source.
func (s *levelSource) rotationPositive(v int, vals []float64) bool {
	if s.fine != nil {
		return s.fine.ensure(s, v) && s.fine.eff[v][qB].eval(vals) > 0
	}
	return s.energy(v, 1, vals, nil) > s.energy(v, 0, vals, nil)
}

// newLevelSource makes the level source of species sp in the record c of a
// state; obs lists the levels the fitted data reached (they decide which
// levels a Dunham model without an anharmonic term determines). The levels the
// record lacks are extrapolated (see extendVibration); where nothing fixes
// the vibrational spacing (a single level and no ω_e), the source has the
// record's levels only and vib.determined is false.
func newLevelSource(c *constants.Set, sp int, obs []int, ch extChoice) *levelSource {
	s := &levelSource{c: c, sp: sp, choice: ch}
	switch m := c.Model.(type) {
	case *model.TermValues:
		s.recV = s.placedLevels(m)
	case *model.Dunham:
		if dunhamAnharmonic(m) {
			s.vib = dunhamVibration(m, sp, c.Values, obs)
			return s
		}
		s.recV = append([]int(nil), obs...)
		if len(s.recV) == 0 {
			s.recV = []int{0}
		}
	default:
		// A model thermo cannot extrapolate: its own levels only.
		s.vib.determined = true
		return s
	}
	s.record = map[int]bool{}
	for _, v := range s.recV {
		s.record[v] = true
	}
	s.extendVibration()
	return s
}

// placedLevels returns the vibrational levels of a term-values record whose
// energy above the lowest level is known: all but those whose term value the
// fit held at 0 for want of a line connecting them (constants.Set.Unconnected),
// which are left out of the record's levels with a warning (the extrapolation
// then places them like any level the record lacks).
func (s *levelSource) placedLevels(m *model.TermValues) []int {
	var vs, left []int
	for _, v := range m.LevelsOf(s.sp) {
		if s.c.Unconnected(s.sp, v) {
			left = append(left, v)
			continue
		}
		vs = append(vs, v)
	}
	if len(left) > 0 {
		s.warn = append(s.warn, fmt.Sprintf("%s: v=%s left out of the sum: no line connects it to the lowest level, so its energy above it is unknown (the fit held its term value at 0); where the record's other levels allow, the extrapolation places it like a level the record lacks", m.Species()[s.sp], compressInts(left)))
	}
	return vs
}

// dunhamAnharmonic reports whether a Dunham model has the anharmonic term Y20
// (fitted or fixed): then it describes every vibrational level.
func dunhamAnharmonic(m *model.Dunham) bool {
	for _, kl := range m.Terms() {
		if kl == [2]int{2, 0} {
			return true
		}
	}
	return false
}

// dunhamVibration reads the vibrational structure of species sp of a Dunham
// model: g_k = Y_k0, b_k = Y_k1; obs gives the highest observed level.
func dunhamVibration(m *model.Dunham, sp int, vals []float64, obs []int) vibStructure {
	vs := vibStructure{determined: true, anharmonic: true}
	for k := 0; k <= m.MaxK(); k++ {
		vs.g = append(vs.g, m.Y(sp, k, 0, vals, nil))
		vs.b = append(vs.b, m.Y(sp, k, 1, vals, nil))
	}
	vs.g[0] = 0
	vs.omega = vs.g[1]
	if len(vs.g) > 2 {
		vs.omegaX = -vs.g[2]
	}
	for _, v := range obs {
		vs.vObsMax = max(vs.vObsMax, v)
	}
	return vs
}

// extendVibration makes the forms of the vibrational levels the record lacks,
// v = 0 … the top of the extrapolated G(v) (at most maxV), from the record's
// levels v_i (n of them):
//
//	G(v) = T_a + P(u) − P(u_a),  u = v+½, a the nearest record level,
//	P(u) = ω_e u − ω_e x_e u²,
//
// with ω_e, ω_e x_e fitted (least squares) to the band origins of three or
// more levels; from two levels ω_e = ΔG/(1 − x_e(v_0+v_1+1)) with x_e of the
// prior (ΔG the mean spacing); from one level ω_e of the electronic-states
// file and ω_e x_e of that file where it gives one, else x_e of the prior
// (ω_e x_e = x_e·ω_e). B_v = B_a + b_1(u − u_a) with the slope b_1 of
// the record's B_v (least squares, two or more levels) or, from one level,
// −α_e of the Pekeris relation α_e = 6√(ω_e x_e B³)/ω_e − 6B²/ω_e (times the
// choice's factor, not below 0). The distortion coefficients (D, H, L) are the
// means over the record's levels.
func (s *levelSource) extendVibration() {
	rec := make([][]linForm, len(s.recV))
	for i, v := range s.recV {
		f, ok := s.recordForms(v)
		if !ok {
			s.vib.determined = true // cannot extrapolate this model
			return
		}
		rec[i] = f
	}
	s.vib.vObsMax = s.recV[len(s.recV)-1]
	omega, omegaX, ok := s.vibrationalSpacing(rec)
	if !ok {
		return
	}
	bSlope, ok := s.rotationalSlope(rec, omega, omegaX)
	if !ok {
		return
	}
	ov, oxv := omega.eval(s.c.Values), omegaX.eval(s.c.Values)
	s.vib.determined = true
	s.vib.omega, s.vib.omegaX = ov, oxv
	s.vib.g = []float64{0, ov, -oxv}
	b0 := rec[0][1].eval(s.c.Values) - bSlope.eval(s.c.Values)*(float64(s.recV[0])+0.5)
	s.vib.b = []float64{b0, bSlope.eval(s.c.Values)}
	vTop := maxV
	if oxv > 0 {
		vTop = max(0, min(maxV, int(math.Floor(ov/(2*oxv)-0.5))))
	}
	distortion := meanForms(rec)
	s.ext = make([][]linForm, vTop+1)
	for v := 0; v <= vTop; v++ {
		if s.record[v] {
			continue
		}
		a := s.anchor(v)
		ua, u := float64(s.recV[a])+0.5, float64(v)+0.5
		g := rec[a][0].plus(u-ua, omega).plus(-(u*u - ua*ua), omegaX)
		b := rec[a][1].plus(u-ua, bSlope)
		s.ext[v] = append([]linForm{g, b}, distortion...)
	}
}

// anchor returns the index in recV of the record level nearest to v (the
// lower one on a tie).
func (s *levelSource) anchor(v int) int {
	best := 0
	for i, r := range s.recV {
		if abs(r-v) < abs(s.recV[best]-v) {
			best = i
		}
	}
	return best
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// vibrationalSpacing returns ω_e and ω_e x_e as forms over the record's values
// (see extendVibration) and says where they come from in s.note and s.vib.
// ok is false when nothing fixes the spacing (one level, no ω_e).
func (s *levelSource) vibrationalSpacing(rec [][]linForm) (omega, omegaX linForm, ok bool) {
	n := len(s.c.Values)
	omega, omegaX = newForm(n), newForm(n)
	vs := s.recV
	if len(vs) >= 3 {
		coef := leastSquaresForms(vs, rec, 0, func(u float64) []float64 { return []float64{1, u, -u * u} })
		if coef != nil && coef[2].eval(s.c.Values) > 0 && coef[1].eval(s.c.Values) > 0 {
			s.vib.anharmonic = true
			s.note = fmt.Sprintf("G(v) = ω_e(v+½) − ω_e x_e(v+½)² fitted to the band origins of v = %s", compressInts(vs))
			return coef[1], coef[2], true
		}
	}
	xe := s.choice.xe
	if len(vs) >= 2 {
		first, last := vs[0], vs[len(vs)-1]
		// ΔG = (T_last − T_first)/(last − first) = ω_e(1 − x_e(first + last + 1)).
		f := 1 / (float64(last-first) * (1 - xe*float64(first+last+1)))
		omega = omega.plus(f, rec[len(vs)-1][0]).plus(-f, rec[0][0])
		omegaX = omegaX.plus(xe, omega)
		s.note = fmt.Sprintf("ω_e from the spacing of v = %d and %d, anharmonicity x_e = %.3g from the prior %g…%g (the data do not determine it)", first, last, xe, xePriorLow, xePriorHigh)
		return omega, omegaX, true
	}
	if s.choice.omega > 0 && s.choice.omegaX > 0 {
		omega.c0, omegaX.c0 = s.choice.omega, s.choice.omegaX
		s.vib.givenAnharmonic = true
		exact := ""
		if s.choice.omegaXExact {
			exact = " (no σ given: taken as exact)"
		}
		s.note = fmt.Sprintf("ω_e = %g cm-1 and ω_e x_e = %g cm-1 (x_e = %.3g) from the electronic-states file%s", s.choice.omega, s.choice.omegaX, s.choice.omegaX/s.choice.omega, exact)
		return omega, omegaX, true
	}
	if s.choice.omega > 0 {
		omega.c0 = s.choice.omega
		omegaX.c0 = xe * s.choice.omega
		s.note = fmt.Sprintf("ω_e = %g cm-1 from the electronic-states file, anharmonicity x_e = %.3g from the prior %g…%g", s.choice.omega, xe, xePriorLow, xePriorHigh)
		return omega, omegaX, true
	}
	return omega, omegaX, false
}

// rotationalSlope returns ∂B_v/∂(v+½) as a form: the least-squares slope of
// the record's B_v (two or more levels), or −α_e of the Pekeris relation from
// one level (see extendVibration).
func (s *levelSource) rotationalSlope(rec [][]linForm, omega, omegaX linForm) (linForm, bool) {
	n := len(s.c.Values)
	for _, f := range rec {
		if len(f) < 2 {
			return newForm(n), false
		}
	}
	if len(s.recV) >= 2 {
		coef := leastSquaresForms(s.recV, rec, 1, func(u float64) []float64 { return []float64{1, u} })
		if coef == nil {
			return newForm(n), false
		}
		return coef[1], true
	}
	w, wx := omega.eval(s.c.Values), omegaX.eval(s.c.Values)
	b := rec[0][1].eval(s.c.Values)
	alpha := math.Max(0, pekerisAlpha(w, wx, b)) * s.choice.alphaScale
	s.note += fmt.Sprintf("; α_e = %.4g cm-1 from the Pekeris relation (×%g)", alpha, s.choice.alphaScale)
	slope := newForm(n)
	slope.c0 = -alpha
	return slope, true
}

// pekerisAlpha returns the Pekeris relation α_e = 6√(ω_e x_e B_e³)/ω_e −
// 6B_e²/ω_e (cm⁻¹), exact for the Morse oscillator (common practice).
func pekerisAlpha(omega, omegaX, b float64) float64 {
	if !(omega > 0) || !(omegaX > 0) || !(b > 0) {
		return 0
	}
	return 6*math.Sqrt(omegaX*b*b*b)/omega - 6*b*b/omega
}

// leastSquaresForms fits the coefficient a_l of the record's levels vs
// (forms rec) by least squares in the basis row(v+½) and returns each fitted
// coefficient as a form (nil when the system is singular): β = X⁺a with X⁺
// the pseudo-inverse of the design (QR), a linear map of the a_l(v_i).
func leastSquaresForms(vs []int, rec [][]linForm, l int, row func(u float64) []float64) []linForm {
	nc := len(row(0))
	x := mat.NewDense(len(vs), nc, nil)
	for i, v := range vs {
		x.SetRow(i, row(float64(v)+0.5))
	}
	var qr mat.QR
	qr.Factorize(x)
	n := len(rec[0][l].g)
	out := make([]linForm, nc)
	for c := range out {
		out[c] = newForm(n)
	}
	e := mat.NewVecDense(len(vs), nil)
	for i := range vs {
		e.Zero()
		e.SetVec(i, 1)
		var sol mat.VecDense
		if err := qr.SolveVecTo(&sol, false, e); err != nil {
			return nil
		}
		for c := 0; c < nc; c++ {
			out[c] = out[c].plus(sol.AtVec(c), rec[i][l])
		}
	}
	return out
}

// meanForms returns the means over the levels of the coefficients a_l, l ≥ 2
// (the distortion constants).
func meanForms(rec [][]linForm) []linForm {
	maxL := 0
	for _, f := range rec {
		maxL = max(maxL, len(f)-1)
	}
	var out []linForm
	n := len(rec[0][0].g)
	for l := 2; l <= maxL; l++ {
		m := newForm(n)
		for _, f := range rec {
			if l < len(f) {
				m = m.plus(1/float64(len(rec)), f[l])
			}
		}
		out = append(out, m)
	}
	return out
}

// observedLevels returns the vibrational levels of species label in obs of
// the record's ground state, sorted.
func observedLevels(obs []constants.LevelRange, label string) []int {
	return observedStateLevels(obs, label, "")
}

// observedStateLevels returns the vibrational levels of species label in obs
// of the record's state labelled state ("": its ground state), sorted.
func observedStateLevels(obs []constants.LevelRange, label, state string) []int {
	seen := map[int]bool{}
	var out []int
	for _, o := range obs {
		if o.Species == label && o.State == state && !seen[o.V] {
			seen[o.V] = true
			out = append(out, o.V)
		}
	}
	sort.Ints(out)
	return out
}
