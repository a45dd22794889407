package fit

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// propertyLines are noisy 12C16O and 13C16O lines (Huber & Herzberg 1979
// constants, from memory, mass-scaled) with a few pure-rotation lines: the
// common input of the invariance checks.
func propertyLines(t *testing.T) ([]linelist.Line, yset) {
	y := hhCO.dunham()
	rng := newRNG(11)
	lines := makeLines("12C16O", "p.csv", y, irBranches([][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}}, 30), 2e-4, rng)
	// Pure-rotation lines are measured far better (microwave).
	lines = append(lines, makeLines("12C16O", "p.csv", y, irBranches([][2]int{{0, 0}, {1, 1}}, 10), 2e-6, rng)...)
	y13 := massScaled(y, reducedMass(t, "12C16O"), reducedMass(t, "13C16O"))
	lines = append(lines, makeLines("13C16O", "p.csv", y13, irBranches([][2]int{{1, 0}, {2, 1}}, 25), 2e-4, rng)...)
	renumber(lines)
	return lines, y
}

// sameFit requires the same parameter values and σ (relative tol), the same
// lines used, and returns nothing.
func sameFit(t *testing.T, what string, a, b *Result, tol float64) {
	t.Helper()
	for j := range a.Params {
		pa, pb := a.Params[j], b.Params[j]
		if !scalar.EqualWithinRel(pa.Value, pb.Value, tol) || !scalar.EqualWithinRel(pa.Sigma, pb.Sigma, tol) {
			t.Errorf("%s: %s = %.15g ± %.6g, was %.15g ± %.6g (rel. diff %.2g, %.2g)", what, pa.ID(), pb.Value, pb.Sigma, pa.Value, pa.Sigma,
				math.Abs(pb.Value-pa.Value)/math.Abs(pa.Value), math.Abs(pb.Sigma-pa.Sigma)/pa.Sigma)
		}
	}
	if a.Stats.Used != b.Stats.Used {
		t.Errorf("%s: %d lines used, was %d", what, b.Stats.Used, a.Stats.Used)
	}
}

// TestLineOrderInvariance: the least-squares solution does not depend on
// the order of the lines (common practice); values and σ agree to 1e-9.
func TestLineOrderInvariance(t *testing.T) {
	lines, y := propertyLines(t)
	spec := ModelSpec{Kind: model.KindDunham, Terms: y.terms()}
	a := mustFit(t, lines, spec, Settings{Reject: DefaultReject})
	shuffled := append([]linelist.Line(nil), lines...)
	newRNG(3).Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	b := mustFit(t, shuffled, spec, Settings{Reject: DefaultReject})
	if b.Model.Species()[0] != a.Model.Species()[0] {
		// The reference is the first species met; keep it the same.
		t.Fatalf("reference changed with the order: %s vs %s", b.Model.Species()[0], a.Model.Species()[0])
	}
	sameFit(t, "shuffled", a, b, 1e-9)
	if !scalar.EqualWithinRel(a.Stats.Sigma, b.Stats.Sigma, 1e-9) {
		t.Errorf("s = %.12g shuffled, %.12g in order", b.Stats.Sigma, a.Stats.Sigma)
	}
}

// TestUncertaintyScaleInvariance: with the covariance scaled by s² (the
// convention of package fit), multiplying every unc by c leaves values and σ
// unchanged and divides s by c.
func TestUncertaintyScaleInvariance(t *testing.T) {
	lines, y := propertyLines(t)
	spec := ModelSpec{Kind: model.KindDunham, Terms: y.terms()}
	a := mustFit(t, lines, spec, Settings{Reject: DefaultReject})
	for _, c := range []float64{10, 0.01} {
		scaled := append([]linelist.Line(nil), lines...)
		for i := range scaled {
			scaled[i].Unc *= c
		}
		b := mustFit(t, scaled, spec, Settings{Reject: DefaultReject})
		sameFit(t, "unc scaled", a, b, 1e-9)
		if !scalar.EqualWithinRel(b.Stats.Sigma, a.Stats.Sigma/c, 1e-9) {
			t.Errorf("c = %g: s = %.12g, want s/c = %.12g", c, b.Stats.Sigma, a.Stats.Sigma/c)
		}
		for i := range a.Lines {
			// o−c agrees to rounding: within 1e-6 of the original unc.
			if !scalar.EqualWithinAbs(b.Lines[i].Norm*c, a.Lines[i].Norm, 1e-6) {
				t.Fatalf("c = %g: line %d (o−c)/unc = %g, want %g", c, i, b.Lines[i].Norm, a.Lines[i].Norm/c)
			}
		}
	}
}

// TestMHzLines: the same lines given in MHz (1 cm⁻¹ = 29 979.2458 MHz, exact
// from the SI value of c) give the same constants; o−c of an MHz line is
// reported in MHz.
func TestMHzLines(t *testing.T) {
	lines, y := propertyLines(t)
	spec := ModelSpec{Kind: model.KindDunham, Terms: y.terms()}
	a := mustFit(t, lines, spec, Settings{Reject: DefaultReject})
	for _, which := range []string{"pure rotation", "all"} {
		mhz := append([]linelist.Line(nil), lines...)
		n := 0
		for i := range mhz {
			if which == "all" || mhz[i].VUp == mhz[i].VLo {
				mhz[i].Position *= 29979.2458 // CODATA 2018 c (exact), common practice
				mhz[i].Unc *= 29979.2458
				mhz[i].Unit = linelist.MHz
				if a.Lines[i].Used {
					n++ // Stats.LinesMHz counts the MHz lines used
				}
			}
		}
		b := mustFit(t, mhz, spec, Settings{Reject: DefaultReject})
		sameFit(t, which+" in MHz", a, b, 1e-9)
		if b.Stats.LinesMHz != n {
			t.Errorf("%s: %d MHz lines counted, want %d", which, b.Stats.LinesMHz, n)
		}
		for i := range mhz {
			if mhz[i].Unit != linelist.MHz {
				continue
			}
			if !scalar.EqualWithinAbsOrRel(b.Lines[i].OmC, a.Lines[i].OmC*29979.2458, 1e-6*mhz[i].Unc, 1e-6) {
				t.Fatalf("%s: line %d o−c = %g MHz, want %g", which, i, b.Lines[i].OmC, a.Lines[i].OmC*29979.2458)
			}
			if !scalar.EqualWithinRel(b.Lines[i].Calc, a.Lines[i].Calc*29979.2458, 1e-12) {
				t.Fatalf("%s: line %d calc = %g MHz, want %g", which, i, b.Lines[i].Calc, a.Lines[i].Calc*29979.2458)
			}
		}
	}
}

// energyOnly hides the Transition method of a model, so the fit forms ν and
// its gradient from two energy evaluations (the path for models that do not
// implement model.Transitioner).
type energyOnly struct{ model.Model }

// TestFitWithoutTransitioner: both ways of evaluating a transition give the
// same fit.
func TestFitWithoutTransitioner(t *testing.T) {
	lines, y := propertyLines(t)
	for _, spec := range []ModelSpec{{Kind: model.KindDunham, Terms: y.terms()}, {Kind: model.KindTermValues, Terms: []string{"B", "D"}}} {
		m, err := BuildModel(lines, spec)
		if err != nil {
			t.Fatal(err)
		}
		if _, ok := m.(model.Transitioner); !ok {
			t.Fatalf("%s model does not implement model.Transitioner", spec.Kind)
		}
		a, err := Fit(Problem{Lines: lines, Model: m}, Settings{Reject: DefaultReject, Round: true})
		if err != nil {
			t.Fatal(err)
		}
		b, err := Fit(Problem{Lines: lines, Model: energyOnly{m}}, Settings{Reject: DefaultReject, Round: true})
		if err != nil {
			t.Fatal(err)
		}
		sameFit(t, spec.Kind+" without Transition", a, b, 1e-9)
		for i := range a.Lines {
			if !scalar.EqualWithinAbs(a.Lines[i].Norm, b.Lines[i].Norm, 1e-4) {
				t.Fatalf("%s: line %d (o−c)/unc %g vs %g", spec.Kind, i, a.Lines[i].Norm, b.Lines[i].Norm)
			}
		}
	}
}
