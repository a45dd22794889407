package fit

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"bandwright/fit/model"
)

// The series truncation of a Dunham fit: how far the fitted parameters move
// because the model stops its series where it does.
//
// A truncated Dunham model fits effective coefficients: with the bands 1-0,
// 2-0 and 2-1 three vibrational levels determine Y10 and Y20 exactly, and
// they absorb the omitted Y30 (Y10 = ω_e − 5.75·ω_e y_e, Y20 = −ω_e x_e +
// 4.5·ω_e y_e for the levels v = 0, 1, 2). The statistical σ of such a
// coefficient says nothing about that. For each series of the model the
// next, omitted term is given its expected size c (TruncationTerm) and its
// first-order effect on the fitted parameters is the least-squares response
// of the fit to the positions it would add,
//
//	δp = (AᵀWA)⁻¹ AᵀW (c·b),   b_i = (1+κ_f)·∂ν_i/∂Y_kl,
//
// with A the fit's own design (the lines in use), W = diag(1/u²) and
// (AᵀWA)⁻¹ the unscaled covariance the QR solve already gave (no normal
// equations are formed or inverted). The shifts of a derived constant q with
// gradient g are g·δp for each omitted term; they are combined in quadrature
// (independent terms of unknown sign) into Derived.Truncation.

// TruncationTerm is one omitted term of a Dunham fit's series and its
// first-order effect on the fitted parameters.
type TruncationTerm struct {
	// Name is the omitted term, "Y30".
	Name string
	K, L int
	// Size is its expected magnitude (cm⁻¹, the reference isotopologue) and
	// Rule how it was estimated.
	Size float64
	Rule string
	// Shift is the change of every model parameter (indexed as
	// Result.Params; 0 for fixed ones) when the lines in use are moved by
	// Size·b_i: δp above.
	Shift []float64
	// level and pow: for a term-values model, the level (isotopologue index,
	// v) whose rotational series the term continues and its power of
	// x = J(J+1) (omittedLevelTerms).
	level [2]int
	pow   int
	// base is the parameter index of the model's term of the same l below
	// it, Y_(K−dk),L, from whose derivative its own is formed
	// (omittedDerivative); -1 for the next rotational term (0, L+1), whose
	// base is Y_0L (baseRot).
	base, dk, baseRot int
}

// Rules of the omitted terms' sizes (TruncationTerm.Rule).
const (
	ruleGeometric = "the series continued geometrically, the largest continuation of a pair of neighbouring coefficients (c_K²/|c_(K−1)| for the last two; common practice, order of magnitude)"
	ruleKratzer   = "after Y01 alone, the Kratzer relation D = 4B³/ω² (Kratzer 1920; order of magnitude)"
	ruleDRatio    = "after Y02 alone, Y02·Y11/Y01: the D_v series continued with the ratio of the B_v series (our own estimate, order of magnitude)"
)

// omittedTerms returns the next term of each series of the ground state of
// Dunham model m at parameters p (the reference isotopologue's Y_kl), with
// its expected size:
//
//   - vibration (K+1, 0) after the highest Y_K0, when Y20 is in the model
//     (without it Y10 is reported as Delta_G, the measured spacing);
//   - the B_v series (K+1, 1) after the highest Y_K1, when Y11 is in the
//     model (without it Y01 is B_avg);
//   - the D_v series (K+1, 2) after the highest Y_K2;
//   - rotation (0, L+1) after the highest Y_0L.
//
// Sizes from model.NextTerm over the series' own coefficients; where the
// series has one term: D from the Kratzer relation after Y01 alone, Y12 from
// Y02·Y11/Y01 after Y02 alone (ruleKratzer, ruleDRatio). Terms without a
// size are left out.
func omittedTerms(m *model.Dunham, p []float64) []TruncationTerm {
	has := map[[2]int]bool{}
	maxK := map[int]int{}
	maxL := 0
	for _, t := range m.Terms() {
		has[t] = true
		maxK[t[1]] = max(maxK[t[1]], t[0])
		if t[0] == 0 {
			maxL = max(maxL, t[1])
		}
	}
	y := func(k, l int) float64 { return m.Y(0, k, l, p, nil) }
	series := func(l, top int) []float64 {
		c := make([]float64, top+1)
		for k := range c {
			c[k] = y(k, l)
		}
		return c
	}
	var out []TruncationTerm
	add := func(k, l int, size float64, rule string) {
		if !(size > 0) || math.IsInf(size, 0) {
			return
		}
		t := TruncationTerm{Name: model.DunhamName(k, l), K: k, L: l, Size: size, Rule: rule, base: -1, baseRot: -1}
		if k0, ok := presentBelow(m, k, l); ok {
			t.base, t.dk = termParam(m, k0, l), k-k0
		} else if l >= 2 && k == 0 {
			t.baseRot = termParam(m, 0, l-1)
		}
		if t.base >= 0 || t.baseRot >= 0 {
			out = append(out, t)
		}
	}
	if has[[2]int{2, 0}] {
		if c, n, ok := model.NextTerm(series(0, maxK[0]), 1); ok {
			add(n, 0, c, ruleGeometric)
		}
	}
	if has[[2]int{1, 1}] {
		if c, n, ok := model.NextTerm(series(1, maxK[1]), 0); ok {
			add(n, 1, c, ruleGeometric)
		}
	}
	if has[[2]int{0, 2}] {
		if c, n, ok := model.NextTerm(series(2, maxK[2]), 0); ok {
			add(n, 2, c, ruleGeometric)
		} else if maxK[2] == 0 && has[[2]int{1, 1}] && y(0, 1) != 0 {
			add(1, 2, math.Abs(y(0, 2)*y(1, 1)/y(0, 1)), ruleDRatio)
		}
	}
	if maxL >= 1 {
		if c, n, ok := model.NextTerm(series0(y, maxL), 1); ok {
			add(0, n, c, ruleGeometric)
		} else if maxL == 1 && has[[2]int{1, 0}] && y(1, 0) > 0 {
			b, w := y(0, 1), y(1, 0)
			add(0, 2, math.Abs(4*b*b*b/(w*w)), ruleKratzer)
		}
	}
	return out
}

// series0 returns Y_0l for l = 0 … top (Y00 = 0).
func series0(y func(k, l int) float64, top int) []float64 {
	c := make([]float64, top+1)
	for l := 1; l <= top; l++ {
		c[l] = y(0, l)
	}
	return c
}

// truncation returns the omitted terms of a Dunham fit, or of a closed-shell
// term-values fit (omittedLevelTerms), with their shifts of the parameters
// (see TruncationTerm), from the lines in use and the unscaled covariance of
// the last solve; nil otherwise.
func (w *work) truncation() []TruncationTerm {
	if w.res == nil {
		return nil
	}
	var terms []TruncationTerm
	var columns func(i int, gu, gl, col []float64)
	switch m := w.p.Model.(type) {
	case *model.Dunham:
		terms = omittedTerms(m, w.values)
		columns = func(i int, gu, gl, col []float64) { w.omittedColumns(m, terms, i, gu, gl, col) }
	case *model.TermValues:
		if w.lm != nil {
			return nil // open-shell levels: their distortion series are not treated
		}
		terms = omittedLevelTerms(m, w.values)
		columns = func(i int, _, _, col []float64) { w.levelColumns(terms, i, col) }
	}
	if len(terms) == 0 {
		return nil
	}
	free := w.freeNow()
	dsg := w.newDesign(free)
	ncol := len(free) + len(w.kfree)
	if w.res.Cov.SymmetricDim() != ncol {
		return nil
	}
	// Per term: h = AᵀW b; between terms: BᵀWB; and BᵀW r (r = o − c).
	h := make([][]float64, len(terms))
	bWb := make([][]float64, len(terms))
	for t := range h {
		h[t] = make([]float64, ncol)
		bWb[t] = make([]float64, len(terms))
	}
	bWr := make([]float64, len(terms))
	a := make([]float64, ncol)
	col := make([]float64, len(terms))
	gu := make([]float64, len(w.params))
	gl := make([]float64, len(w.params))
	w.residuals()
	for _, i := range w.rows {
		_, u := dsg.row(i, a)
		columns(i, gu, gl, col)
		for t := range terms {
			f := col[t] / (u * u)
			if f == 0 {
				continue
			}
			floats.AddScaled(h[t], f, a)
			floats.AddScaled(bWb[t], f, col)
			bWr[t] += f * w.omc[i]
		}
	}
	dps := make([]*mat.VecDense, len(terms))
	hCh := make([][]float64, len(terms))
	for t := range terms {
		dps[t] = mat.NewVecDense(ncol, nil)
		dps[t].MulVec(w.res.Cov, mat.NewVecDense(ncol, h[t]))
	}
	for t := range terms {
		hCh[t] = make([]float64, len(terms))
		for u := range terms {
			hCh[t][u] = floats.Dot(h[t], dps[u].RawVector().Data)
		}
	}
	capByData(terms, bWb, hCh, bWr, math.Max(w.sigma(), 1))
	for t := range terms {
		terms[t].Shift = make([]float64, len(w.params))
		for c, j := range free {
			terms[t].Shift[j] = terms[t].Size * dps[t].AtVec(c)
		}
	}
	return terms
}

// dataDetermined is the smallest share of the omitted term's weighted norm
// bᵀWb that must lie outside the span of the fitted terms for the lines to
// determine the term (below it the term is a combination of the fitted ones,
// as Y30 is of Y10 and Y20 over three vibrational levels).
const dataDetermined = 1e-6

// capByData lowers each term's size to what the lines allow where they
// determine it. Fitted all together beside the model's terms, the omitted
// terms the lines determine would come out ĉ = M⁻¹BᵀWr with covariance
// s²M⁻¹, M = BᵀWB − Hᵀ(AᵀWA)⁻¹H the part of their normal matrix outside the
// span of the fitted terms (H = AᵀWB; AᵀWr = 0 at the least-squares solution)
// and s = max(1, the fit's s) — jointly, because omitted terms of
// overlapping levels absorb each other's share when fitted one at a time. A
// term whose column lies in that span (Y30 over three vibrational levels) is
// left out of the joint fit and keeps its size; the others are capped at
// |ĉ| + 2σ_c where that is smaller than the series' expected size. When M of
// the determined terms cannot be factorised, nothing is capped.
func capByData(terms []TruncationTerm, bWb, hCh [][]float64, bWr []float64, s float64) {
	var cand []int
	for t := range terms {
		if perp := bWb[t][t] - hCh[t][t]; bWb[t][t] > 0 && perp > dataDetermined*bWb[t][t] {
			cand = append(cand, t)
		}
	}
	perp := func(t, u int) float64 { return bWb[t][u] - hCh[t][u] }
	// M in correlation form (the columns' scales differ by many orders of
	// magnitude); a term that makes it singular with those already taken is
	// left out of the joint fit and keeps its size.
	var idx []int
	var ch mat.Cholesky
	for _, t := range cand {
		try := append(append([]int(nil), idx...), t)
		if jointFactor(&ch, try, perp) {
			idx = try
		}
	}
	if len(idx) == 0 || !jointFactor(&ch, idx, perp) {
		return
	}
	y := mat.NewVecDense(len(idx), nil)
	for a, t := range idx {
		y.SetVec(a, bWr[t]/math.Sqrt(perp(t, t)))
	}
	var c mat.VecDense
	var inv mat.SymDense
	if ch.SolveVecTo(&c, y) != nil || ch.InverseTo(&inv) != nil {
		return
	}
	for a, t := range idx {
		d := math.Sqrt(perp(t, t))
		chat := c.AtVec(a) / d
		sig := s * math.Sqrt(math.Max(inv.At(a, a), 0)) / d
		bound := math.Abs(chat) + 2*sig
		if bound < terms[t].Size {
			terms[t].Rule = fmt.Sprintf("%s = %.2g, capped by the lines at |ĉ| + 2σ_c = %.2g, the term as the lines would determine it were it fitted with the other omitted terms they determine (ĉ = %.2g, σ_c = %.2g)",
				terms[t].Rule, terms[t].Size, bound, chat, sig)
			terms[t].Size = bound
		}
	}
}

// jointFactor factorises the normal matrix of the omitted terms idx outside
// the span of the fitted ones, M_tu = perp(t, u), scaled to unit diagonal,
// into ch; false when it is singular to within jointConditionLimit.
func jointFactor(ch *mat.Cholesky, idx []int, perp func(t, u int) float64) bool {
	m := mat.NewSymDense(len(idx), nil)
	for a, t := range idx {
		for b := a; b < len(idx); b++ {
			u := idx[b]
			m.SetSym(a, b, perp(t, u)/math.Sqrt(perp(t, t)*perp(u, u)))
		}
	}
	if !ch.Factorize(m) {
		return false
	}
	return ch.Cond() < jointConditionLimit
}

// jointConditionLimit is the largest condition number of the scaled joint
// normal matrix of omitted terms that capByData trusts.
const jointConditionLimit = 1e10

// omittedColumns fills col[t] with b_i = (1+κ_f)·∂ν_i/∂Y_kl of line i for
// each omitted term t (reference Y_kl, mass-scaled to the line's
// isotopologue), using gu and gl as scratch for the energy gradients of its
// two levels.
func (w *work) omittedColumns(m *model.Dunham, terms []TruncationTerm, i int, gu, gl, col []float64) {
	l := &w.p.Lines[i]
	s := w.sp[i]
	if w.lm != nil {
		w.lm.LevelEnergy(s, w.up[i], w.values, gu)
		w.lm.LevelEnergy(s, w.lo[i], w.values, gl)
	} else {
		m.Energy(s, l.VUp, l.JUp, w.values, gu)
		m.Energy(s, l.VLo, l.JLo, w.values, gl)
	}
	fac := 1 + w.kappa[w.file[i]]
	for t, tm := range terms {
		col[t] = fac * (omittedDerivative(m, s, l.VUp, tm, gu) - omittedDerivative(m, s, l.VLo, tm, gl))
	}
}

// omittedDerivative returns ∂E/∂Y_kl(r) of a level of vibrational level v of
// isotopologue s for an omitted term (k, l), from the level's energy
// gradient g with respect to the model's parameters: a term (k0, l) of the
// same l in the model enters E as ∂E/∂X_l·(v+½)^k0·ρ^(k0+2l), ρ² = μ_r/μ_s
// (X_l the l-th rotational constant of the level: G_v, B_v, −D_v, …), so
//
//	∂E/∂Y_kl = ∂E/∂Y_k0,l · (v+½)^(k−k0) · ρ^(k−k0);
//
// the next rotational term (0, L+1) of a series that ends at Y_0L takes
// x^(L+1) = (x^L)^((L+1)/L) with x^L = ∂E/∂Y_0L / ρ^(2L) (exact for a ¹Σ
// level, x = J(J+1); the same power of the level's rotational operator for
// an open-shell level, an approximation).
func omittedDerivative(m *model.Dunham, s, v int, tm TruncationTerm, g []float64) float64 {
	if tm.base >= 0 {
		d := g[tm.base]
		if d == 0 {
			return 0
		}
		return d * math.Pow(float64(v)+0.5, float64(tm.dk)) * m.Scale(s, tm.dk, 0)
	}
	lm := tm.L - 1
	d := g[tm.baseRot]
	if d == 0 {
		return 0
	}
	xl := math.Abs(d) / m.Scale(s, 0, lm)
	return m.Scale(s, 0, tm.L) * math.Pow(xl, float64(tm.L)/float64(lm))
}

// presentBelow returns the highest k0 < k with (k0, l) a term of m.
func presentBelow(m *model.Dunham, k, l int) (int, bool) {
	best := -1
	for _, t := range m.Terms() {
		if t[1] == l && t[0] < k && t[0] > best {
			best = t[0]
		}
	}
	return best, best >= 0
}

// termParam returns the parameter index of Y_kl of the ground state (the
// term index: Dunham parameters come first, in the order of Terms).
func termParam(m *model.Dunham, k, l int) int {
	for t, kl := range m.Terms() {
		if kl == [2]int{k, l} {
			return t
		}
	}
	return -1
}

// omittedLevelTerms returns, for a term-values model of ¹Σ levels, the next
// rotational term of every level: after the highest of B_v, D_v, H_v the
// model has (none after L_v), of the size the level's own series suggests,
// model.NextTerm over |B_v|, |D_v|, … (H ≈ D²/B after D; common practice,
// order of magnitude); a level with B_v alone gets none. Each level's term is
// its own omitted term, named as the parameter it would be ("H_v1[1H35Cl]").
func omittedLevelTerms(m *model.TermValues, p []float64) []TruncationTerm {
	var out []TruncationTerm
	rot := model.RotTerms()
	for s, sp := range m.Species() {
		for _, v := range m.LevelsOf(s) {
			c := make([]float64, len(rot)+1)
			for _, n := range m.Terms() {
				if j := m.Index(s, v, n); j >= 0 {
					c[slices.Index(rot, n)+1] = math.Abs(p[j])
				}
			}
			size, pow, ok := model.NextTerm(c, 1)
			if !ok || pow > len(rot) || !(size > 0) {
				continue
			}
			name := fmt.Sprintf("%s_v%d[%s]", rot[pow-1], v, sp)
			out = append(out, TruncationTerm{Name: name, Size: size, Rule: ruleGeometric, level: [2]int{s, v}, pow: pow, base: -1, baseRot: -1})
		}
	}
	return out
}

// levelColumns fills col[t] with b_i = (1+κ_f)·(x′^n [v′ is t's level] −
// x″^n [v″ is t's level]) of line i for each level term t (x = J(J+1), n its
// power).
func (w *work) levelColumns(terms []TruncationTerm, i int, col []float64) {
	l := &w.p.Lines[i]
	s := w.sp[i]
	fac := 1 + w.kappa[w.file[i]]
	for t, tm := range terms {
		col[t] = 0
		if tm.level[0] != s {
			continue
		}
		if tm.level[1] == l.VUp {
			col[t] += fac * math.Pow(float64(l.JUp*(l.JUp+1)), float64(tm.pow))
		}
		if tm.level[1] == l.VLo {
			col[t] -= fac * math.Pow(float64(l.JLo*(l.JLo+1)), float64(tm.pow))
		}
	}
}
