package assign

import (
	"math"
)

// updateIntensityScales estimates, for every band and intensity group, the
// scale of observed to predicted intensity, ln(I_obs/I_pred) = g + h·E″ (h
// absorbs an error of the stated temperature), by least squares with two
// passes of 3×MAD trimming, and the pooled scatter σ_I of the residuals.
func (r *run) updateIntensityScales() {
	groups := map[[2]int][]ept{}
	for t, k := range r.assigned {
		if math.IsNaN(r.lnI[k]) {
			continue
		}
		b, br := r.bandOf(t)
		if b == nil {
			continue
		}
		P := br.inten[t.JLo]
		if !(P > 0) {
			continue
		}
		key := [2]int{b.id, br.group}
		groups[key] = append(groups[key], ept{br.elo[t.JLo], r.lnI[k] - math.Log(P)})
	}
	var allRes []float64
	for _, b := range r.bands {
		for g := 0; g < 2; g++ {
			ps := groups[[2]int{b.id, g}]
			if len(ps) == 0 {
				b.hasG[g] = false
				continue
			}
			keep := ps
			var g0, h0 float64
			for pass := 0; pass < 3; pass++ {
				g0, h0 = lineFit(keep, len(keep) >= 6)
				res := make([]float64, len(keep))
				for i, p := range keep {
					res[i] = math.Abs(p.y - g0 - h0*p.e)
				}
				mad := madToSigma * median(append([]float64(nil), res...))
				if pass == 2 || mad == 0 {
					break
				}
				var nk []ept
				for i, p := range keep {
					if res[i] <= 3*mad {
						nk = append(nk, p)
					}
				}
				if len(nk) < 3 {
					break
				}
				keep = nk
			}
			b.g[g], b.h[g], b.hasG[g] = g0, h0, true
			for _, p := range ps {
				allRes = append(allRes, math.Abs(p.y-g0-h0*p.e))
			}
		}
	}
	if len(allRes) >= 8 {
		r.sigI = math.Max(0.1, madToSigma*median(allRes))
	}
}

// ept is a point (lower-state energy, ln intensity ratio).
type ept struct{ e, y float64 }

// lineFit fits y = g + h·e by least squares (h = 0 unless withSlope).
func lineFit(ps []ept, withSlope bool) (float64, float64) {
	n := float64(len(ps))
	var se, sy, see, sey float64
	for _, p := range ps {
		se += p.e
		sy += p.y
		see += p.e * p.e
		sey += p.e * p.y
	}
	if !withSlope {
		return sy / n, 0
	}
	d := n*see - se*se
	if d <= 1e-12*n*see || d == 0 {
		return sy / n, 0
	}
	h := (n*sey - se*sy) / d
	return (sy - h*se) / n, h
}
