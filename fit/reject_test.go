package fit

import (
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/failure"
)

// noisyCO returns 12C16O lines of four bands with Gaussian noise of 1σ = unc
// (Huber & Herzberg 1979 constants, from memory).
func noisyCO(seed uint64, unc float64) ([]linelist.Line, yset) {
	y := hhCO.dunham()
	return makeLines("12C16O", "co.csv", y, hhCO.transitions(), unc, newRNG(seed)), y
}

// TestRejectPlantedOutliers plants five lines 50σ off: the fit must reject
// them and say why, and recover the constants from the rest (common practice:
// iterative rejection at 3 s).
func TestRejectPlantedOutliers(t *testing.T) {
	lines, y := noisyCO(21, 1e-3)
	planted := []int{3, 50, 111, 170, 222}
	for k, i := range planted {
		lines[i].Position += math.Copysign(50*lines[i].Unc, float64(k%2)-0.5)
	}
	spec := ModelSpec{Kind: model.KindDunham, Terms: y.terms()}
	r := mustFit(t, lines, spec, Settings{Reject: DefaultReject})
	for _, i := range planted {
		lr := r.Lines[i]
		if lr.Used || !strings.Contains(lr.Reason, "rejected in rejection round 1") || !strings.Contains(lr.Reason, "the residual shown is that of the final fit") {
			t.Errorf("planted outlier %d: used %v, reason %q (the round and which residual the reason's value is)", i, lr.Used, lr.Reason)
		}
		if math.Abs(lr.Norm) < 40 {
			t.Errorf("planted outlier %d: (o−c)/unc = %.1f, want ≈ ±50", i, lr.Norm)
		}
	}
	// Gaussian noise alone exceeds 3σ in 0.27 % of lines: allow a few more.
	if extra := r.Stats.Rejected - len(planted); extra < 0 || extra > 3 {
		t.Errorf("%d lines rejected besides the %d planted", extra, len(planted))
	}
	if r.Status != Converged {
		t.Errorf("status %v", r.Status)
	}
	for kl, want := range y {
		p := paramOf(t, r, model.DunhamName(kl[0], kl[1]))
		if math.Abs(p.Value-want) > 4*p.Sigma {
			t.Errorf("%s = %s, Huber & Herzberg %g", p.ID(), constants.FormatParen(p.Value, p.Sigma), want)
		}
	}
	if !(r.Stats.Sigma > 0.8 && r.Stats.Sigma < 1.2) {
		t.Errorf("s = %.3f after rejection", r.Stats.Sigma)
	}

	// Rejection off keeps every line.
	k := mustFit(t, lines, spec, Settings{})
	if k.Stats.Rejected != 0 || k.Stats.Used != len(lines) {
		t.Errorf("NoReject: %d rejected, %d used of %d", k.Stats.Rejected, k.Stats.Used, len(lines))
	}
	for _, i := range planted {
		if !k.Lines[i].Used || k.Lines[i].Reason != "" {
			t.Errorf("NoReject: line %d used %v reason %q", i, k.Lines[i].Used, k.Lines[i].Reason)
		}
	}
	if k.Stats.Sigma < 5 {
		t.Errorf("NoReject: s = %.2f; five 50σ outliers should inflate it", k.Stats.Sigma)
	}

	// A looser threshold (5 s) still finds the planted lines, and no others.
	loose := mustFit(t, lines, spec, Settings{Reject: 5})
	if loose.Stats.Rejected != len(planted) {
		t.Errorf("Reject 5: %d rejected, want the %d planted", loose.Stats.Rejected, len(planted))
	}
}

// TestRejectionCap plants outliers in 15 % of the lines: rejection stops at the
// 10 % cap with Status RejectionCapped and a warning.
func TestRejectionCap(t *testing.T) {
	lines, y := noisyCO(22, 1e-3)
	n := len(lines)
	bad := 0
	for i := 0; i < n; i += 7 { // ≈ 14 %
		lines[i].Position += float64(20+i%13) * lines[i].Unc
		bad++
	}
	r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject})
	if r.Status != RejectionCapped {
		t.Errorf("status %v, want RejectionCapped (%d of %d lines planted)", r.Status, bad, n)
	}
	if capN := int(math.Floor(0.10 * float64(n))); r.Stats.Rejected != capN {
		t.Errorf("%d rejected, want the cap %d", r.Stats.Rejected, capN)
	}
	found := false
	for _, w := range r.Warnings {
		if strings.Contains(w, "cap") && strings.Contains(w, "10 %") {
			found = true
		}
	}
	if !found {
		t.Errorf("no warning about the rejection cap in %q", r.Warnings)
	}
	// The worst lines go first: everything rejected is a planted line.
	for i, lr := range r.Lines {
		if !lr.Used && i%7 != 0 {
			t.Errorf("line %d rejected but not planted", i)
		}
	}
	// A higher cap lets all of them go.
	r2 := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject, MaxRejectFraction: 0.3})
	if r2.Status != Converged || r2.Stats.Rejected < bad {
		t.Errorf("cap 30 %%: status %v, %d rejected of %d planted", r2.Status, r2.Stats.Rejected, bad)
	}
}

// TestCalibrationFactor: the same band in two files, the second scaled by
// (1+κ) with κ = 5e-7, with noise: the fitted κ lies within 3σ of 5e-7 and
// the constants agree with the unscaled truth (Huber & Herzberg 1979, from
// memory).
func TestCalibrationFactor(t *testing.T) {
	const kappa = 5e-7
	y := hhCO.dunham()
	ts := hhCO.transitions()
	rng := newRNG(31)
	a := makeLines("12C16O", "ref.csv", y, ts, 1e-4, rng)
	b := makeLines("12C16O", "cal.csv", y, irBranches([][2]int{{1, 0}, {2, 1}}, 30), 1e-4, rng)
	for i := range b {
		b[i].Position *= 1 + kappa
	}
	lines := append(a, b...)
	spec := ModelSpec{Kind: model.KindDunham, Terms: y.terms()}
	r := mustFit(t, lines, spec, Settings{Reject: DefaultReject, Calibrate: true})
	if len(r.Calib) != 2 || !r.Calib[0].Fixed || r.Calib[0].Kappa != 0 || r.Calib[1].File != "cal.csv" {
		t.Fatalf("calibration %+v", r.Calib)
	}
	c := r.Calib[1]
	if z := math.Abs(c.Kappa-kappa) / c.Sigma; !(z < 3) {
		t.Errorf("κ = %s, planted %g: %.1fσ away", constants.FormatParen(c.Kappa, c.Sigma), kappa, z)
	}
	t.Logf("κ = %s (planted %g), %d Gauss–Newton solves", constants.FormatParen(c.Kappa, c.Sigma), kappa, r.Stats.Iter)
	for kl, want := range y {
		p := paramOf(t, r, model.DunhamName(kl[0], kl[1]))
		if z := math.Abs(p.Value-want) / p.Sigma; !(z < 4) {
			t.Errorf("%s = %s, truth %g: %.1fσ", p.ID(), constants.FormatParen(p.Value, p.Sigma), want, z)
		}
	}
	if r.Status != Converged {
		t.Errorf("status %v", r.Status)
	}
	if names := r.CovNames(); names[len(names)-1] != "kappa[cal.csv]" {
		t.Errorf("covariance names %v end without kappa[cal.csv]", names)
	}
	kd := derivedOf(t, r.Derived, "kappa", "")
	if !scalar.EqualWithinRel(kd.Value, c.Kappa, 1e-15) {
		t.Errorf("derived kappa %g, calibration %g", kd.Value, c.Kappa)
	}
	// Without calibration the scaled file biases the fit: s grows well above 1.
	u := mustFit(t, lines, spec, Settings{})
	if u.Stats.Sigma < 1.5 {
		t.Errorf("uncalibrated s = %.2f; a 5e-7 scale error (≈1e-3 cm⁻¹ = 10 unc) should show", u.Stats.Sigma)
	}
}

// TestCalibrationUnlinked: a file whose lines are the only ones of an
// isotopologue in a term-values model has nothing tying it to the reference
// file — scaling all its term values by (1+κ) reproduces it — so κ is
// undetermined and named.
func TestCalibrationUnlinked(t *testing.T) {
	y := coTermValuesY()
	a := makeLines("12C16O", "ref.csv", y, irBranches([][2]int{{1, 0}}, 20), 1e-4, newRNG(1))
	y13 := massScaled(y, reducedMass(t, "12C16O"), reducedMass(t, "13C16O"))
	b := makeLines("13C16O", "other.csv", y13, irBranches([][2]int{{1, 0}}, 20), 1e-4, newRNG(2))
	lines := append(a, b...)
	m, err := BuildModel(lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}})
	if err != nil {
		t.Fatal(err)
	}
	_, err = Fit(Problem{Lines: lines, Model: m}, Settings{Reject: DefaultReject, Calibrate: true})
	var ue *UndeterminedError
	if !errors.As(err, &ue) || failure.KindOf(err) != failure.CannotCompute {
		t.Fatalf("err = %v, want *UndeterminedError", err)
	}
	if !strings.Contains(err.Error(), "kappa[other.csv]") {
		t.Errorf("message does not name kappa[other.csv]: %v", err)
	}
	if !strings.Contains(err.Error(), "calibration factor") {
		t.Errorf("message gives no hint about calibration: %v", err)
	}
	// One file only: calibration is refused.
	if _, err := Fit(Problem{Lines: a, Model: m}, Settings{Reject: DefaultReject, Calibrate: true}); err == nil {
		t.Error("Calibrate accepted a single file")
	}
}
