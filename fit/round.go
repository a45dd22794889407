package fit

import (
	"fmt"
	"math"

	"bandwright/constants"
)

// round applies sequential rounding and refitting (R. J. Le Roy, J. Mol.
// Spectrosc. 191 (1998) 223), with the parameter sensitivity of J. K. G.
// Watson (J. Mol. Spectrosc. 66 (1977) 500) setting each rounding unit: the
// free parameter with the largest relative uncertainty is rounded to
// the coarsest power of ten (of Settings.Unit: cm⁻¹, or MHz, so that the
// constants shown in MHz, kHz or Hz are short decimals) not larger than a
// tenth of its conditional standard
// deviation σ_c = s/‖a_j‖ (its σ with every other parameter held, ‖a_j‖ the
// norm of its weighted design column), held at the rounded value, and the
// remaining parameters are refitted to the same lines; repeat until every
// parameter is rounded. Each rounding changes χ² by at most (σ_c/20)²/σ_c²·s² =
// s²/400, so the rounded constants reproduce the data as well as the unrounded
// ones. The reported σ, covariance and fit statistics stay those of the
// unrounded fit; the calculated positions and o−c of Result.Lines are those
// of the rounded constants.
// Calibration factors are refitted but not rounded.
func (w *work) round(res *Result) error {
	rd := &constants.Rounding{}
	rd.Chi2Before, _ = w.chi2()
	s := res.Stats.Sigma
	if !(s > 0) || math.IsNaN(s) {
		s = 1
	}
	remaining := append([]int(nil), w.free...)
	for len(remaining) > 0 {
		// Marginal relative σ from the current sub-fit, conditional σ from the
		// column norm.
		free := w.freeNow()
		pos := map[int]int{}
		for c, j := range free {
			pos[j] = c
		}
		best, bestRel := -1, -1.0
		for _, j := range remaining {
			c := pos[j]
			sd := math.Sqrt(w.res.Cov.At(c, c)) * s
			rel := math.Inf(1)
			if w.values[j] != 0 {
				rel = sd / math.Abs(w.values[j])
			}
			if rel > bestRel {
				best, bestRel = j, rel
			}
		}
		cn := w.columnNorm(best)
		if !(cn > 0) {
			return fmt.Errorf("fit: rounding: parameter %s has an empty design column", w.params[best].ID())
		}
		sc := s / cn
		f := w.s.Unit.PerWavenumber()
		shown := math.Pow(10, math.Floor(math.Log10(sc*f/10))) // in Settings.Unit
		unit := shown / f                                      // in cm⁻¹
		old := w.values[best]
		// Round in the unit shown, and print-and-parse so that the value is
		// the decimal a person reads there.
		w.values[best] = parseShort(math.Round(old*f/shown)*shown, shown) / f
		w.omcOK = false
		rd.Steps = append(rd.Steps, constants.RoundStep{Param: w.params[best].ID(), Unrounded: old, Rounded: w.values[best], Unit: unit, CondSigma: sc})
		w.fixedIdx[best] = true
		remaining = removeInt(remaining, best)
		if len(w.freeNow())+len(w.kfree) > 0 {
			if err := w.solve(); err != nil {
				return fmt.Errorf("fit: rounding: %w", err)
			}
		}
	}
	rd.Chi2After, _ = w.chi2()
	for j := range res.Params {
		res.Params[j].Value = w.values[j]
	}
	for f := range res.Calib {
		res.Calib[f].Kappa = w.kappa[f]
	}
	// The calculated positions and o−c are those of the constants reported.
	for i, l := range w.p.Lines {
		lr := &res.Lines[i]
		c := l.Unit.FromWavenumber(w.calc(i))
		lr.Calc = c
		lr.OmC = l.Position - c
		lr.Norm = lr.OmC / l.Unc
	}
	res.Rounding = rd
	return nil
}

// columnNorm returns √Σ_i (∂c_i/∂p_j / u_i)² over the used lines, c_i the
// calculated position (1+κ_f)ν_i at the current values.
func (w *work) columnNorm(j int) float64 {
	np := len(w.params)
	dnu := make([]float64, np)
	s1 := make([]float64, np)
	s2 := make([]float64, np)
	sum := 0.0
	for i := range w.p.Lines {
		if !w.used[i] {
			continue
		}
		w.transition(i, dnu, s1, s2)
		a := (1 + w.kappa[w.file[i]]) * dnu[j] / w.unc[i]
		sum += a * a
	}
	return math.Sqrt(sum)
}

func parseShort(x, unit float64) float64 {
	digits := max(0, int(-math.Floor(math.Log10(unit))))
	var y float64
	fmt.Sscanf(fmt.Sprintf("%.*f", digits, x), "%g", &y)
	return y
}

func removeInt(xs []int, x int) []int {
	out := xs[:0]
	for _, y := range xs {
		if y != x {
			out = append(out, y)
		}
	}
	return out
}
