package thermo

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/species"
	"bandwright/units"
)

func fnField(f Functions, i int) float64 {
	return [6]float64{f.Q, f.Cp, f.S, f.HmH0, f.HmH298, f.Gef}[i]
}

func gradField(g *Gradients, i int) []float64 {
	return [6][]float64{g.Q, g.Cp, g.S, g.HmH0, g.HmH298, g.Gef}[i]
}

var fnNames = [6]string{"Q", "Cp", "S", "H-H0", "H-H298", "gef"}

// checkGradients compares the analytic parameter derivatives of every function
// with central differences (gonum/diff/fd) of System.Evaluate, in the scaled
// coordinates x = x̂ + σ∘u (u in units of each parameter's σ).
func checkGradients(t *testing.T, sys *System, temps []float64) {
	t.Helper()
	x0 := sys.FreeValues()
	sd := make([]float64, len(x0))
	for i := range sd {
		sd[i] = math.Sqrt(sys.cov.At(i, i))
	}
	settings := &fd.Settings{Formula: fd.Central, Step: 1e-2}
	for _, T := range temps {
		f0, g := sys.FunctionsAt(T)
		for fi := 0; fi < 6; fi++ {
			num := fd.Gradient(nil, func(u []float64) float64 {
				x := make([]float64, len(u))
				for i := range u {
					x[i] = x0[i] + sd[i]*u[i]
				}
				return fnField(sys.Evaluate(x, T), fi)
			}, make([]float64, len(x0)), settings)
			an := gradField(g, fi)
			scale := 0.0
			for i := range num {
				scale = math.Max(scale, math.Abs(an[i]*sd[i]))
			}
			for i := range num {
				a := an[i] * sd[i]
				// Roundoff of the differences: ~1e-15·|f|/step.
				tol := 1e-6*scale + 1e-12*math.Abs(fnField(f0, fi))/settings.Step
				if !scalar.EqualWithinAbs(a, num[i], tol) {
					t.Errorf("%g K: ∂%s/∂%s: analytic %.8g, finite difference %.8g (per σ)", T, fnNames[fi], sys.names[i], a, num[i])
				}
			}
		}
	}
}

// TestGradientsAgainstFiniteDifferences checks the analytic derivatives used in
// the linear propagation (gonum/diff/fd central differences, as gonum checks
// its own gradients).
func TestGradientsAgainstFiniteDifferences(t *testing.T) {
	rec, c := fitHH(t, hhCO, 0.002, 5)
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: []float64{ReferenceTemperature}})
	if err != nil {
		t.Fatal(err)
	}
	checkGradients(t, res.System, []float64{20, 100, ReferenceTemperature, 1000, 3000, 6000})

	// A homonuclear molecule with an excited state that brings its own
	// constants record (a second covariance block) and one that is the shifted
	// ground state.
	recN, cN := fitHH(t, hhN2, 0.002, 6)
	_, cA := fitHH(t, hhN2, 0.004, 7)
	states := []State{
		{Label: "X", Multiplicity: 1, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '+'}},
		{Label: "A", TermEnergy: 3000, Multiplicity: 3, Symmetry: species.StateSymmetry{Parity: 'u', Reflection: '+'}, Constants: cA},
		{Label: "B", TermEnergy: 5000, Multiplicity: 3, Lambda: 1, Symmetry: species.StateSymmetry{Parity: 'g'}},
	}
	res, err = Compute(Problem{Constants: cN, Observed: recN.Observed, States: states}, Settings{Temperatures: []float64{1000}})
	if err != nil {
		t.Fatal(err)
	}
	if n := len(res.System.ParamNames()); n != 12 {
		t.Fatalf("%d combined parameters, want 12: %v", n, res.System.ParamNames())
	}
	checkGradients(t, res.System, []float64{ReferenceTemperature, 2000, 5000})
}

// TestMonteCarloAgreesWithLinear: for a well-determined fit the model is near
// linear over the parameter spread, so the Monte Carlo spread (4000 draws;
// statistical uncertainty of a σ estimate ≈ 1/√(2N) ≈ 1.1 %) and the linear σ
// agree within 5 %.
func TestMonteCarloAgreesWithLinear(t *testing.T) {
	rec, c := fitHH(t, hhCO, 0.002, 8)
	temps := []float64{50, 200, ReferenceTemperature, 1000, 3000}
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: temps, MonteCarlo: 4000, Seed: 42})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range res.Rows {
		for fi := 0; fi < 6; fi++ {
			lin, mc := fnField(r.Sigma, fi), fnField(r.MC.Sigma, fi)
			if lin == 0 && r.T == ReferenceTemperature && fi == 4 {
				if mc != 0 {
					t.Errorf("σ(H−H298) at 298.15 K: Monte Carlo %g, want 0", mc)
				}
				continue
			}
			if !scalar.EqualWithinRel(mc, lin, 0.05) {
				t.Errorf("%g K %s: σ linear %.4g, Monte Carlo %.4g", r.T, fnNames[fi], lin, mc)
			}
			// The Monte Carlo mean stays at the nominal value within a few σ/√N.
			if d := math.Abs(fnField(r.MC.Mean, fi) - fnField(r.F, fi)); d > 5*lin/math.Sqrt(4000)+1e-12 {
				t.Errorf("%g K %s: Monte Carlo mean off by %.3g (σ %.3g)", r.T, fnNames[fi], d, lin)
			}
		}
	}
}

// TestMonteCarloReproducible: the same seed gives the same spread whatever the
// number of goroutines; another seed gives another one.
func TestMonteCarloReproducible(t *testing.T) {
	rec, c := fitHH(t, hhHCl, 0.002, 9)
	temps := []float64{100, 1000, 4000}
	run := func(seed uint64, workers int) []Row {
		res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: temps, MonteCarlo: 300, Seed: seed, Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		return res.Rows
	}
	a, b, d := run(7, 1), run(7, 5), run(8, 2)
	same := func(x, y []Row) bool {
		for i := range x {
			for fi := 0; fi < 6; fi++ {
				if !scalar.EqualWithinAbsOrRel(fnField(x[i].MC.Sigma, fi), fnField(y[i].MC.Sigma, fi), 0, 0) ||
					!scalar.EqualWithinAbsOrRel(fnField(x[i].MC.Mean, fi), fnField(y[i].MC.Mean, fi), 0, 0) {
					return false
				}
			}
		}
		return true
	}
	if !same(a, b) {
		t.Error("Monte Carlo result depends on the number of goroutines")
	}
	if same(a, d) {
		t.Error("seeds 7 and 8 gave the same Monte Carlo result")
	}
}

// TestSamplerCovariance: the draws reproduce the covariance of the fit
// (sample covariance of 20000 draws, correlations within 0.03).
func TestSamplerCovariance(t *testing.T) {
	_, c := fitHH(t, hhCO, 0.002, 10)
	res, err := Compute(Problem{Constants: c}, Settings{Temperatures: []float64{300}})
	if err != nil {
		t.Fatal(err)
	}
	sys := res.System
	smp := sys.newSampler()
	n, p := 20000, sys.p
	xs := make([][]float64, n)
	mean := make([]float64, p)
	z := make([]float64, p)
	for d := range xs {
		xs[d] = make([]float64, p)
		smp.draw(xs[d], z, drawSource(1, d))
		for i := range mean {
			mean[i] += xs[d][i] / float64(n)
		}
	}
	for i := 0; i < p; i++ {
		for j := 0; j <= i; j++ {
			s := 0.0
			for _, x := range xs {
				s += (x[i] - mean[i]) * (x[j] - mean[j])
			}
			s /= float64(n - 1)
			want := sys.cov.At(i, j)
			rho := s / math.Sqrt(sys.cov.At(i, i)*sys.cov.At(j, j))
			rhoWant := want / math.Sqrt(sys.cov.At(i, i)*sys.cov.At(j, j))
			if i == j && !scalar.EqualWithinRel(s, want, 0.05) || i != j && math.Abs(rho-rhoWant) > 0.03 {
				t.Errorf("cov(%s, %s): sample %.4g, fit %.4g", sys.names[i], sys.names[j], s, want)
			}
		}
	}
}

func ExampleNuclearSpinWeights() {
	iso, _ := parseForExample("16O16O")
	y, _ := species.ParseStateSymmetry("g-")
	even, odd, _ := NuclearSpinWeights(iso, 0, y, SpinLineIntensity)
	fmt.Println(even, odd)
	// Output: 0 1
}

// TestMonteCarloMatchesDirectEvaluation: the Monte Carlo path (energies from
// the gradients, nominal Boltzmann factors times e^(−βδ)) gives, draw by draw,
// the functions of System.Evaluate, which evaluates the models afresh; the
// path that evaluates the models for every draw gives them too.
func TestMonteCarloMatchesDirectEvaluation(t *testing.T) {
	rec, c := fitHH(t, hhHCl, 0.05, 18) // large σ: δ/kT beyond the series range at low T
	temps := []float64{30, ReferenceTemperature, 2000, 6000}
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	sys := res.System
	const n = 16
	mc, dropped, reenum, err := sys.MonteCarlo(temps, n, 99, 2)
	t.Logf("reenumerated %d", reenum)
	if dropped != 0 {
		t.Errorf("%d draws of a well-determined fit dropped", dropped)
	}
	if err != nil {
		t.Fatal(err)
	}
	smp := sys.newSampler()
	x := make([]float64, sys.p)
	z := make([]float64, sys.p)
	var ws [4]welford
	xs := make([]float64, n*sys.p)
	for d := 0; d < n; d++ {
		smp.draw(x, z, drawSource(99, d))
		for k := range x {
			xs[d*sys.p+k] = x[k] - sys.x0[k]
		}
		for k, T := range temps {
			ws[k].add(sys.Evaluate(x, T))
		}
	}
	for k := range temps {
		direct := ws[k].stats()
		for fi := 0; fi < 6; fi++ {
			if !scalar.EqualWithinAbsOrRel(fnField(mc[k].Mean, fi), fnField(direct.Mean, fi), 1e-12, 1e-12) ||
				!scalar.EqualWithinAbsOrRel(fnField(mc[k].Sigma, fi), fnField(direct.Sigma, fi), 1e-12, 1e-7) {
				t.Errorf("%g K %s: Monte Carlo mean %.15g σ %.10g, direct %.15g σ %.10g", temps[k], fnNames[fi],
					fnField(mc[k].Mean, fi), fnField(mc[k].Sigma, fi), fnField(direct.Mean, fi), fnField(direct.Sigma, fi))
			}
		}
	}
	if !sys.linearCheck(xs[:sys.p]) {
		t.Error("the Dunham model failed the linearity check")
	}
	// The path that evaluates the models for each draw.
	for _, linear := range []bool{true, false} {
		got := make([]Functions, n)
		sys.mcGroup([]float64{2000}, xs, n, linear, 2, nil, func(d, _ int, m *moments) { got[d] = sys.functions(2000, m, 0) })
		for d := 0; d < n; d++ {
			x := make([]float64, sys.p)
			for k := range x {
				x[k] = sys.x0[k] + xs[d*sys.p+k]
			}
			e := sys.energiesAt(x, nil, nil)
			acc := newMoments(0)
			sys.accumulateAt(e, units.SecondRadiation/2000, acc)
			want := sys.functions(2000, acc, 0)
			if !scalar.EqualWithinRel(got[d].S, want.S, 1e-13) || !scalar.EqualWithinRel(got[d].Cp, want.Cp, 1e-11) {
				t.Errorf("linear=%v draw %d: S %.15g / %.15g, Cp %.15g / %.15g", linear, d, got[d].S, want.S, got[d].Cp, want.Cp)
			}
		}
	}
}

// TestMonteCarloWideCovariance: with the covariance of an HCl fit blown up a
// million-fold (σ × 1000), draws reach parameters whose levels fall below the
// zero level or turn over early. Those draws are dropped or enumerated again,
// and counted in a warning; the Monte Carlo spread stays finite and of the
// order of the linear σ instead of exploding (before the checks: σ_mc of Q
// at 3000 K of 1.6e14 against a linear 18.9 in the case that found it).
func TestMonteCarloWideCovariance(t *testing.T) {
	rec, c := fitHH(t, hhHCl, 0.05, 18)
	c.Cov.ScaleSym(1e6, c.Cov)
	temps := []float64{ReferenceTemperature, 3000}
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: temps, MonteCarlo: 400, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	mi := res.MonteCarlo
	if mi.Dropped == 0 && mi.Reenumerated == 0 {
		t.Fatalf("no draw dropped or enumerated again: %+v", mi)
	}
	warned := false
	for _, w := range res.Warnings {
		warned = warned || strings.HasPrefix(w, "Monte Carlo: ")
	}
	if !warned {
		t.Errorf("no warning about the draws: %q", res.Warnings)
	}
	for _, r := range res.Rows {
		lin, mc := r.Sigma.Q, r.MC.Sigma.Q
		if !(mc > 0) || math.IsInf(mc, 0) || mc > 100*lin {
			t.Errorf("%g K: σ_mc(Q) = %g against a linear %g", r.T, mc, lin)
		}
	}
	t.Logf("dropped %d, enumerated again %d of %d", mi.Dropped, mi.Reenumerated, mi.Draws)
}
