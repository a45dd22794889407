package fit

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/units"
)

// TestJointIsotopologues fits two isotopologues jointly. The second one's
// lines are generated from the reference Y_kl of Huber & Herzberg (1979, from
// memory) by the first-order Dunham isotope relation Y_kl ∝ μ^−(k/2+l)
// (docs/references.md); the fit must return the reference Y_kl and derive the
// second isotopologue's Y_kl equal to the mass-scaled values.
func TestJointIsotopologues(t *testing.T) {
	cases := []struct {
		c     hhConst
		other string
	}{
		{hhCO, "13C16O"},
		{hhHCl, "2H35Cl"},
	}
	for _, tc := range cases {
		t.Run(tc.c.label+"+"+tc.other, func(t *testing.T) {
			y := tc.c.dunham()
			y2 := massScaled(y, reducedMass(t, tc.c.label), reducedMass(t, tc.other))
			lines := makeLines(tc.c.label, "a.csv", y, tc.c.transitions(), 1e-4, nil)
			lines = append(lines, makeLines(tc.other, "a.csv", y2, tc.c.transitions(), 1e-4, nil)...)
			renumber(lines)
			r := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()}, Settings{Reject: DefaultReject})
			if sp := r.Model.Species(); len(sp) != 2 || sp[0] != tc.c.label {
				t.Fatalf("species %v, want the reference %s first", sp, tc.c.label)
			}
			for kl, want := range y {
				name := model.DunhamName(kl[0], kl[1])
				if got := paramOf(t, r, name).Value; !scalar.EqualWithinRel(got, want, 1e-8) {
					t.Errorf("%s = %.12g, want %.12g", name, got, want)
				}
				d := derivedOf(t, r.Derived, name, tc.other)
				if !scalar.EqualWithinRel(d.Value, y2[kl], 1e-8) {
					t.Errorf("%s[%s] = %.12g, mass-scaled %.12g", name, tc.other, d.Value, y2[kl])
				}
			}
		})
	}
}

// TestBornOppenheimerBreakdown generates HCl and DCl lines whose Y01 carries
// a known breakdown constant Δ01^H in the form of docs/references.md,
//
//	Y01(s) = U01 μ_s^−1 [1 + (m_e/M_H(s)) Δ01^H],
//
// (all other Y_kl mass-scaled exactly), and fits them with BOBTerms Y01: the
// derived Delta01_H and U01 must return the generating values. Δ01^H = 0.5 is a
// test value, not a literature one; hydrogen is where breakdown is largest
// (m_e/M_H ≈ 5.4e-4).
func TestBornOppenheimerBreakdown(t *testing.T) {
	const delta = 0.5
	yBO := hhHCl.dunham() // Born–Oppenheimer Y_kl of 1H35Cl
	muR := reducedMass(t, "1H35Cl")
	gen := func(label string) yset {
		iso, err := species.Parse(label)
		if err != nil {
			t.Fatal(err)
		}
		y := massScaled(yBO, muR, iso.ReducedMass())
		mH := iso.A.Mass // H is the first atom in both labels
		y[[2]int{0, 1}] *= 1 + units.ElectronMass/mH*delta
		return y
	}
	yH, yD := gen("1H35Cl"), gen("2H35Cl")
	ts := hhHCl.transitions()
	lines := append(makeLines("1H35Cl", "hcl.csv", yH, ts, 1e-4, nil), makeLines("2H35Cl", "hcl.csv", yD, ts, 1e-4, nil)...)
	renumber(lines)
	spec := ModelSpec{Kind: model.KindDunham, Terms: yBO.terms(), BOBTerms: []string{"Y01"}}
	r := mustFit(t, lines, spec, Settings{Reject: DefaultReject})

	// Only the substituted element (H) gets a breakdown parameter.
	var bob []string
	for _, p := range r.Params {
		if p.Element != "" {
			bob = append(bob, p.ID())
		}
	}
	if len(bob) != 1 || bob[0] != "BOB01_H" {
		t.Errorf("breakdown parameters %v, want [BOB01_H] (Cl is not substituted)", bob)
	}
	d := derivedOf(t, r.Derived, "Delta01_H", "")
	if !scalar.EqualWithinRel(d.Value, delta, 1e-6) {
		t.Errorf("Delta01_H = %.10g, generated with %g", d.Value, delta)
	}
	t.Logf("Delta01_H = %.10g (generated %g), s = %.3g", d.Value, delta, r.Stats.Sigma)
	u := derivedOf(t, r.Derived, "U01", "")
	if want := yBO[[2]int{0, 1}] * muR; !scalar.EqualWithinRel(u.Value, want, 1e-9) {
		t.Errorf("U01 = %.12g, want %.12g", u.Value, want)
	}
	if got := paramOf(t, r, "Y01").Value; !scalar.EqualWithinRel(got, yH[[2]int{0, 1}], 1e-10) {
		t.Errorf("Y01 = %.12g, want %.12g", got, yH[[2]int{0, 1}])
	}
	if got := derivedOf(t, r.Derived, "Y01", "2H35Cl").Value; !scalar.EqualWithinRel(got, yD[[2]int{0, 1}], 1e-10) {
		t.Errorf("Y01[2H35Cl] = %.12g, want %.12g", got, yD[[2]int{0, 1}])
	}

	// Without the breakdown term the same data cannot be fitted exactly:
	// the mass scaling alone leaves residuals far above unc.
	r0 := mustFit(t, lines, ModelSpec{Kind: model.KindDunham, Terms: yBO.terms()}, Settings{})
	if r0.Stats.Sigma < 10 {
		t.Errorf("without BOB01_H s = %.3g; the breakdown in the data should show", r0.Stats.Sigma)
	}
}

// TestBOBNeedsSubstitution: breakdown terms with a single isotopologue are a
// usage error from BuildModel; with three isotopologues substituting H and Cl
// both elements get a parameter.
func TestBOBNeedsSubstitution(t *testing.T) {
	y := hhHCl.dunham()
	lines := makeLines("1H35Cl", "x.csv", y, hhHCl.transitions(), 1e-4, nil)
	_, err := BuildModel(lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms(), BOBTerms: []string{"Y01"}})
	if err == nil {
		t.Fatal("BuildModel accepted breakdown terms for a single isotopologue")
	}
	if !strings.HasPrefix(err.Error(), "fit: ") {
		t.Errorf("error %q does not start with the package name", err)
	}
	more := append([]linelist.Line(nil), lines...)
	more = append(more, makeLines("2H35Cl", "x.csv", y, hhHCl.transitions(), 1e-4, nil)...)
	more = append(more, makeLines("1H37Cl", "x.csv", y, hhHCl.transitions(), 1e-4, nil)...)
	m, err := BuildModel(more, ModelSpec{Kind: model.KindDunham, Terms: y.terms(), BOBTerms: []string{"Y01", "Y10"}})
	if err != nil {
		t.Fatal(err)
	}
	var bob []string
	for _, p := range m.Params() {
		if p.Element != "" {
			bob = append(bob, p.ID())
		}
	}
	if strings.Join(bob, ",") != "BOB01_H,BOB01_Cl,BOB10_H,BOB10_Cl" {
		t.Errorf("breakdown parameters %v", bob)
	}
	// A BOB term whose Y is not fitted is refused.
	if _, err := BuildModel(more, ModelSpec{Kind: model.KindDunham, Terms: []string{"Y10", "Y01"}, BOBTerms: []string{"Y02"}}); err == nil {
		t.Error("BOB term Y02 accepted without Y02 among the terms")
	}
}
