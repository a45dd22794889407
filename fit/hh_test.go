package fit

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/model"
)

var hhAll = []hhConst{hhCO, hhHCl, hhN2, hhHF}

// TestHuberHerzbergExact generates lines from the Huber & Herzberg (1979)
// constants (from memory, docs/references.md) with no noise and fits them back
// with the same Dunham terms: every constant must come back to a relative
// 1e-8.
func TestHuberHerzbergExact(t *testing.T) {
	for _, c := range hhAll {
		t.Run(c.label, func(t *testing.T) {
			y := c.dunham()
			lines := makeLines(c.label, "exact.csv", y, c.transitions(), 1e-4, nil)
			r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject})
			if r.Stats.Rejected != 0 {
				t.Errorf("%d lines rejected from exact data", r.Stats.Rejected)
			}
			var msg []string
			for _, name := range y.terms() {
				k, l, _ := model.ParseDunhamTerm(name)
				want := y[[2]int{k, l}]
				got := paramOf(t, r, name).Value
				if !scalar.EqualWithinRel(got, want, 1e-8) {
					t.Errorf("%s = %.12g, want %.12g (Huber & Herzberg 1979, from memory); LRE %.1f", name, got, want, lre(got, want))
				}
				msg = append(msg, fmt.Sprintf("%s %.1f", name, lre(got, want)))
			}
			t.Logf("%s LRE: %s", c.label, strings.Join(msg, ", "))
			// Exact data: the residuals are rounding noise, far below unc.
			if r.Stats.Sigma > 1e-3 {
				t.Errorf("s = %g on exact data, want ≈ 0", r.Stats.Sigma)
			}
		})
	}
}

// TestHuberHerzbergNoisy adds Gaussian noise of 1σ = unc (fixed seed): every
// fitted constant must lie within 4σ of the Huber & Herzberg value, s must be
// near 1, and r_e from the fitted B_e (CODATA 2018 constants, AME2020 masses)
// must match the table's r_e to 1e-5 Å (the table gives r_e to 1e-5 or 1e-6 Å;
// HF's 0.91680 is the coarsest).
func TestHuberHerzbergNoisy(t *testing.T) {
	for i, c := range hhAll {
		t.Run(c.label, func(t *testing.T) {
			y := c.dunham()
			const unc = 1e-3
			lines := makeLines(c.label, "noisy.csv", y, c.transitions(), unc, newRNG(uint64(100+i)))
			r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{})
			zmax := 0.0
			for kl, want := range y {
				p := paramOf(t, r, model.DunhamName(kl[0], kl[1]))
				z := math.Abs(p.Value-want) / p.Sigma
				if !(z < 4) {
					t.Errorf("%s = %s, Huber & Herzberg %g: %.1fσ away", p.ID(), constants.FormatParen(p.Value, p.Sigma), want, z)
				}
				zmax = math.Max(zmax, z)
			}
			t.Logf("%s: largest |fitted − table|/σ = %.2f", c.label, zmax)
			if s := r.Stats.Sigma; !(s > 0.8 && s < 1.2) {
				t.Errorf("s = %.3f with noise equal to unc, want 0.8…1.2 (%d dof)", s, r.Stats.DOF)
			}
			re := derivedOf(t, r.Derived, "r_e", c.label)
			// r_e of Huber & Herzberg (1979), from memory.
			if !scalar.EqualWithinAbs(re.Value, c.re, 1e-5) {
				t.Errorf("r_e = %s Å, Huber & Herzberg %g Å: differs by %.2g Å", constants.FormatParen(re.Value, re.Sigma), c.re, re.Value-c.re)
			}
			t.Logf("%s: s = %.3f, r_e = %.7f Å (table %.6f, diff %.1e), B_e = %s", c.label, r.Stats.Sigma, re.Value, c.re, re.Value-c.re,
				constants.FormatParen(paramOf(t, r, "Y01").Value, paramOf(t, r, "Y01").Sigma))
		})
	}
}
