package fit

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/units"
)

// linear is a quantity with its gradient with respect to all model
// parameters and, for a quantity of a secondary fit (term values), its shifts
// by the terms that fit omits (the omitted terms of the main fit enter
// through g, see Result.shifts).
type linear struct {
	v  float64
	g  []float64
	tr []termShift
}

// termShift is the first-order shift of a quantity by one omitted series
// term.
type termShift struct {
	term  string  // the omitted term: "Y30", "omega_e_y_e"
	size  float64 // its expected size, cm⁻¹
	shift float64 // the quantity's change, in the quantity's unit
}

// through returns the quantity f(q) of value v with df/dq = d: gradient and
// shifts scaled by d.
func (q linear) through(v, d float64) linear {
	out := linear{v: v, g: scaleG(q.g, d)}
	for _, t := range q.tr {
		out.tr = append(out.tr, termShift{t.term, t.size, t.shift * d})
	}
	return out
}

// shifts returns the shifts of q by every omitted term: its own (q.tr) and
// g·δp for each omitted term of the main fit (Result.Truncation).
func (r *Result) shifts(q linear) []termShift {
	out := append([]termShift(nil), q.tr...)
	for _, t := range r.Truncation {
		d := 0.0
		for j, s := range t.Shift {
			if s != 0 && j < len(q.g) {
				d += q.g[j] * s
			}
		}
		out = append(out, termShift{t.Name, t.Size, d})
	}
	return out
}

// truncationNoteFloor is the fraction of σ from which the series truncation
// of a constant is stated in its note, as the neglected Dunham correction is.
const truncationNoteFloor = 0.1

// withTruncation sets d.Truncation = √(Σ shift²) from the shifts of d by
// the omitted terms, and where it reaches a tenth of σ states it in d.Note
// with the term that shifts it most; where it exceeds σ the note says that
// the value is an effective constant.
func withTruncation(d *constants.Derived, sh []termShift) {
	var sum2 float64
	var top termShift
	for _, t := range sh {
		sum2 += t.shift * t.shift
		if math.Abs(t.shift) > math.Abs(top.shift) {
			top = t
		}
	}
	d.Truncation = math.Sqrt(sum2)
	if d.Truncation == 0 || d.Truncation < truncationNoteFloor*d.Sigma {
		return
	}
	if d.Note != "" {
		d.Note += "; "
	}
	d.Note += fmt.Sprintf("series truncation ≈ %.2g %s (order of magnitude; the omitted %s of expected size %.2g cm-1 shifts it by ~%.2g %s; %s σ",
		d.Truncation, d.Unit, top.term, top.size, math.Abs(top.shift), d.Unit, againstSigma(d.Truncation, d.Sigma))
	if d.Truncation > d.Sigma {
		d.Note += ": the value is an effective constant"
	}
	d.Note += ")"
}

// sigmaOf returns √(gᵀ C g) with g restricted to the free parameters.
func sigmaOf(r *Result, g []float64) float64 {
	n := r.Cov.SymmetricDim()
	gf := make([]float64, n)
	for c, j := range r.Free {
		gf[c] = g[j]
	}
	v := mat.NewVecDense(n, gf)
	return math.Sqrt(math.Max(mat.Inner(v, r.Cov, v), 0))
}

// add appends the derived constant q with its σ and series truncation.
func (r *Result) add(out *[]constants.Derived, name, sp string, q linear, unit, note string) {
	d := constants.Derived{Name: name, Species: sp, Value: q.v, Sigma: sigmaOf(r, q.g), Unit: unit, Note: note}
	withTruncation(&d, r.shifts(q))
	*out = append(*out, d)
}

// Derive computes the derived constants of a fit result. A constant is named
// for what it is only when the data determine it: ω_e and ω_e x_e need the
// anharmonic term, B_e, α_e and r_e the v-dependence of B_v; otherwise the
// measured quantity is reported under its own name.
//
// Dunham fits, for every isotopologue s (Y_kl(s) from the mass scaling):
// ω_e = Y10 (with Y20 in the model; without it Y10 is the vibrational
// spacing Delta_G), ω_e x_e = −Y20, ω_e y_e = Y30, B_e = Y01 (with Y11 in the
// model; without it Y01 is B_avg, the rotational constant of every observed
// level alike), α_e = −Y11, γ_e = Y21, D_e = −Y02, β_e = −Y12, H_e = Y03
// (cm⁻¹), r_e = √(h/(8π²cμB_e)) (Å); for the reference, U_kl =
// Y_kl(r)·μ_r^((k+2l)/2) (cm⁻¹ u^((k+2l)/2)) and, with breakdown terms,
// Δ_kl^X. Diagnostics: the Kratzer relation D_e ≈ 4B_e³/ω_e² and the Pekeris
// relation α_e ≈ 6√(ω_e x_e B_e³)/ω_e − 6B_e²/ω_e.
//
// ω_e = Y10, B_e = Y01 and r_e from it neglect Dunham's corrections (Dunham
// 1932), of order |Y10 − ω_e| ~ B_e²/ω_e, |Y01 − B_e| ~ B_e³/ω_e² and
// |Δr_e| ~ r_e B_e²/(2ω_e²) (orders of magnitude, not the corrections
// themselves); where that order reaches a tenth of σ it is stated beside the
// constant (Derived.Neglected and its note). The same holds for ω_e and B_e
// from term values, which estimate Y10 and Y01.
//
// Every derived constant carries its series truncation (Derived.Truncation):
// its first-order shift by the next term of each series the fit omits, at
// the size model.NextTerm expects, combined in quadrature — for a Dunham fit
// g·δp with δp of each omitted term from Result.Truncation (truncation.go),
// for the secondary fits of term values the response of the generalised
// least squares to the next term of G(v) (ω_e y_e) and of B_v (γ_e)
// (gvTruncation, bvTruncation). Where it reaches a tenth of σ the note says
// so (withTruncation).
//
// Term-values fits: band origins ν₀ = T_v′ − T_v″ of the bands present; with two or
// more levels of an isotopologue, B_e and α_e (and γ_e with four or more) from
// a generalised least-squares fit of B_v = B_e − α_e(v+½) + γ_e(v+½)² that uses
// the covariance of the B_v, r_0 from B_0 and r_e from B_e; with three or more
// levels including v = 0, ω_e and ω_e x_e from G(v) − G(0) = ω_e v − ω_e x_e v(v+1).
func Derive(r *Result) []constants.Derived {
	var out []constants.Derived
	switch m := r.Model.(type) {
	case *model.Dunham:
		deriveDunham(r, m, &out)
	case *model.TermValues:
		deriveTermValues(r, m, &out)
	}
	for _, c := range r.Calib {
		if !c.Fixed {
			out = append(out, constants.Derived{Name: "kappa", Value: c.Kappa, Sigma: c.Sigma, Unit: "1", Note: "calibration factor of " + c.File + " (ν_obs = (1+κ)ν)"})
		}
	}
	return out
}

var dunhamDerived = []struct {
	name  string
	k, l  int
	sign  float64
	label string
}{
	{"omega_e", 1, 0, 1, "Y10"},
	{"omega_e_x_e", 2, 0, -1, "−Y20"},
	{"omega_e_y_e", 3, 0, 1, "Y30"},
	{"B_e", 0, 1, 1, "Y01"},
	{"alpha_e", 1, 1, -1, "−Y11"},
	{"gamma_e", 2, 1, 1, "Y21"},
	{"D_e", 0, 2, -1, "−Y02"},
	{"beta_e", 1, 2, -1, "−Y12"},
	{"H_e", 0, 3, 1, "Y03"},
}

func deriveDunham(r *Result, m *model.Dunham, out *[]constants.Derived) {
	p := model.Values(r.Params)
	np := len(p)
	has := map[[2]int]bool{}
	for _, t := range m.Terms() {
		has[t] = true
	}
	isos := m.Isotopologues()
	for s, iso := range isos {
		get := func(k, l int) (linear, bool) {
			g := make([]float64, np)
			v := m.Y(s, k, l, p, g)
			return linear{v: v, g: g}, has[[2]int{k, l}]
		}
		if s > 0 {
			for _, t := range m.Terms() {
				q, _ := get(t[0], t[1])
				r.add(out, model.DunhamName(t[0], t[1]), iso.Label, q, "cm-1", "mass-scaled from the reference isotopologue")
			}
		}
		vals := map[string]linear{}
		for _, d := range dunhamDerived {
			q, ok := get(d.k, d.l)
			if !ok {
				continue
			}
			q = scaleLin(q, d.sign)
			name, note := d.name, "= "+d.label
			switch {
			case d.name == "omega_e" && !has[[2]int{2, 0}]:
				name, note = "Delta_G", "= Y10 of a model without the anharmonic term Y20: the vibrational spacing G(v+1) − G(v) of the observed levels, not ω_e"
			case d.name == "B_e" && !has[[2]int{1, 1}]:
				name, note = "B_avg", "= Y01 of a model without Y11: the rotational constant of every observed level alike, not B_e"
			}
			vals[name] = q
			r.add(out, name, iso.Label, q, "cm-1", note)
		}
		if be, ok := vals["B_e"]; ok && be.v > 0 {
			re := species.RFromB(be.v, iso.ReducedMass())
			r.add(out, "r_e", iso.Label, be.through(re, -re/(2*be.v)), "angstrom", "from B_e with CODATA 2018 constants and AME2020 masses")
		}
		noteDunhamCorrections(*out, iso.Label)
		we, okW := vals["omega_e"]
		be, okB := vals["B_e"]
		if okW && okB && we.v > 0 && be.v > 0 {
			kr := 4 * be.v * be.v * be.v / (we.v * we.v)
			g := combine(be.g, 12*be.v*be.v/(we.v*we.v), we.g, -8*be.v*be.v*be.v/(we.v*we.v*we.v))
			r.add(out, "D_e_Kratzer", iso.Label, linear{v: kr, g: g}, "cm-1", "diagnostic: Kratzer relation 4B_e³/ω_e²; compare with D_e")
			if wx, ok := vals["omega_e_x_e"]; ok && wx.v > 0 {
				sq := math.Sqrt(wx.v * be.v * be.v * be.v)
				pk := 6*sq/we.v - 6*be.v*be.v/we.v
				dx := 3 * math.Sqrt(be.v*be.v*be.v/wx.v) / we.v
				dB := 9*math.Sqrt(wx.v*be.v)/we.v - 12*be.v/we.v
				dW := -6*sq/(we.v*we.v) + 6*be.v*be.v/(we.v*we.v)
				g := combine(combine(wx.g, dx, be.g, dB), 1, we.g, dW)
				r.add(out, "alpha_e_Pekeris", iso.Label, linear{v: pk, g: g}, "cm-1", "diagnostic: Pekeris relation 6√(ω_e x_e B_e³)/ω_e − 6B_e²/ω_e; compare with alpha_e")
			}
		}
	}
	// Mass-reduced coefficients and breakdown constants of the reference.
	ref := isos[0]
	muR := ref.ReducedMass()
	params := r.Params
	for t, kl := range m.Terms() {
		k, l := kl[0], kl[1]
		e := float64(k+2*l) / 2
		// Born–Oppenheimer Y of the reference: Ỹ = Y_r − m_e Σ_X S_X(r) δ^X.
		g := make([]float64, np)
		g[t] = 1
		yt := p[t]
		var bobIdx []int
		for j, q := range params {
			if q.Element != "" && q.K == k && q.L == l {
				sx := ref.InverseMass(q.Element)
				yt -= units.ElectronMass * sx * p[j]
				g[j] = -units.ElectronMass * sx
				bobIdx = append(bobIdx, j)
			}
		}
		f := math.Pow(muR, e)
		r.add(out, fmt.Sprintf("U%d%d", k, l), "", linear{v: yt * f, g: scaleG(g, f)}, fmt.Sprintf("cm-1 u^%g", e), "mass-reduced Dunham coefficient U_kl = Y_kl μ^((k+2l)/2)")
		for _, j := range bobIdx {
			d := p[j] / yt
			gd := scaleG(g, -p[j]/(yt*yt))
			gd[j] += 1 / yt
			r.add(out, fmt.Sprintf("Delta%d%d_%s", k, l, params[j].Element), "", linear{v: d, g: gd}, "1", "Born–Oppenheimer-breakdown constant Δ_kl of "+params[j].Element)
		}
	}
}

func deriveTermValues(r *Result, m *model.TermValues, out *[]constants.Derived) {
	p := model.Values(r.Params)
	np := len(p)
	// Band origins of the bands present in the data.
	type band struct {
		s, vu, vl int
	}
	seen := map[band]bool{}
	var bands []band
	spIdx := map[string]int{}
	for i, sp := range m.Species() {
		spIdx[sp] = i
	}
	for _, bd := range r.Bands {
		b := band{spIdx[bd.Species], bd.VUp, bd.VLo}
		if b.vu != b.vl && !seen[b] {
			seen[b] = true
			bands = append(bands, b)
		}
	}
	sort.Slice(bands, func(a, c int) bool {
		if bands[a].s != bands[c].s {
			return bands[a].s < bands[c].s
		}
		if bands[a].vl != bands[c].vl {
			return bands[a].vl < bands[c].vl
		}
		return bands[a].vu < bands[c].vu
	})
	species_ := m.Species()
	for _, b := range bands {
		g := make([]float64, np)
		iu, il := m.Index(b.s, b.vu, "T"), m.Index(b.s, b.vl, "T")
		g[iu] += 1
		g[il] -= 1
		r.add(out, "nu0_"+linelist.BandLabel(b.vu, b.vl), species_[b.s], linear{v: p[iu] - p[il], g: g}, "cm-1", "band origin T_v′ − T_v″")
	}
	for s, label := range species_ {
		iso, err := species.Parse(label)
		if err != nil {
			continue
		}
		vs := m.LevelsOf(s)
		bIdx := make([]int, len(vs))
		for i, v := range vs {
			bIdx[i] = m.Index(s, v, "B")
		}
		if bIdx[0] >= 0 && vs[0] == 0 {
			b0 := p[bIdx[0]]
			if b0 > 0 {
				g := make([]float64, np)
				r0 := species.RFromB(b0, iso.ReducedMass())
				g[bIdx[0]] = -r0 / (2 * b0)
				r.add(out, "r_0", label, linear{v: r0, g: g}, "angstrom", "from B_0 (effective ground-state distance)")
			}
		}
		if len(vs) >= 2 && bIdx[0] >= 0 {
			ncoef := 2
			if len(vs) >= 4 {
				ncoef = 3
			}
			x := func(v int) []float64 {
				h := float64(v) + 0.5
				return []float64{1, -h, h * h}[:ncoef]
			}
			coef, G, ok := gls(r, bIdx, vs, x, ncoef)
			if ok {
				bvTruncation(r, coef, G, bIdx, vs, x)
				names := []string{"B_e", "alpha_e", "gamma_e"}
				for c := 0; c < ncoef; c++ {
					r.add(out, names[c], label, coef[c], "cm-1", "from the B_v by generalised least squares")
				}
				be := coef[0]
				if be.v > 0 {
					re := species.RFromB(be.v, iso.ReducedMass())
					r.add(out, "r_e", label, be.through(re, -re/(2*be.v)), "angstrom", "from B_e with CODATA 2018 constants and AME2020 masses")
				}
			}
		}
		if len(vs) >= 3 && vs[0] == 0 && !r.hasUnconnected(s) {
			tIdx := make([]int, 0, len(vs)-1)
			var tv []int
			for _, v := range vs[1:] {
				tIdx = append(tIdx, m.Index(s, v, "T"))
				tv = append(tv, v)
			}
			x := func(v int) []float64 { return []float64{float64(v), -float64(v) * float64(v+1)} }
			coef, G, ok := gls(r, tIdx, tv, x, 2)
			if ok {
				gvTruncation(coef, G, tv)
				r.add(out, "omega_e", label, coef[0], "cm-1", "from the term values T_v by generalised least squares")
				r.add(out, "omega_e_x_e", label, coef[1], "cm-1", "from the term values T_v by generalised least squares")
			}
		}
		noteDunhamCorrections(*out, label)
	}
}

// bvTruncation adds to B_e, α_e (and γ_e) from the B_v of levels vs
// (coefficients of 1, −(v+½), (v+½)²; β = G·B) the shift by the next term of
// the series B_v = Σ b_n (v+½)^n, of size model.NextTerm over the fitted b_n
// (γ_e ≈ α_e²/B_e after α_e) at every level: δβ = G·(c·(v+½)^n).
//
// Where the B_v of more levels than coefficients determine the next term, its
// size is capped at what they allow, |ĉ| + 2σ_c of the term fitted beside the
// others (the rule of the main fit's omitted terms, capByData).
func bvTruncation(r *Result, coef []linear, G *mat.Dense, idx, vs []int, x func(v int) []float64) {
	b := make([]float64, len(coef))
	for c := range coef {
		b[c] = coef[c].v * []float64{1, -1, 1}[c]
	}
	size, n, ok := model.NextTerm(b, 0)
	if !ok {
		return
	}
	name := "gamma_e"
	if n != 2 {
		name = fmt.Sprintf("(v+½)^%d term of B_v", n)
	}
	col := func(v int) float64 { return math.Pow(float64(v)+0.5, float64(n)) }
	if len(vs) > len(coef) {
		xt := func(v int) []float64 { return append(x(v), col(v)) }
		if ext, _, ok := gls(r, idx, vs, xt, len(coef)+1); ok {
			c := ext[len(coef)]
			size = math.Min(size, math.Abs(c.v)+2*sigmaOf(r, c.g))
		}
	}
	seriesShift(coef, G, vs, name, size, col)
}

// gvTruncation adds to ω_e and ω_e x_e from the term values T_v = G(v) − G(0)
// of levels vs (β = G·T) the shift by the omitted ω_e y_e (v+½)³, of size
// (ω_e x_e)²/ω_e (model.NextTerm): δβ = G·(c·[(v+½)³ − (½)³]).
func gvTruncation(coef []linear, G *mat.Dense, vs []int) {
	size, n, ok := model.NextTerm([]float64{0, coef[0].v, -coef[1].v}, 1)
	if !ok {
		return
	}
	seriesShift(coef, G, vs, "omega_e_y_e", size, func(v int) float64 {
		return math.Pow(float64(v)+0.5, float64(n)) - math.Pow(0.5, float64(n))
	})
}

// seriesShift adds to each coefficient β_c = Σ_a G_ca y_a of a secondary fit
// over the levels vs the shift by an omitted term of the given size and
// column col(v): δβ_c = Σ_a G_ca·size·col(v_a).
func seriesShift(coef []linear, G *mat.Dense, vs []int, term string, size float64, col func(v int) float64) {
	for c := range coef {
		d := 0.0
		for a, v := range vs {
			d += G.At(c, a) * size * col(v)
		}
		coef[c].tr = append(coef[c].tr, termShift{term, size, d})
	}
}

// noteDunhamCorrections states, beside ω_e, B_e and r_e of species sp in out,
// the order of magnitude of the Dunham correction their definitions neglect
// (see Derive) when it reaches a tenth of σ. ω_e comes from the constants
// (or, for the order of magnitude, the 1-0 band origin or Delta_G).
func noteDunhamCorrections(out []constants.Derived, sp string) {
	var omega, be float64
	for _, d := range out {
		if d.Species != sp {
			continue
		}
		switch d.Name {
		case "omega_e", "Delta_G", "nu0_1-0":
			if omega == 0 || d.Name == "omega_e" {
				omega = d.Value
			}
		case "B_e":
			be = d.Value
		}
	}
	if !(omega > 0) || !(be > 0) {
		return
	}
	k := be / omega
	for i := range out {
		d := &out[i]
		if d.Species != sp {
			continue
		}
		var size float64
		var form string
		switch d.Name {
		case "omega_e":
			size, form = be*k, "Y10 − ω_e ~ B_e²/ω_e"
		case "B_e":
			size, form = be*k*k, "Y01 − B_e ~ B_e³/ω_e²"
		case "r_e":
			size, form = d.Value*k*k/2, "Δr_e ~ r_e B_e²/(2ω_e²)"
		default:
			continue
		}
		if size >= d.Sigma/10 {
			d.Neglected = size
			d.Note += fmt.Sprintf("; neglected Dunham correction %s ≈ %.2g %s (order of magnitude; %s σ)", form, size, d.Unit, againstSigma(size, d.Sigma))
		}
	}
}

// hasUnconnected reports whether a term value of species s was held at 0
// for want of a line connecting its level (Result.Unconnected): the term
// values of s are then not all energies above its lowest level.
func (r *Result) hasUnconnected(s int) bool {
	sp := r.Model.Species()[s]
	for _, j := range r.Unconnected {
		if r.Params[j].Species == sp {
			return true
		}
	}
	return false
}

// gls fits y_i = p[idx[i]] ≈ Σ_c X_c(v_i) β_c by generalised least squares with
// the covariance of the p[idx] from the fit, and returns each β_c with its
// gradient with respect to all model parameters (β = G y with
// G = (XᵀC⁻¹X)⁻¹XᵀC⁻¹; exact interpolation when len(idx) = ncoef), and G.
func gls(r *Result, idx []int, vs []int, x func(v int) []float64, ncoef int) ([]linear, *mat.Dense, bool) {
	n := len(idx)
	if n < ncoef {
		return nil, nil, false
	}
	pos := map[int]int{}
	for c, j := range r.Free {
		pos[j] = c
	}
	C := mat.NewSymDense(n, nil)
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			pa, oka := pos[idx[a]]
			pb, okb := pos[idx[b]]
			v := 0.0
			if oka && okb {
				v = r.Cov.At(pa, pb)
			}
			C.SetSym(a, b, v)
		}
	}
	X := mat.NewDense(n, ncoef, nil)
	y := mat.NewVecDense(n, nil)
	for a := 0; a < n; a++ {
		X.SetRow(a, x(vs[a]))
		y.SetVec(a, r.Params[idx[a]].Value)
	}
	var G mat.Dense
	if n == ncoef {
		if err := G.Inverse(X); err != nil {
			return nil, nil, false
		}
	} else {
		var ch mat.Cholesky
		if !ch.Factorize(C) {
			return nil, nil, false
		}
		var cinvX mat.Dense
		if err := ch.SolveTo(&cinvX, X); err != nil {
			return nil, nil, false
		}
		var A mat.Dense
		A.Mul(X.T(), &cinvX)
		var Ainv mat.Dense
		if err := Ainv.Inverse(&A); err != nil {
			return nil, nil, false
		}
		G.Mul(&Ainv, cinvX.T())
	}
	np := len(r.Params)
	out := make([]linear, ncoef)
	for c := 0; c < ncoef; c++ {
		g := make([]float64, np)
		v := 0.0
		for a := 0; a < n; a++ {
			g[idx[a]] += G.At(c, a)
			v += G.At(c, a) * y.AtVec(a)
		}
		out[c] = linear{v: v, g: g}
	}
	return out, &G, true
}

func scaleLin(q linear, f float64) linear { return q.through(q.v*f, f) }

func scaleG(g []float64, f float64) []float64 {
	out := make([]float64, len(g))
	for i, x := range g {
		out[i] = x * f
	}
	return out
}

func combine(a []float64, fa float64, b []float64, fb float64) []float64 {
	out := make([]float64, len(a))
	for i := range a {
		out[i] = fa*a[i] + fb*b[i]
	}
	return out
}

// againstSigma words the size x of a neglected or truncated part against the
// constant's σ: "larger than" above it, "comparable to" from half of it,
// "below" under that (the notes state x from a tenth of σ on).
func againstSigma(x, sigma float64) string {
	switch {
	case x > sigma:
		return "larger than"
	case x >= sigma/2:
		return "comparable to"
	}
	return "below"
}
