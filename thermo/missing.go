package thermo

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/model"
)

// estimateMissing estimates the vibrational levels a term-values model lacks, between
// and above the levels of the record: G(v) from the band origins T_v fitted to
// ω(v+½) − ωx(v+½)² + const (ωx only with three or more levels), B_v linear in
// (v+½), D_v the mean of the fitted D_v. A record with a single vibrational
// level gives no estimate. Levels run up to the top of the estimated G(v), the dissociation energy
// when given, and the population limit at tMax.
func (m *manifold) estimateMissing(c *constants.Set, lm *model.TermValues, sp int, term, eRef, eNeg, d0, tMax float64) {
	vs := lm.LevelsOf(sp)
	if len(vs) < 2 {
		m.missNote = "only one vibrational level in the record: the missing levels cannot be estimated (their share of Q is not known)"
		// Still name the levels above as missing.
		m.missingV = nil
		return
	}
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
	dMean := dSum / float64(len(vs))
	// G(v): least squares in (v+½).
	var omega, omegaX, g0 float64
	if len(vs) == 2 {
		omega = (tv[1] - tv[0]) / float64(vs[1]-vs[0])
		g0 = tv[0] - omega*(float64(vs[0])+0.5)
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
			g0, omega, omegaX = sol.AtVec(0), sol.AtVec(1), sol.AtVec(2)
		} else {
			omega = (tv[len(vs)-1] - tv[0]) / float64(vs[len(vs)-1]-vs[0])
			g0 = tv[0] - omega*(float64(vs[0])+0.5)
		}
	}
	// B_v = Be − α(v+½) by least squares.
	var be, alpha float64
	{
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
		alpha = -(n*sxy - sx*sy) / den
		be = (sy + alpha*sx) / n
	}
	if !(omega > 0) {
		m.missNote = "the band origins of the record do not rise with v: the missing levels cannot be estimated"
		return
	}
	G := func(v int) float64 { h := float64(v) + 0.5; return g0 + omega*h - omegaX*h*h }
	present := map[int]bool{}
	for _, v := range vs {
		present[v] = true
	}
	ceiling := math.Inf(1)
	what := "population limit at T_max"
	if d0 > 0 {
		ceiling = eRef + d0
		what = "the dissociation energy"
	} else if omegaX > 0 {
		vt := int(math.Floor(omega/(2*omegaX) - 0.5))
		ceiling = G(vt)
		what = "the top of the estimated G(v)"
	}
	prev := math.Inf(-1)
	for v := 0; v <= maxV; v++ {
		gv := G(v)
		if !(gv > prev) || gv > ceiling || term+gv-eRef > eNeg {
			break
		}
		prev = gv
		if present[v] {
			continue
		}
		m.missingV = append(m.missingV, v)
		b := be - alpha*(float64(v)+0.5)
		if !(b > 0) {
			continue
		}
		ePrev := math.Inf(-1)
		for J := 0; J <= maxJ; J++ {
			x := float64(J) * float64(J+1)
			e := gv + b*x - dMean*x*x
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
	m.missNote = fmt.Sprintf("estimated from the record's levels: G(v) = const + %s with ω = %.6g, ωx = %.4g cm-1; B_v = %.6g − %.4g(v+½) cm-1; D = %.4g cm-1; up to %s", form, omega, omegaX, be, alpha, dMean, what)
}
