package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/units"
)

// TestNASA7RecoversPolynomial: data generated from one 7-coefficient set (the
// same polynomial in both ranges, so continuity holds, with a6 chosen for
// H°(298.15 K) = 0) are fitted exactly: the constrained least squares must
// return the coefficients in both ranges.
func TestNASA7RecoversPolynomial(t *testing.T) {
	a := [7]float64{3.3, 1.2e-3, -4.0e-7, 6.5e-11, -3.9e-15, 0, 4.7}
	// a6 such that H/(RT)·T = 0 at 298.15 K.
	T0 := ReferenceTemperature
	a[5] = -T0 * (a[0] + T0*(a[1]/2+T0*(a[2]/3+T0*(a[3]/4+T0*a[4]/5))))
	ref := NASARange{Coefficients: a}
	r := NASARanges{}.WithDefaults()
	lo, hi := r.grid()
	grid := append(append([]float64(nil), lo...), hi[1:]...)
	fs := make([]Functions, len(grid))
	R := units.GasConstant
	for i, T := range grid {
		fs[i] = Functions{Cp: ref.Cp(T) * R, HmH298: ref.H(T) * R * T / 1000, S: ref.S(T) * R}
	}
	n7, err := FitNASA7(grid, fs, r)
	if err != nil {
		t.Fatal(err)
	}
	for _, rg := range n7.Ranges {
		for k := range a {
			if !scalar.EqualWithinAbsOrRel(rg.Coefficients[k], a[k], 1e-9*math.Abs(a[k])+1e-20, 1e-6) {
				t.Errorf("range %g–%g K: a%d = %.10g, want %.10g", rg.TMin, rg.TMax, k+1, rg.Coefficients[k], a[k])
			}
		}
		if rg.MaxDeviation.Cp.Value > 1e-9 || rg.MaxDeviation.H.Value > 1e-9 || rg.MaxDeviation.S.Value > 1e-9 {
			t.Errorf("deviations %+v", rg.MaxDeviation)
		}
	}
}

// TestNASA7FromTable: for CO from the Huber–Herzberg constants the two fitted
// ranges are continuous in Cp, H and S at the breakpoint, give H°(298.15 K) = 0,
// and stay within their reported largest deviations of the table at every grid
// point.
func TestNASA7FromTable(t *testing.T) {
	rec, c := fitHH(t, hhCO, 0.001, 17)
	for _, brk := range []float64{1000, 1500} {
		res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: []float64{300}, NASA: NASARanges{Break: brk}})
		if err != nil {
			t.Fatal(err)
		}
		n := res.NASA
		lo, hi := n.Ranges[0], n.Ranges[1]
		if lo.TMax != brk || hi.TMin != brk || lo.TMin != 200 || hi.TMax != 6000 {
			t.Fatalf("ranges %g–%g, %g–%g", lo.TMin, lo.TMax, hi.TMin, hi.TMax)
		}
		if !scalar.EqualWithinAbsOrRel(lo.Cp(brk), hi.Cp(brk), 1e-10, 1e-10) ||
			!scalar.EqualWithinAbsOrRel(lo.H(brk), hi.H(brk), 1e-10, 1e-10) ||
			!scalar.EqualWithinAbsOrRel(lo.S(brk), hi.S(brk), 1e-10, 1e-10) {
			t.Errorf("breakpoint %g K: not continuous: Cp %g/%g, H %g/%g, S %g/%g", brk, lo.Cp(brk), hi.Cp(brk), lo.H(brk), hi.H(brk), lo.S(brk), hi.S(brk))
		}
		if h := lo.H(ReferenceTemperature) * ReferenceTemperature; math.Abs(h) > 1e-9 {
			t.Errorf("H(298.15 K)/R = %g K, want 0", h)
		}
		temps := []float64{200, 250, ReferenceTemperature, 500, 800, brk, 2000, 3500, 6000}
		fs := res.System.nominal(temps, 1)
		for i, T := range temps {
			rg := lo
			if T > brk {
				rg = hi
			}
			R := units.GasConstant
			if d := math.Abs(rg.Cp(T)*R - fs[i].Cp); d > rg.MaxDeviation.Cp.Value+1e-12 {
				t.Errorf("%g K: Cp deviation %g above the reported %g", T, d, rg.MaxDeviation.Cp.Value)
			}
			if d := math.Abs(rg.S(T)*R - fs[i].S); d > rg.MaxDeviation.S.Value+1e-12 {
				t.Errorf("%g K: S deviation %g above the reported %g", T, d, rg.MaxDeviation.S.Value)
			}
		}
		t.Logf("breakpoint %g K: max |ΔCp| %.3g / %.3g, |ΔH| %.3g / %.3g kJ/mol, |ΔS| %.3g / %.3g J/mol/K",
			brk, lo.MaxDeviation.Cp.Value, hi.MaxDeviation.Cp.Value, lo.MaxDeviation.H.Value, hi.MaxDeviation.H.Value, lo.MaxDeviation.S.Value, hi.MaxDeviation.S.Value)
		// A 7-term polynomial follows the smooth CO functions to a small
		// fraction of Cp (common practice: NASA fits are good to a few tenths of a per cent).
		if lo.MaxDeviation.Cp.Value > 0.3 || hi.MaxDeviation.Cp.Value > 0.3 {
			t.Errorf("Cp deviations %g, %g J/mol/K", lo.MaxDeviation.Cp.Value, hi.MaxDeviation.Cp.Value)
		}
	}
}
