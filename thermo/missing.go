package thermo

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/model"
)

// estimateMissing estimates the vibrational levels a term-values model lacks, between
// and above the levels of the record whose energy is known (m.placed): G(v) from the band origins T_v fitted to
// ω(v+½) − ωx(v+½)² + const (ωx only with three or more levels), B_v linear in
// (v+½), D_v the mean of the fitted D_v (see fitVibration). A record with a
// single vibrational level gives no estimate. Levels run up to the top of the
// estimated G(v), the dissociation energy when given, and the population limit
// at tMax.
func (m *manifold) estimateMissing(c *constants.Set, lm *model.TermValues, sp int, term, eRef, eNeg, d0, tMax float64) {
	vs := m.placed
	if len(vs) < 2 {
		m.missNote = "only one vibrational level in the record: the missing levels cannot be estimated (their share of Q is not known)"
		// Still name the levels above as missing.
		m.missingV = nil
		return
	}
	est := fitVibration(c, lm, sp, vs)
	if !(est.omega > 0) {
		m.missNote = "the band origins of the record do not rise with v: the missing levels cannot be estimated"
		return
	}
	present := map[int]bool{}
	for _, v := range vs {
		present[v] = true
	}
	ceiling := math.Inf(1)
	what := "population limit at T_max"
	if d0 > 0 {
		ceiling = eRef + d0
		what = "the dissociation energy"
	} else if est.omegaX > 0 {
		vt := int(math.Floor(est.omega/(2*est.omegaX) - 0.5))
		ceiling = est.g(vt)
		what = "the top of the estimated G(v)"
	}
	prev := math.Inf(-1)
	for v := 0; v <= maxV; v++ {
		gv := est.g(v)
		if !(gv > prev) || gv > ceiling || term+gv-eRef > eNeg {
			break
		}
		prev = gv
		if present[v] {
			continue
		}
		m.missingV = append(m.missingV, v)
		b := est.b(v)
		if !(b > 0) {
			continue
		}
		ePrev := math.Inf(-1)
		for J := 0; J <= maxJ; J++ {
			x := float64(J) * float64(J+1)
			e := gv + b*x - est.dMean*x*x
			if !(e > ePrev) || e > ceiling || term+e-eRef > eNeg {
				break
			}
			ePrev = e
			m.missE = append(m.missE, e)
			m.missJ = append(m.missJ, int32(J))
		}
	}
	form := "ω(v+½) − ωx(v+½)²"
	if len(vs) == 2 {
		form = "ω(v+½) (harmonic, two levels in the record)"
	}
	m.missNote = fmt.Sprintf("estimated from the record's levels: G(v) = const + %s with ω = %.6g, ωx = %.4g cm-1; B_v = %.6g − %.4g(v+½) cm-1; D = %.4g cm-1; up to %s", form, est.omega, est.omegaX, est.be, est.alpha, est.dMean, what)
}

// vibEstimate is the vibrational structure estimated from the levels of a
// record: G(v) = g0 + ω(v+½) − ωx(v+½)², B_v = Be − α(v+½), D the mean D_v,
// all in cm⁻¹.
type vibEstimate struct {
	g0, omega, omegaX float64
	be, alpha         float64
	dMean             float64
}

// g returns the estimated G(v), cm⁻¹.
func (est vibEstimate) g(v int) float64 {
	h := float64(v) + 0.5
	return est.g0 + est.omega*h - est.omegaX*h*h
}

// b returns the estimated B_v, cm⁻¹.
func (est vibEstimate) b(v int) float64 { return est.be - est.alpha*(float64(v)+0.5) }

// fitVibration estimates the vibrational structure from the levels vs (two or
// more) of species sp of a term-values model: G(v) through the two band origins
// T_v = E(v, 0), or by least squares in (v+½) with ωx from three or more (the
// straight line through the outer two when that system is singular); Be and α
// by least squares of B_v on (v+½); D the mean of the fitted D_v (0 where a
// level has none).
func fitVibration(c *constants.Set, lm *model.TermValues, sp int, vs []int) vibEstimate {
	tv := make([]float64, len(vs))
	bv := make([]float64, len(vs))
	dSum := 0.0
	for i, v := range vs {
		tv[i] = c.Model.Energy(sp, v, 0, c.Values, nil)
		if k := lm.Index(sp, v, "B"); k >= 0 {
			bv[i] = c.Values[k]
		}
		if k := lm.Index(sp, v, "D"); k >= 0 {
			dSum += c.Values[k]
		}
	}
	var est vibEstimate
	est.dMean = dSum / float64(len(vs))
	// G(v): least squares in (v+½).
	if len(vs) == 2 {
		est.omega = (tv[1] - tv[0]) / float64(vs[1]-vs[0])
		est.g0 = tv[0] - est.omega*(float64(vs[0])+0.5)
	} else {
		a := mat.NewDense(len(vs), 3, nil)
		y := mat.NewVecDense(len(vs), tv)
		for i, v := range vs {
			h := float64(v) + 0.5
			a.Set(i, 0, 1)
			a.Set(i, 1, h)
			a.Set(i, 2, -h*h)
		}
		var sol mat.VecDense
		if err := sol.SolveVec(a, y); err == nil {
			est.g0, est.omega, est.omegaX = sol.AtVec(0), sol.AtVec(1), sol.AtVec(2)
		} else {
			est.omega = (tv[len(vs)-1] - tv[0]) / float64(vs[len(vs)-1]-vs[0])
			est.g0 = tv[0] - est.omega*(float64(vs[0])+0.5)
		}
	}
	// B_v = Be − α(v+½) by least squares.
	var sx, sy, sxx, sxy float64
	for i, v := range vs {
		h := float64(v) + 0.5
		sx += h
		sy += bv[i]
		sxx += h * h
		sxy += h * bv[i]
	}
	n := float64(len(vs))
	den := n*sxx - sx*sx
	est.alpha = -(n*sxy - sx*sy) / den
	est.be = (sy + est.alpha*sx) / n
	return est
}
