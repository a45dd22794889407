package thermo

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/internal/failure"
	"bandwright/units"
)

// withValue returns a copy of c with the fitted parameter named name set to x.
func withValue(t *testing.T, c *constants.Set, name string, x float64) *constants.Set {
	t.Helper()
	v := c.FreeValues()
	for k, j := range c.Free {
		if c.Params[j].Name == name {
			v[k] = x
			return c.WithFree(v)
		}
	}
	t.Fatalf("no fitted parameter %s", name)
	return nil
}

// allFinite fails the test on any NaN or Inf in the table, the Monte Carlo
// spread or the written files.
func allFinite(t *testing.T, r *Result) {
	t.Helper()
	for _, row := range r.Rows {
		for _, f := range []Functions{row.F, row.Sigma} {
			for _, x := range []float64{f.Q, f.Cp, f.S, f.HmH0, f.HmH298, f.Gef} {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("T = %g K: %+v ± %+v", row.T, row.F, row.Sigma)
				}
			}
		}
		if row.MC != nil {
			for _, x := range []float64{row.MC.Sigma.Q, row.MC.Sigma.Cp, row.MC.Sigma.S} {
				if math.IsNaN(x) || math.IsInf(x, 0) {
					t.Fatalf("T = %g K: Monte Carlo %+v", row.T, row.MC)
				}
			}
		}
	}
	var csv, js bytes.Buffer
	if err := r.WriteCSV(&csv); err != nil {
		t.Fatal(err)
	}
	if err := r.WriteJSON(&js, constants.Provenance{}); err != nil {
		t.Fatal(err)
	}
	for _, out := range []string{csv.String(), js.String()} {
		for _, bad := range []string{"NaN", "Inf"} {
			if strings.Contains(out, bad) {
				t.Fatalf("output holds %s", bad)
			}
		}
	}
}

// TestBvTurnsNegative: a Dunham record whose Y11 makes B_v = Y01 + Y11(v+½)
// negative from v = 40 on (αe raised to Be/40 for 12C16O) gives finite tables
// at 1 K … 100 000 K with linear and Monte Carlo σ; the sum stops at v = 39 and
// a warning says why.
func TestBvTurnsNegative(t *testing.T) {
	_, c := fitHH(t, hhCO, 0.001, 3)
	bad := withValue(t, c, "Y11", -hhCO.be/40)
	// B_v from the model itself: positive at v = 39, negative at v = 40.
	for v, want := range map[int]bool{39: true, 40: false} {
		dE := bad.Model.Energy(0, v, 1, bad.Values, nil) - bad.Model.Energy(0, v, 0, bad.Values, nil)
		if (dE > 0) != want {
			t.Fatalf("E(%d,1) − E(%d,0) = %v", v, v, dE)
		}
	}
	r, err := Compute(Problem{Constants: bad}, Settings{Temperatures: []float64{MinTemperature, 298.15, 3000, MaxTemperature}, MonteCarlo: 50, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	allFinite(t, r)
	if r.States[0].VMax != 39 || !strings.Contains(r.States[0].VTruncation, "B_v turns negative at v=40") {
		t.Errorf("levels: v ≤ %d, %q", r.States[0].VMax, r.States[0].VTruncation)
	}
	found := false
	for _, w := range r.Warnings {
		found = found || strings.Contains(w, "rotational constant B_v turns negative at v=40")
	}
	if !found {
		t.Errorf("warnings %q", r.Warnings)
	}
}

// TestBZeroRefused: constants whose B_0 is not positive describe no rotational
// levels; the sum is refused as a computation that cannot be done honestly.
func TestBZeroRefused(t *testing.T) {
	_, c := fitHH(t, hhCO, 0.001, 3)
	bad := withValue(t, c, "Y01", -0.5)
	_, err := Compute(Problem{Constants: bad}, Settings{Temperatures: []float64{298.15}})
	if err == nil || failure.KindOf(err) != failure.CannotCompute || !strings.Contains(err.Error(), "B_0 ≤ 0") {
		t.Errorf("%v", err)
	}
}

// TestTemperatureExtremes: at 1 K the level sum of 12C16O is the first two
// rotational levels (Q = 1 + 3 e^(−c₂·2B/T) + …, common practice), at 1 K that
// of 1H19F (B ≈ 21 cm-1) is the ground level alone, so Cp° is the translational
// 5/2 R; at 100 000 K every function is finite and Cp° lies between the
// translational 5/2 R and that plus R for vibration and R for rotation. Outside
// 1 … 100 000 K the settings are refused.
func TestTemperatureExtremes(t *testing.T) {
	_, co := fitHH(t, hhCO, 0.001, 5)
	r, err := Compute(Problem{Constants: co}, Settings{Temperatures: []float64{MinTemperature, MaxTemperature}})
	if err != nil {
		t.Fatal(err)
	}
	allFinite(t, r)
	e := func(J int) float64 {
		return co.Model.Energy(0, 0, J, co.Values, nil) - co.Model.Energy(0, 0, 0, co.Values, nil)
	}
	qWant := 1 + 3*math.Exp(-units.SecondRadiation*e(1)) + 5*math.Exp(-units.SecondRadiation*e(2)) + 7*math.Exp(-units.SecondRadiation*e(3))
	if q := r.Rows[0].F.Q; !scalar.EqualWithinRel(q, qWant, 1e-12) {
		t.Errorf("Q(1 K) = %.15g, direct sum %.15g", q, qWant)
	}
	hot := r.Rows[1].F
	if R := units.GasConstant; !(hot.Cp > 2.5*R && hot.Cp < 4.5*R) || !(hot.Q > 1) {
		t.Errorf("100 000 K: %+v", hot)
	}

	_, hf := fitHH(t, hhHF, 0.001, 5)
	r, err = Compute(Problem{Constants: hf}, Settings{Temperatures: []float64{MinTemperature}})
	if err != nil {
		t.Fatal(err)
	}
	allFinite(t, r)
	// E(J=1) of HF is 2B ≈ 42 cm-1: e^(−c₂·42/1 K) ≈ e^(−60), below the sum's cut.
	if f := r.Rows[0].F; !scalar.EqualWithinAbsOrRel(f.Q, 1, 1e-15, 1e-15) || !scalar.EqualWithinAbsOrRel(f.Cp, 2.5*units.GasConstant, 1e-9, 1e-12) {
		t.Errorf("HF at 1 K: Q = %v, Cp = %v (5/2 R = %v)", f.Q, f.Cp, 2.5*units.GasConstant)
	}

	for _, T := range []float64{1e-3, 0, -5, math.NaN(), math.Inf(1), 1e6} {
		if _, err := Compute(Problem{Constants: co}, Settings{Temperatures: []float64{T}}); err == nil {
			t.Errorf("T = %v K accepted", T)
		}
	}
}

// TestCovarianceNotPositiveSemidefinite: constants whose covariance has a
// negative eigenvalue (as a hand edit can make) are refused before any σ is
// computed, rather than propagated into square roots of negative numbers or
// quietly replaced in the Monte Carlo draws.
func TestCovarianceNotPositiveSemidefinite(t *testing.T) {
	_, c := fitHH(t, hhCO, 0.001, 3)
	bad := *c
	n := c.Cov.SymmetricDim()
	cov := mat.NewSymDense(n, nil)
	cov.CopySym(c.Cov)
	// Correlation of Y01 and Y11 set to 1.5.
	i, j := -1, -1
	for k, p := range c.Free {
		switch c.Params[p].Name {
		case "Y01":
			i = k
		case "Y11":
			j = k
		}
	}
	cov.SetSym(i, j, 1.5*math.Sqrt(cov.At(i, i)*cov.At(j, j)))
	bad.Cov = cov
	for _, mc := range []int{0, 100} {
		_, err := Compute(Problem{Constants: &bad}, Settings{Temperatures: []float64{298.15}, MonteCarlo: mc, Seed: 1})
		if err == nil || !strings.Contains(err.Error(), "not positive semi-definite") {
			t.Errorf("mc %d: %v", mc, err)
		}
	}
	// A negative variance.
	cov2 := mat.NewSymDense(n, nil)
	cov2.CopySym(c.Cov)
	cov2.SetSym(i, i, -cov2.At(i, i))
	bad.Cov = cov2
	if _, err := Compute(Problem{Constants: &bad}, Settings{Temperatures: []float64{298.15}}); err == nil || !strings.Contains(err.Error(), "variance of Y01") {
		t.Errorf("negative variance: %v", err)
	}
}
