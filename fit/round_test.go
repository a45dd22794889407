package fit

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/model"
)

// decimals returns the number of digits after the decimal point in the
// shortest decimal that reads back as x.
func decimals(x float64) int {
	s := strconv.FormatFloat(x, 'f', -1, 64)
	if i := strings.IndexByte(s, '.'); i >= 0 {
		return len(s) - i - 1
	}
	return 0
}

// TestSequentialRounding applies sequential rounding and refitting (Le Roy,
// J. Mol. Spectrosc. 191 (1998) 223; rounding units from Watson's parameter
// sensitivity, J. Mol. Spectrosc. 66 (1977) 500) to a noisy CO fit: each parameter is rounded to a
// power of ten between σ_c/100 and σ_c/10 of its conditional σ, the rounded
// value has no more digits than that unit, χ² grows by less than 1 %, and the
// σ stay those of the unrounded fit.
func TestSequentialRounding(t *testing.T) {
	for _, tc := range []struct {
		name  string
		kind  string
		terms []string
	}{
		{"dunham", model.KindDunham, hhCO.dunham().terms()},
		{"term-values", model.KindTermValues, []string{"B", "D"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			lines, _ := noisyCO(41, 1e-3)
			spec := ModelSpec{Kind: tc.kind, Terms: tc.terms}
			plain := mustFit(t, lines, spec, Settings{Reject: DefaultReject})
			r := mustFit(t, lines, spec, Settings{Reject: DefaultReject, Round: true})
			rd := r.Rounding
			if rd == nil {
				t.Fatal("no rounding record")
			}
			if len(rd.Steps) != len(r.Free) {
				t.Errorf("%d rounding steps for %d fitted parameters", len(rd.Steps), len(r.Free))
			}
			growth := rd.Chi2After/rd.Chi2Before - 1
			if !(growth >= -1e-12 && growth < 0.01) {
				t.Errorf("χ² %g → %g: grew by %.3g %%, want < 1 %%", rd.Chi2Before, rd.Chi2After, 100*growth)
			}
			t.Logf("χ² %.6g → %.6g (+%.4f %%) over %d steps", rd.Chi2Before, rd.Chi2After, 100*growth, len(rd.Steps))
			if !scalar.EqualWithinRel(rd.Chi2Before, plain.Stats.Chi2, 1e-9) {
				t.Errorf("χ² before rounding %g, unrounded fit %g", rd.Chi2Before, plain.Stats.Chi2)
			}
			// The residuals are those of the rounded constants reported.
			pv := model.Values(r.Params)
			for i, l := range lines {
				c := r.Model.Energy(0, l.VUp, l.JUp, pv, nil) - r.Model.Energy(0, l.VLo, l.JLo, pv, nil)
				if !scalar.EqualWithinAbsOrRel(r.Lines[i].Calc, c, 1e-9, 1e-13) || !scalar.EqualWithinAbsOrRel(r.Lines[i].OmC, l.Position-c, 1e-9, 1e-13) {
					t.Fatalf("line %d: calc %.10f, o−c %g; the rounded constants give %.10f", i, r.Lines[i].Calc, r.Lines[i].OmC, c)
				}
			}
			seen := map[string]bool{}
			for _, st := range rd.Steps {
				if seen[st.Param] {
					t.Errorf("%s rounded twice", st.Param)
				}
				seen[st.Param] = true
				if !(st.Unit <= st.CondSigma/10*(1+1e-12) && st.Unit > st.CondSigma/100) {
					t.Errorf("%s: unit %g for σ_c %g, want the power of ten in (σ_c/100, σ_c/10]", st.Param, st.Unit, st.CondSigma)
				}
				if q := st.Rounded / st.Unit; math.Abs(q-math.Round(q)) > 1e-6 {
					t.Errorf("%s = %g is not a multiple of %g", st.Param, st.Rounded, st.Unit)
				}
				if math.Abs(st.Rounded-st.Unrounded) > st.Unit/2*(1+1e-9)+math.Abs(st.Unrounded)*1e-15 && st.Param != rd.Steps[0].Param {
					// Later parameters were refitted before rounding, so compare
					// with the value they had when rounded: |change| ≤ unit/2.
					t.Errorf("%s: %g → %g moves more than half a unit %g", st.Param, st.Unrounded, st.Rounded, st.Unit)
				}
				maxDec := max(0, int(-math.Round(math.Log10(st.Unit))))
				if d := decimals(st.Rounded); d > maxDec {
					t.Errorf("%s = %s has %d decimals, its unit %g allows %d", st.Param, strconv.FormatFloat(st.Rounded, 'f', -1, 64), d, st.Unit, maxDec)
				}
				p := paramOf(t, r, st.Param)
				if p.Value != st.Rounded {
					t.Errorf("%s: result value %g, rounded %g", st.Param, p.Value, st.Rounded)
				}
				q := paramOf(t, plain, st.Param)
				if !scalar.EqualWithinRel(p.Sigma, q.Sigma, 1e-12) {
					t.Errorf("%s: σ %g after rounding, %g before", st.Param, p.Sigma, q.Sigma)
				}
				// The rounded value stays well inside the σ of the fit.
				if math.Abs(p.Value-q.Value) > q.Sigma {
					t.Errorf("%s: rounding moved it by %g, more than σ = %g", st.Param, p.Value-q.Value, q.Sigma)
				}
			}
		})
	}
}

// TestSignificanceWarning: a Y03 term that lines up to J = 30 cannot determine
// (the data were generated without it) is flagged |value|/σ < 3.
func TestSignificanceWarning(t *testing.T) {
	lines, y := noisyCO(51, 1e-3)
	r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: append(y.terms(), "Y03")}, Settings{Reject: DefaultReject})
	p := paramOf(t, r, "Y03")
	if math.Abs(p.Value) >= 3*p.Sigma {
		t.Fatalf("Y03 = %s came out significant; choose another seed", constants.FormatParen(p.Value, p.Sigma))
	}
	var hits []string
	for _, w := range r.Warnings {
		if strings.Contains(w, "less than 3σ") {
			hits = append(hits, w)
		}
	}
	if len(hits) != 1 || !strings.HasPrefix(hits[0], "Y03 = ") {
		t.Errorf("significance warnings %q, want one for Y03", hits)
	}
	// The well-determined fit has no such warning.
	r0 := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject})
	for _, w := range r0.Warnings {
		if strings.Contains(w, "less than 3σ") || strings.Contains(w, "correlated") {
			t.Errorf("unexpected warning %q", w)
		}
	}
}

// TestSmallScaleWarning: lines whose stated uncertainty is ten times their
// noise give s ≈ 0.1 and a warning that the σ rest on the scatter (scaled by
// s) rather than on the stated uncertainties; honest uncertainties (s ≈ 1)
// give none.
func TestSmallScaleWarning(t *testing.T) {
	lines, y := noisyCO(51, 1e-3)
	has := func(r *Result) bool {
		for _, w := range r.Warnings {
			if strings.Contains(w, "smaller than the stated uncertainties") {
				return true
			}
		}
		return false
	}
	if r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{}); has(r) {
		t.Errorf("s = %.3g: unexpected small-scale warning", r.Stats.Sigma)
	}
	for i := range lines {
		lines[i].Unc *= 10
	}
	r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{})
	if !(r.Stats.Sigma < 0.2) || !has(r) {
		t.Errorf("s = %.3g: warnings %q", r.Stats.Sigma, r.Warnings)
	}
}

// TestCorrelationWarning: two hot bands high in the vibrational ladder
// (21-20 and 22-21) see Y10 and Y20 only through ΔG = Y10 + 2Y20(v+1), nearly the
// same combination at v = 20 and 21, so the two are correlated beyond 0.999.
func TestCorrelationWarning(t *testing.T) {
	y := hhCO.dunham()
	delete(y, [2]int{3, 0})
	lines := makeLines("12C16O", "hot.csv", y, irBranches([][2]int{{21, 20}, {22, 21}}, 30), 1e-3, newRNG(61))
	r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject})
	names := r.CovNames()
	c := r.Correlation()
	i10, i20 := -1, -1
	for i, n := range names {
		switch n {
		case "Y10":
			i10 = i
		case "Y20":
			i20 = i
		}
	}
	rho := r.Cov.At(i10, i20) / math.Sqrt(r.Cov.At(i10, i10)*r.Cov.At(i20, i20))
	if math.Abs(rho) <= 0.999 || !scalar.EqualWithinAbs(c.At(i10, i20), rho, 1e-12) {
		t.Fatalf("corr(Y10, Y20) = %g (matrix %g); the case needs > 0.999", rho, c.At(i10, i20))
	}
	found := false
	for _, w := range r.Warnings {
		if strings.Contains(w, "Y10 and Y20 are correlated") {
			found = true
		}
	}
	if !found {
		t.Errorf("no correlation warning for Y10, Y20 (ρ = %.6f) in %q", rho, r.Warnings)
	}
}
