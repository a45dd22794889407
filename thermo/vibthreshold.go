package thermo

import (
	"fmt"
	"math"
	"strings"

	"bandwright/constants"
	"bandwright/units"
)

// A record with a single vibrational level and no ω_e leaves the vibrational
// levels unknown. The table is refused at the temperatures where they could
// add more than vibThresholdCp to Cp°: the harmonic contribution
// R x²eˣ/(eˣ−1)², x = c₂ω/T, at a safe lower bound of ω_e, the Kratzer
// estimate ω_e ≈ √(4B³/D) (common practice; D + 3σ_D for D) divided by
// kratzerFactor, or omegaFloor when D is not determined.
const (
	vibThresholdCp = 0.01 // J mol⁻¹ K⁻¹
	kratzerFactor  = 1.5
	// omegaFloor is below the ground-state ω_e of every chemically bound
	// diatomic molecule (the lowest, Cs2, has 42 cm⁻¹; Huber & Herzberg 1979,
	// from memory), cm⁻¹.
	omegaFloor = 20.0
)

// vibThreshold is the highest temperature a record without vibrational
// structure can be summed to, and why.
type vibThreshold struct {
	T     float64 // K; +Inf: no limit
	omega float64 // the lower bound of ω_e used, cm⁻¹
	why   string
}

// vibrationThreshold returns the temperature limit of the sum: +Inf when every
// record determines its vibrational levels (or ω_e is given), else the
// lowest limit over the records that do not (see vibThresholdCp).
func (sys *System) vibrationThreshold() vibThreshold {
	out := vibThreshold{T: math.Inf(1)}
	for mi, m := range sys.manifolds {
		src := m.src
		if src.vib.determined {
			continue
		}
		w, how := sys.omegaLowerBound(mi)
		T := units.SecondRadiation * w / harmonicCpX(vibThresholdCp/units.GasConstant)
		if T < out.T {
			label := src.c.Model.Species()[src.sp]
			out = vibThreshold{T: T, omega: w, why: fmt.Sprintf("%s: the record has a single vibrational level (v = %s) and the electronic-states file gives no omega_e, so the vibrational levels are unknown; above %.4g K they could add more than %g J mol-1 K-1 to Cp° (harmonic, ω_e ≥ %.4g cm-1: %s)",
				label, compressInts(src.recV), T, vibThresholdCp, w, how)}
		}
	}
	return out
}

// omegaLowerBound returns the safe lower bound of ω_e of manifold mi (see
// vibThresholdCp) and how it was made.
func (sys *System) omegaLowerBound(mi int) (float64, string) {
	m := sys.manifolds[mi]
	src := m.src
	f := src.forms(src.recV[0])
	if len(f) < 3 {
		return omegaFloor, fmt.Sprintf("no centrifugal distortion D fitted, so no bound from the Kratzer relation: %g cm-1, below every chemically bound ground state", omegaFloor)
	}
	c := src.c
	b := f[1].eval(c.Values)
	d := -f[2].eval(c.Values)
	gf := make([]float64, len(c.Free))
	for k, j := range c.Free {
		gf[k] = f[2].g[j]
	}
	sd := math.Sqrt(math.Max(0, quad(c.Cov, gf)))
	if !(b > 0) || !(d > 3*sd) {
		return omegaFloor, fmt.Sprintf("D = %s cm-1 is not determined, so no bound from the Kratzer relation: %g cm-1, below every chemically bound ground state", constants.FormatParen(d, sd), omegaFloor)
	}
	w := math.Sqrt(4*b*b*b/(d+3*sd)) / kratzerFactor
	return math.Max(w, omegaFloor), fmt.Sprintf("the Kratzer estimate √(4B³/(D + 3σ_D)) with B = %.8g, D = %s cm-1, divided by %g", b, constants.FormatParen(d, sd), kratzerFactor)
}

// harmonicCpX returns the x = c₂ω/T at which the harmonic oscillator's
// Cp/R = x²eˣ/(eˣ−1)² equals y (0 < y < 1), by bisection (Cp/R falls as x
// grows).
func harmonicCpX(y float64) float64 {
	cp := func(x float64) float64 {
		e := math.Exp(-x)
		return x * x * e / ((1 - e) * (1 - e))
	}
	lo, hi := 1e-6, 200.0
	for i := 0; i < 200; i++ {
		mid := (lo + hi) / 2
		if cp(mid) > y {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// split returns the temperatures at or below the threshold and those above.
func (th vibThreshold) split(temps []float64) (ok, above []float64) {
	for _, t := range temps {
		if t > th.T {
			above = append(above, t)
		} else {
			ok = append(ok, t)
		}
	}
	return ok, above
}

// listTemperatures writes temperatures for a message, shortened when long.
func listTemperatures(ts []float64) string {
	var s []string
	for _, t := range ts {
		s = append(s, fmt.Sprintf("%g", t))
	}
	if len(s) > 8 {
		return fmt.Sprintf("%s, %s, … %s (%d temperatures)", s[0], s[1], s[len(s)-1], len(s))
	}
	return strings.Join(s, ", ")
}

// refuseAbove returns the error of the temperatures above the threshold (nil
// when there are none).
func (th vibThreshold) refuseAbove(temps []float64) error {
	_, bad := th.split(temps)
	if len(bad) == 0 {
		return nil
	}
	return cannot("%s. Refused: %s K. Give omega_e (with omega_e_sigma) for the state in an electronic-states file (--states), or ask only for temperatures ≤ %.4g K", th.why, listTemperatures(bad), th.T)
}

// omittedWarning states the temperatures left out of a default table.
func (th vibThreshold) omittedWarning(omitted []float64) string {
	return fmt.Sprintf("temperatures left out: %s K. %s. Give omega_e (with omega_e_sigma) for the state in an electronic-states file (--states) to have them", listTemperatures(omitted), th.why)
}
