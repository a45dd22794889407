package fit

import (
	"bytes"
	"math"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/mdtext"
)

// The series truncation of derived constants (truncation.go, Derived.Truncation)
// against molecules made of more terms than the fitted model has.

// gammaCO is γ_e = Y21 of 12C16O X¹Σ⁺, 5.49e-7 cm⁻¹ (Huber & Herzberg 1979,
// from memory, uncertain beyond its order of magnitude).
const gammaCO = 5.49e-7

// withHigher returns the table row's Dunham coefficients plus the higher
// terms a real molecule has: Y12 = −β_e and Y03 = H_e from Dunham's
// relations β_e = D_e(8ω_e x_e/ω_e − 5α_e/B_e − α_e²ω_e/(24B_e³)) and
// H_e = 2D_e(12B_e² − α_e ω_e)/(3ω_e²) (Dunham 1932, as restated in
// Herzberg, Spectra of Diatomic Molecules, 1950; from memory), and γ_e = Y21
// when given.
func withHigher(c hhConst, gammaE float64) yset {
	y := c.dunham()
	be := c.de * (8*c.wexe/c.we - 5*c.ae/c.be - c.ae*c.ae*c.we/(24*c.be*c.be*c.be))
	he := 2 * c.de * (12*c.be*c.be - c.ae*c.we) / (3 * c.we * c.we)
	y[[2]int{1, 2}] = -be
	y[[2]int{0, 3}] = he
	if gammaE != 0 {
		y[[2]int{2, 1}] = gammaE
	}
	return y
}

// truthOf returns the equilibrium constants of the table row by derived name.
func truthOf(c hhConst) map[string]float64 {
	return map[string]float64{"omega_e": c.we, "omega_e_x_e": c.wexe, "B_e": c.be, "alpha_e": c.ae, "D_e": c.de}
}

// truncationCase fits lines of the bands of molecule c (made from y, noise
// 0.001 cm⁻¹) with spec, and checks for each named constant that the truth
// lies within 2.5·√(σ² + truncation²), and, for those in absurd, that the
// truncation is at most 10 times the actual deviation where that exceeds 3σ.
// It returns the derived constants.
func truncationCase(t *testing.T, c hhConst, y yset, bands [][2]int, jmax int, spec ModelSpec, names []string, absurd map[string]bool) []constants.Derived {
	t.Helper()
	lines := makeLines(c.label, "lines.csv", y, irBranches(bands, jmax), 1e-3, newRNG(11))
	r := mustFit(t, lines, spec, Settings{Reject: DefaultReject})
	truth := truthOf(c)
	for _, name := range names {
		d := derivedOf(t, r.Derived, name, c.label)
		dev := d.Value - truth[name]
		t.Logf("%s: %.9g, σ %.2g, truncation %.2g, truth %.9g (deviation %.3g = %.1fσ)", name, d.Value, d.Sigma, d.Truncation, truth[name], dev, dev/d.Sigma)
		if lim := 2.5 * math.Hypot(d.Sigma, d.Truncation); math.Abs(dev) > lim {
			t.Errorf("%s = %.9g: %.3g from the truth %.9g, beyond 2.5√(σ² + truncation²) = %.3g", name, d.Value, dev, truth[name], lim)
		}
		if absurd[name] && math.Abs(dev) > 3*d.Sigma && d.Truncation > 10*math.Abs(dev) {
			t.Errorf("%s: truncation %.3g is more than 10 times the actual deviation %.3g", name, d.Truncation, dev)
		}
	}
	return r.Derived
}

// TestTruncationFewLevels: the bands 1-0, 2-0, 2-1 determine Y10 and Y20
// exactly and leave them to absorb ω_e y_e (Y10 = ω_e − 5.75 ω_e y_e,
// Y20 = −ω_e x_e + 4.5 ω_e y_e): ω_e of 12C16O comes out 0.06 cm⁻¹ low, 200σ.
// The truncation must cover it without being absurd. Molecules: 12C16O and
// 1H35Cl of Huber & Herzberg (1979, from memory) with their ω_e y_e, γ_e
// (CO) and Dunham's β_e and H_e.
func TestTruncationFewLevels(t *testing.T) {
	bands := [][2]int{{1, 0}, {2, 0}, {2, 1}}
	dunham := ModelSpec{Kind: model.KindDunham, Terms: DefaultTerms(model.KindDunham)}
	all := []string{"omega_e", "omega_e_x_e", "B_e", "alpha_e", "D_e"}
	t.Run("12C16O", func(t *testing.T) {
		ds := truncationCase(t, hhCO, withHigher(hhCO, gammaCO), bands, 30, dunham, all, map[string]bool{"omega_e": true, "omega_e_x_e": true, "B_e": true, "alpha_e": true})
		// The effect the truncation stands for: ω_e 5.75·ω_e y_e low, to
		// well within the rule's order of magnitude.
		we := derivedOf(t, ds, "omega_e", "12C16O")
		if we.Truncation < 5.75*hhCO.weye {
			t.Errorf("truncation of ω_e %.3g below the effect of the molecule's ω_e y_e, %.3g", we.Truncation, 5.75*hhCO.weye)
		}
		if !containsAll(we.Note, "series truncation", "Y30", "effective constant") {
			t.Errorf("note of ω_e does not state the truncation: %q", we.Note)
		}
		// r_e carries B_e's truncation through its gradient.
		re, be := derivedOf(t, ds, "r_e", "12C16O"), derivedOf(t, ds, "B_e", "12C16O")
		if want := re.Value * be.Truncation / (2 * be.Value); !scalar.EqualWithinRel(re.Truncation, want, 1e-9) {
			t.Errorf("truncation of r_e %.6g, want r_e·tr(B_e)/(2B_e) = %.6g", re.Truncation, want)
		}
	})
	t.Run("1H35Cl", func(t *testing.T) {
		truncationCase(t, hhHCl, withHigher(hhHCl, 0), bands, 15, dunham, all, map[string]bool{"omega_e": true, "omega_e_x_e": true, "B_e": true, "alpha_e": true, "D_e": true})
	})
}

// TestTruncationLastCoefficientAbsorbed: 1H35Cl bands 1-0, 2-0, 3-0 (J″ ≤
// 12), lines made with the molecule's ω_e z_e = −0.0122 (Y40; Huber & Herzberg
// 1979, from memory) and fitted with the terms the automatic choice takes
// (Y10, Y20, Y30, Y01, Y11, Y21, Y02, Y12, Y03): four levels determine Y10,
// Y20, Y30 exactly, Y30 absorbs Y40 (0.127 for 0.2243) and the last pair of
// the series alone puts Y40 at 3·10⁻⁴, 40 times too small — ω_e came out
// 0.27 cm⁻¹ from the truth, 32 times its σ and truncation. The earlier pair
// must carry the truncation: ω_e and ω_e x_e within 2.5·√(σ² + truncation²).
func TestTruncationLastCoefficientAbsorbed(t *testing.T) {
	y := withHigher(hhHCl, 0)
	y[[2]int{4, 0}] = -0.0122
	spec := ModelSpec{Kind: model.KindDunham, Terms: []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y21", "Y02", "Y12", "Y03"}}
	truncationCase(t, hhHCl, y, [][2]int{{1, 0}, {2, 0}, {3, 0}}, 12, spec, []string{"omega_e", "omega_e_x_e", "B_e", "alpha_e", "D_e"}, nil)
}

// TestTruncationManyLevels: a fit that reaches v = 6 with Y30, Y21, Y12 and
// Y03 fitted is not inflated: its lines determine the omitted Y40 and Y31,
// which are capped at what the lines allow, so the truncation of each
// constant is of the size that fitting those terms would give its σ — at most
// 4 times σ of the same constant from a fit with Y40 and Y31 free (measured
// 0.01–2.9) — and the truth stays covered.
func TestTruncationManyLevels(t *testing.T) {
	bands := [][2]int{{1, 0}, {2, 1}, {3, 2}, {4, 3}, {5, 4}, {6, 5}, {2, 0}, {3, 1}}
	terms := []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y21", "Y02", "Y12", "Y03"}
	names := []string{"omega_e", "omega_e_x_e", "B_e", "alpha_e", "D_e"}
	ds := truncationCase(t, hhCO, withHigher(hhCO, gammaCO), bands, 30, ModelSpec{Kind: model.KindDunham, Terms: terms}, names, nil)
	ext := truncationCase(t, hhCO, withHigher(hhCO, gammaCO), bands, 30, ModelSpec{Kind: model.KindDunham, Terms: append(append([]string(nil), terms...), "Y40", "Y31")}, nil, nil)
	for _, name := range names {
		d, e := derivedOf(t, ds, name, "12C16O"), derivedOf(t, ext, name, "12C16O")
		t.Logf("%s: truncation %.3g, σ with Y40 and Y31 fitted %.3g (ratio %.2f)", name, d.Truncation, e.Sigma, d.Truncation/e.Sigma)
		if d.Truncation > 4*e.Sigma {
			t.Errorf("%s: truncation %.3g is more than 4 times σ %.3g of the fit with the next terms free, in a fit that covers v ≤ 6", name, d.Truncation, e.Sigma)
		}
	}
}

// TestTruncationTermValues: ω_e, ω_e x_e from the term values of three levels
// (next term ω_e y_e) and B_e, α_e from the B_v of two (next term γ_e) and of
// three levels, 12C16O as above.
func TestTruncationTermValues(t *testing.T) {
	tv := ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}
	y := withHigher(hhCO, gammaCO)
	t.Run("three levels", func(t *testing.T) {
		truncationCase(t, hhCO, y, [][2]int{{1, 0}, {2, 0}, {2, 1}}, 30, tv, []string{"omega_e", "omega_e_x_e", "B_e", "alpha_e"}, map[string]bool{"omega_e": true, "omega_e_x_e": true, "B_e": true, "alpha_e": true})
	})
	t.Run("two levels", func(t *testing.T) {
		ds := truncationCase(t, hhCO, y, [][2]int{{1, 0}}, 30, tv, []string{"B_e", "alpha_e"}, nil)
		// Two B_v give B_e = B_0 + ½α_e exactly; an omitted γ_e(v+½)² of
		// size c moves α_e by −2c and B_e by −(3/4)c, c = α_e²/B_e by the
		// next-term rule. The omitted H_v of the two levels add a little in
		// quadrature (CO: 5·10⁻⁴ of it).
		be, ae := derivedOf(t, ds, "B_e", "12C16O"), derivedOf(t, ds, "alpha_e", "12C16O")
		c := ae.Value * ae.Value / be.Value
		if ae.Truncation < 2*c || !scalar.EqualWithinRel(ae.Truncation, 2*c, 1e-2) || be.Truncation < 0.75*c || !scalar.EqualWithinRel(be.Truncation, 0.75*c, 1e-2) {
			t.Errorf("two levels: truncation of α_e %.6g, B_e %.6g; want 2c = %.6g and (3/4)c = %.6g, c = α_e²/B_e", ae.Truncation, be.Truncation, 2*c, 0.75*c)
		}
	})
}

// TestTruncationAgainstRefit checks the first-order shift against a direct
// refit: the lines moved by c·b_i, b_i the omitted term's column written out
// here independently (termEnergy of a unit Y_kl, mass-scaled for the second
// isotopologue), fitted again; the parameters must change by Shift.
func TestTruncationAgainstRefit(t *testing.T) {
	y := hhCO.dunham()
	muRef, mu13 := reducedMass(t, "12C16O"), reducedMass(t, "13C16O")
	bands := [][2]int{{1, 0}, {2, 0}, {2, 1}}
	lines := append(makeLines("12C16O", "a.csv", y, irBranches(bands, 25), 1e-3, newRNG(2)),
		makeLines("13C16O", "a.csv", massScaled(y, muRef, mu13), irBranches([][2]int{{1, 0}}, 20), 2e-3, newRNG(3))...)
	renumber(lines)
	spec := ModelSpec{Kind: model.KindDunham, Terms: DefaultTerms(model.KindDunham)}
	r := mustFit(t, lines, spec, Settings{})
	if len(r.Truncation) != 4 {
		t.Fatalf("%d omitted terms, want Y30, Y21, Y12, Y03", len(r.Truncation))
	}
	for _, tt := range r.Truncation {
		unit := yset{{tt.K, tt.L}: 1}
		moved := make([]linelist.Line, len(lines))
		copy(moved, lines)
		for i, l := range moved {
			u := unit
			if l.Species != "12C16O" {
				u = massScaled(unit, muRef, mu13)
			}
			moved[i].Position += tt.Size * (termEnergy(u, l.VUp, l.JUp) - termEnergy(u, l.VLo, l.JLo))
		}
		r2 := mustFit(t, moved, spec, Settings{})
		for _, j := range r.Free {
			got, want := tt.Shift[j], r2.Params[j].Value-r.Params[j].Value
			if !scalar.EqualWithinAbsOrRel(got, want, 1e-9*math.Abs(r.Params[j].Value)+1e-3*r.Params[j].Sigma, 1e-6) {
				t.Errorf("%s of size %.3g: shift of %s %.9g, refit %.9g", tt.Name, tt.Size, r.Params[j].ID(), got, want)
			}
		}
	}
}

func containsAll(s string, parts ...string) bool {
	for _, p := range parts {
		if !strings.Contains(s, p) {
			return false
		}
	}
	return true
}

// TestTruncationOutputs: the truncation reaches constants.json (read back)
// and fit.md's derived-constants table (column "series truncation", in the
// unit of the value: cm⁻¹ here, kHz for D_e with --unit MHz).
func TestTruncationOutputs(t *testing.T) {
	lines := makeLines("12C16O", "lines.csv", withHigher(hhCO, gammaCO), irBranches([][2]int{{1, 0}, {2, 0}, {2, 1}}, 30), 1e-3, newRNG(11))
	for _, unit := range []linelist.Unit{linelist.Wavenumber, linelist.MHz} {
		m, err := BuildModel(lines, ModelSpec{Kind: model.KindDunham, Terms: DefaultTerms(model.KindDunham)})
		if err != nil {
			t.Fatal(err)
		}
		p := Problem{Lines: lines, Model: m}
		r, err := Fit(p, Settings{Unit: unit})
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecord(r)
		var js bytes.Buffer
		if err := rec.Write(&js); err != nil {
			t.Fatal(err)
		}
		back, err := constants.Read(&js, "constants.json")
		if err != nil {
			t.Fatal(err)
		}
		want := map[string]float64{}
		for _, d := range back.Derived {
			if d.Species == "12C16O" {
				want[d.Name] = d.Truncation
			}
		}
		if we := derivedOf(t, r.Derived, "omega_e", "12C16O"); want["omega_e"] != we.Truncation || we.Truncation == 0 {
			t.Errorf("constants.json: truncation of omega_e %g, fit %g", want["omega_e"], we.Truncation)
		}
		var md bytes.Buffer
		if err := WriteSummary(&md, p, r, rec); err != nil {
			t.Fatal(err)
		}
		col := -1
		seen := 0
		for _, line := range strings.Split(md.String(), "\n") {
			cells := mdtext.SplitRow(line)
			if !strings.HasPrefix(line, "|") || len(cells) < 6 {
				continue
			}
			if cells[3] == "series truncation" {
				col = 3
				continue
			}
			name := mdtext.Unescape(cells[0])
			if col < 0 || len(name) == 0 || cells[1] != "12C16O" {
				continue
			}
			tr, ok := want[name[0].Text]
			if !ok || (name[0].Text != "omega_e" && name[0].Text != "D_e") {
				continue
			}
			got, err := strconv.ParseFloat(cells[col], 64)
			if err != nil {
				t.Fatalf("fit.md (%s): %s: series truncation %q: %v", unit, name[0].Text, cells[col], err)
			}
			f := 1.0
			if unit == linelist.MHz && name[0].Text == "D_e" {
				f = linelist.MHz.FromWavenumber(1) * 1e3 // kHz
				if cells[4] != "kHz" {
					t.Errorf("fit.md (MHz): D_e in %q, want kHz", cells[4])
				}
			} else if unit == linelist.MHz {
				f = linelist.MHz.FromWavenumber(1) // ω_e in MHz
			}
			if !scalar.EqualWithinRel(got, tr*f, 0.05) {
				t.Errorf("fit.md (%s): %s: series truncation %g, want %.2g", unit, name[0].Text, got, tr*f)
			}
			seen++
		}
		if seen != 2 {
			t.Errorf("fit.md (%s): %d rows of omega_e and D_e with a series truncation, want 2", unit, seen)
		}
	}
}

// TestTruncationLevelSeries: a term-values fit of 1H35Cl 1-0 and 2-0
// (J ≤ 20) with B_v and D_v only, of lines made with the molecule's H (Huber &
// Herzberg 1979 and Dunham's relations, from memory; H x³ reaches about
// 1 cm⁻¹ at J = 20): each level's omitted H_v gets a truncation of its own, and
// B_e, α_e from the B_v must cover the truth within 2.5·√(σ² + truncation²).
func TestTruncationLevelSeries(t *testing.T) {
	tv := ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}
	lines := makeLines(hhHCl.label, "lines.csv", withHigher(hhHCl, 0), irBranches([][2]int{{1, 0}, {2, 0}}, 20), 1e-3, newRNG(13))
	r := mustFit(t, lines, tv, Settings{})
	named := 0
	for _, tm := range r.Truncation {
		if strings.HasPrefix(tm.Name, "H_v") {
			named++
			t.Logf("%s: size %.3g (%s)", tm.Name, tm.Size, tm.Rule)
		}
	}
	if named != 3 {
		t.Errorf("%d omitted H_v terms, want one per level (3)", named)
	}
	truth := truthOf(hhHCl)
	for _, name := range []string{"B_e", "alpha_e"} {
		d := derivedOf(t, r.Derived, name, hhHCl.label)
		dev := d.Value - truth[name]
		t.Logf("%s: %.9g, σ %.2g, truncation %.2g, truth %.9g (deviation %.3g), s = %.3g", name, d.Value, d.Sigma, d.Truncation, truth[name], dev, r.Stats.Sigma)
		if lim := 2.5 * math.Hypot(d.Sigma, d.Truncation); math.Abs(dev) > lim {
			t.Errorf("%s = %.9g: %.3g from the truth, beyond 2.5√(σ² + truncation²) = %.3g", name, d.Value, dev, lim)
		}
	}
}
