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
// add more than vibThresholdCp to Cp°: the rise of Cp° when every level of
// the states the record describes gets a harmonic ladder E + vω (v ≥ 1),
// ω a safe lower bound of ω_e, the Kratzer estimate ω_e ≈ √(4B³/D) (common
// practice; D + 3σ_D for D) divided by kratzerFactor, or omegaFloor when D is
// not determined. For the ground state alone that rise is the harmonic
// R x²eˣ/(eˣ−1)², x = c₂ω/T; an excited state's ladder counts with the
// population of the state, so its term energy holds the limit up.
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
		on := make([]bool, len(sys.states))
		var labels []string
		for s := range sys.states {
			if sys.stateMan[s] == mi {
				on[s] = true
				labels = append(labels, sys.states[s].Label)
			}
		}
		w, how := sys.omegaLowerBound(mi)
		T := sys.ladderThreshold(w, on)
		if T < out.T {
			label := src.c.Model.Species()[src.sp]
			out = vibThreshold{T: T, omega: w, why: fmt.Sprintf("%s, state %s: the record has a single vibrational level (v = %s) and the electronic-states file gives no omega_e, so the vibrational levels are unknown; above %.4g K they could add more than %g J mol-1 K-1 to Cp° (harmonic, ω_e ≥ %.4g cm-1: %s)",
				label, strings.Join(labels, ", "), compressInts(src.recV), T, vibThresholdCp, w, how)}
		}
	}
	return out
}

// ladderThreshold returns the lowest temperature (MinTemperature … MaxTemperature; +Inf
// when none) at which the ladder of ω on the levels of the states marked in
// on adds vibThresholdCp to Cp°: the first crossing on a grid of ratio 1.02,
// refined by bisection.
func (sys *System) ladderThreshold(omega float64, on []bool) float64 {
	rise := func(T float64) float64 {
		return units.GasConstant*sys.ladderCp(units.SecondRadiation/T, omega, on) - vibThresholdCp
	}
	lo := MinTemperature
	if rise(lo) > 0 {
		return lo
	}
	for hi := lo * 1.02; lo < MaxTemperature; lo, hi = hi, hi*1.02 {
		hi = math.Min(hi, MaxTemperature)
		if rise(hi) <= 0 {
			continue
		}
		for i := 0; i < 60 && hi-lo > 1e-9*hi; i++ {
			if mid := (lo + hi) / 2; rise(mid) > 0 {
				hi = mid
			} else {
				lo = mid
			}
		}
		return hi
	}
	return math.Inf(1)
}

// ladderCp returns the rise of Cp°/R at β = c₂/T when every level i of the
// states marked in on gets the levels E_i + vω, v ≥ 1, of its weight. With
// y = e^(−βω) the ladder's sums are Σ y^v = y/(1−y), Σ v y^v = y/(1−y)² and
// Σ v² y^v = y(1+y)/(1−y)³, and Cp°/R = β²(⟨E²⟩ − ⟨E⟩²) before and after.
func (sys *System) ladderCp(beta, omega float64, on []bool) float64 {
	y := math.Exp(-beta * omega)
	z0, z1, z2 := y/(1-y), y/((1-y)*(1-y)), y*(1+y)/((1-y)*(1-y)*(1-y))
	var a0, a1, a2, b0, b1, b2 float64
	for i, e := range sys.e[:sys.cut(beta)] {
		t := sys.w[i] * math.Exp(-beta*e)
		a0 += t
		a1 += t * e
		a2 += t * e * e
		if on[sys.st[i]] {
			b0 += t * z0
			b1 += t * (e*z0 + omega*z1)
			b2 += t * (e*e*z0 + 2*e*omega*z1 + omega*omega*z2)
		}
	}
	variance := func(q, m1, m2 float64) float64 { return m2/q - (m1/q)*(m1/q) }
	return beta * beta * (variance(a0+b0, a1+b1, a2+b2) - variance(a0, a1, a2))
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
