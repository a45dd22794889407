package fit

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"bandwright/fit/model"
	"bandwright/fit/species"
)

// checkDerivedSigmas recomputes every derived constant of r as a function of
// the fitted parameters, takes its gradient by central finite differences
// (gonum diff/fd) and compares σ = √(gᵀCg) from that gradient with the σ
// Derive propagated from its analytic gradient. Each parameter is stepped in
// units of its own σ. It returns the number of constants checked.
func checkDerivedSigmas(t *testing.T, r *Result) int {
	t.Helper()
	nf := len(r.Free)
	nc := r.Cov.SymmetricDim()
	x0 := make([]float64, nf)
	sd := make([]float64, nf)
	for c, j := range r.Free {
		x0[c] = r.Params[j].Value
		sd[c] = r.Params[j].Sigma
	}
	// eval returns all derived values with the free parameters at x0 + sd∘u.
	eval := func(dst, u []float64) {
		q := *r
		q.Params = append([]model.Param(nil), r.Params...)
		for c, j := range r.Free {
			q.Params[j].Value = x0[c] + sd[c]*u[c]
		}
		ds := Derive(&q)
		for i := range dst {
			dst[i] = ds[i].Value
		}
	}
	base := r.Derived
	jac := mat.NewDense(len(base), nf, nil)
	fd.Jacobian(jac, eval, make([]float64, nf), &fd.JacobianSettings{Formula: fd.Central, Step: 1e-3})
	checked := 0
	for i, d := range base {
		if d.Name == "kappa" {
			continue // a parameter, not a function of the model parameters
		}
		g := make([]float64, nc)
		for c := 0; c < nf; c++ {
			g[c] = jac.At(i, c) / sd[c]
		}
		v := mat.NewVecDense(nc, g)
		want := math.Sqrt(math.Max(mat.Inner(v, r.Cov, v), 0))
		if !scalar.EqualWithinAbsOrRel(d.Sigma, want, 1e-12*math.Abs(d.Value), 1e-5) {
			t.Errorf("%s[%s] = %g: σ %g propagated, %g from a finite-difference gradient", d.Name, d.Species, d.Value, d.Sigma, want)
		}
		checked++
	}
	return checked
}

// TestDerivedGradients checks the σ of every derived constant — r_e, r_0, the
// Kratzer and Pekeris diagnostics, U_kl, Δ_kl, mass-scaled Y_kl, band origins
// and the generalised-least-squares B_e, α_e, γ_e, ω_e, ω_e x_e — against
// finite differences (gonum diff/fd, as gonum validates its own gradients).
func TestDerivedGradients(t *testing.T) {
	rng := newRNG(7)
	t.Run("dunham CO", func(t *testing.T) {
		y := hhCO.dunham()
		lines := makeLines("12C16O", "a.csv", y, hhCO.transitions(), 1e-3, rng)
		r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject})
		for _, name := range []string{"r_e", "D_e_Kratzer", "alpha_e_Pekeris", "U01", "U30"} {
			derivedOf(t, r.Derived, name, map[bool]string{true: "12C16O", false: ""}[name[0] != 'U'])
		}
		if n := checkDerivedSigmas(t, r); n < 10 {
			t.Errorf("only %d derived constants checked", n)
		}
	})
	t.Run("dunham HCl+DCl with breakdown", func(t *testing.T) {
		y := hhHCl.dunham()
		yD := massScaled(y, reducedMass(t, "1H35Cl"), reducedMass(t, "2H35Cl"))
		yD[[2]int{0, 1}] *= 1 + 3e-4 // breakdown-like misfit of the mass scaling
		yD[[2]int{1, 0}] *= 1 - 1e-4
		lines := append(makeLines("1H35Cl", "a.csv", y, hhHCl.transitions(), 1e-3, rng), makeLines("2H35Cl", "a.csv", yD, hhHCl.transitions(), 1e-3, rng)...)
		renumber(lines)
		r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms(), BOBTerms: []string{"Y10", "Y01"}}, Settings{Reject: DefaultReject})
		derivedOf(t, r.Derived, "Delta01_H", "")
		derivedOf(t, r.Derived, "Delta10_H", "")
		derivedOf(t, r.Derived, "r_e", "2H35Cl")
		checkDerivedSigmas(t, r)
	})
	t.Run("levels CO four levels", func(t *testing.T) {
		y := hhCO.dunham()
		y[[2]int{2, 1}] = 1e-6 // makes B_v curve so γ_e is not zero
		lines := makeLines("12C16O", "a.csv", y, irBranches([][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}}, 30), 1e-3, rng)
		r := mustFit(t, lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{Reject: DefaultReject})
		for _, name := range []string{"nu0_1-0", "nu0_2-0", "r_0", "B_e", "alpha_e", "gamma_e", "r_e", "omega_e", "omega_e_x_e"} {
			derivedOf(t, r.Derived, name, "12C16O")
		}
		checkDerivedSigmas(t, r)
	})
	t.Run("levels two levels with calibration", func(t *testing.T) {
		y := coTermValuesY()
		a := makeLines("12C16O", "a.csv", y, irBranches([][2]int{{1, 0}}, 30), 1e-3, rng)
		b := makeLines("12C16O", "b.csv", y, irBranches([][2]int{{1, 0}}, 25), 1e-3, rng)
		r := mustFit(t, append(a, b...), ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{Reject: DefaultReject, Calibrate: true})
		if r.Cov.SymmetricDim() != len(r.Free)+1 {
			t.Fatalf("covariance %d rows for %d parameters and one κ", r.Cov.SymmetricDim(), len(r.Free))
		}
		derivedOf(t, r.Derived, "kappa", "")
		checkDerivedSigmas(t, r)
	})
}

// TestCalibrationJacobian checks the rows of the linearised calibration
// problem, ∂[(1+κ_f)ν_i]/∂(p, κ), against a finite-difference Jacobian of the
// calculated positions at a point away from the solution.
func TestCalibrationJacobian(t *testing.T) {
	y := hhCO.dunham()
	a := makeLines("12C16O", "a.csv", y, irBranches([][2]int{{1, 0}, {2, 1}}, 10), 1e-3, nil)
	b := makeLines("13C16O", "b.csv", massScaled(y, reducedMass(t, "12C16O"), reducedMass(t, "13C16O")), irBranches([][2]int{{1, 0}}, 10), 1e-3, nil)
	c := makeLines("12C16O", "c.csv", y, irBranches([][2]int{{2, 0}}, 10), 1e-3, nil)
	lines := append(append(a, b...), c...)
	m, err := BuildModel(lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms(), BOBTerms: []string{"Y01"}})
	if err != nil {
		t.Fatal(err)
	}
	w, err := newWork(Problem{Lines: lines, Model: m}, Settings{Reject: DefaultReject, Calibrate: true})
	if err != nil {
		t.Fatal(err)
	}
	for j, p := range w.params {
		if p.Element == "" {
			w.values[j] = y[[2]int{p.K, p.L}] * 1.001
		} else {
			w.values[j] = 0.01
		}
	}
	w.kappa[1], w.kappa[2] = 3e-6, -2e-6
	free := w.freeNow()
	d := w.newDesign(free)
	ncol := len(free) + len(w.kfree)
	x0 := make([]float64, ncol)
	step := make([]float64, ncol)
	for c, j := range free {
		x0[c] = w.values[j]
		step[c] = math.Abs(w.values[j]) * 1e-4
	}
	for c, f := range w.kfree {
		x0[len(free)+c] = w.kappa[f]
		step[len(free)+c] = 1e-6
	}
	calc := func(dst, u []float64) {
		vals := append([]float64(nil), w.values...)
		kap := append([]float64(nil), w.kappa...)
		for c, j := range free {
			vals[j] = x0[c] + step[c]*u[c]
		}
		for c, f := range w.kfree {
			kap[f] = x0[len(free)+c] + step[len(free)+c]*u[len(free)+c]
		}
		for i, l := range lines {
			nu := m.Energy(w.sp[i], l.VUp, l.JUp, vals, nil) - m.Energy(w.sp[i], l.VLo, l.JLo, vals, nil)
			dst[i] = (1 + kap[w.file[i]]) * nu
		}
	}
	jac := mat.NewDense(len(lines), ncol, nil)
	fd.Jacobian(jac, calc, make([]float64, ncol), &fd.JacobianSettings{Formula: fd.Central, Step: 1e-2})
	row := make([]float64, ncol)
	for i, l := range lines {
		clear(row)
		res, unc := d.row(i, row)
		if want := l.Position - (1+w.kappa[w.file[i]])*(m.Energy(w.sp[i], l.VUp, l.JUp, w.values, nil)-m.Energy(w.sp[i], l.VLo, l.JLo, w.values, nil)); !scalar.EqualWithinAbsOrRel(res, want, 1e-9, 1e-12) || unc != l.Unc {
			t.Errorf("line %d: o−c %g, unc %g; want %g, %g", i, res, unc, want, l.Unc)
		}
		for c := range row {
			num := jac.At(i, c) / step[c]
			if !scalar.EqualWithinAbsOrRel(row[c]*step[c], jac.At(i, c), 1e-8, 1e-7) {
				t.Errorf("line %d (%s): ∂c/∂%s = %g analytic, %g finite difference", i, l.File, d.names[c], row[c], num)
			}
		}
	}
}

// TestReFromBe checks r_e = √(h/(8π²cμB_e)) of the derived constants against
// the r_e of Huber & Herzberg (1979, from memory) for CO, HCl, N2 and HF with the
// table's B_e held exactly (Y01 fixed) — the conversion alone, CODATA 2018
// constants and AME2020 masses; the table states r_e to 1e-6 Å (CO) or 1e-5 Å.
func TestReFromBe(t *testing.T) {
	for _, c := range hhAll {
		iso, err := species.Parse(c.label)
		if err != nil {
			t.Fatal(err)
		}
		re := species.RFromB(c.be, iso.ReducedMass())
		if !scalar.EqualWithinAbs(re, c.re, 1e-5) {
			t.Errorf("%s: r_e(B_e) = %.7f Å, table %g", c.label, re, c.re)
		}
		// The same through a fit with Y01 held at the table's B_e.
		y := c.dunham()
		lines := makeLines(c.label, "x.csv", y, c.transitions(), 1e-4, nil)
		var terms []string
		for _, n := range y.terms() {
			if n != "Y01" {
				terms = append(terms, n)
			}
		}
		r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: terms, Fixes: []model.Fix{{Name: "Y01", V: -1, Value: c.be}}}, Settings{Reject: DefaultReject})
		d := derivedOf(t, r.Derived, "r_e", c.label)
		if !scalar.EqualWithinRel(d.Value, re, 1e-14) || d.Sigma != 0 {
			t.Errorf("%s: derived r_e = %g ± %g, want %g ± 0 (B_e fixed)", c.label, d.Value, d.Sigma, re)
		}
	}
}

// TestDerivedNamesWhatWasFitted: a constant is named for what it is only when
// the data determine it. A Dunham model without Y20 and Y11 fitted to one band
// reports Y10 as the vibrational spacing Delta_G and Y01 as B_avg, and no
// ω_e, B_e, r_e or diagnostics built on them; a term-values fit of the
// fundamental gives the band origin, B_e and α_e (two levels fix B_v's slope),
// but no ω_e. For HCl (Huber & Herzberg 1979, from memory) the neglected
// Dunham correction of ω_e = Y10 (order B_e²/ω_e ≈ 0.04 cm⁻¹) exceeds σ and is
// stated; for CO B_e³/ω_e² ≈ 1.5e-6 cm⁻¹ is stated beside B_e when it reaches
// a tenth of σ.
func TestDerivedNamesWhatWasFitted(t *testing.T) {
	rng := newRNG(31)
	y := hhCO.dunham()
	lines := makeLines("12C16O", "fund.csv", y, irBranches([][2]int{{1, 0}}, 30), 1e-3, rng)
	r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: []string{"Y10", "Y01", "Y02"}}, Settings{})
	derivedOf(t, r.Derived, "Delta_G", "12C16O")
	derivedOf(t, r.Derived, "B_avg", "12C16O")
	for _, d := range r.Derived {
		switch d.Name {
		case "omega_e", "B_e", "r_e", "D_e_Kratzer", "alpha_e_Pekeris":
			t.Errorf("harmonic one-band Dunham fit reports %s = %g", d.Name, d.Value)
		}
	}
	tv := mustFit(t, lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{})
	derivedOf(t, tv.Derived, "nu0_1-0", "12C16O")
	derivedOf(t, tv.Derived, "alpha_e", "12C16O")
	for _, d := range tv.Derived {
		if d.Name == "omega_e" || d.Name == "omega_e_x_e" {
			t.Errorf("fundamental-only term-values fit reports %s = %g", d.Name, d.Value)
		}
	}

	hcl := mustFit(t, makeLines("1H35Cl", "hcl.csv", hhHCl.dunham(), hhHCl.transitions(), 1e-3, rng), ModelSpec{Kind: model.KindDunham, Terms: hhHCl.dunham().terms()}, Settings{})
	we := derivedOf(t, hcl.Derived, "omega_e", "1H35Cl")
	want := hhHCl.be * hhHCl.be / hhHCl.we
	t.Logf("HCl ω_e = %g(σ %.2g), neglected %.3g: %s", we.Value, we.Sigma, we.Neglected, we.Note)
	if !scalar.EqualWithinRel(we.Neglected, want, 0.01) || we.Neglected < we.Sigma || !strings.Contains(we.Note, "neglected Dunham correction") {
		t.Errorf("HCl ω_e: neglected correction %g (want B_e²/ω_e = %g), σ %g, note %q", we.Neglected, want, we.Sigma, we.Note)
	}
	re := derivedOf(t, hcl.Derived, "r_e", "1H35Cl")
	if !(re.Neglected > 0) {
		t.Errorf("HCl r_e: no neglected correction stated (σ %g): %q", re.Sigma, re.Note)
	}
}
