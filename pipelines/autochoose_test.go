package pipelines

import (
	"math/rand/v2"
	"slices"
	"testing"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/units"
)

// coLines simulates P and R lines of 12C16O from the Huber & Herzberg (1979)
// constants (from memory): ωe 2169.81358, ωexe 13.28831, ωeye 0.010511,
// Be 1.93128087, αe 0.01750441, De 6.12147e-6 cm⁻¹, with Gaussian noise of
// the stated uncertainty.
func coLines(t testing.TB, bands [][2]int, jmax int, unc float64, seed uint64) []linelist.Line {
	t.Helper()
	iso, err := species.Parse("12C16O")
	if err != nil {
		t.Fatal(err)
	}
	fixes := []model.Fix{
		{Name: "Y10", V: -1, Value: 2169.81358}, {Name: "Y20", V: -1, Value: -13.28831}, {Name: "Y30", V: -1, Value: 0.010511},
		{Name: "Y01", V: -1, Value: 1.93128087}, {Name: "Y11", V: -1, Value: -0.01750441}, {Name: "Y02", V: -1, Value: -6.12147e-6},
	}
	m, err := model.NewDunham([]species.Isotopologue{iso}, model.DunhamOptions{Fixes: fixes})
	if err != nil {
		t.Fatal(err)
	}
	p := model.Values(m.Params())
	r := rand.New(rand.NewPCG(seed, 1))
	var out []linelist.Line
	for _, b := range bands {
		for jl := 0; jl <= jmax; jl++ {
			for _, dj := range []int{-1, 1} {
				ju := jl + dj
				if ju < 0 {
					continue
				}
				nu := m.Energy(0, b[0], ju, p, nil) - m.Energy(0, b[1], jl, p, nil)
				out = append(out, linelist.Line{File: "sim.csv", Row: len(out) + 2, Species: "12C16O", VUp: b[0], JUp: ju, VLo: b[1], JLo: jl,
					Position: nu + unc*r.NormFloat64(), Unc: unc})
			}
		}
	}
	return out
}

func TestChooseModel(t *testing.T) {
	// One band: the term-values model, and D is needed at J up to 40 with 1e-4 cm⁻¹
	// noise (D x² reaches 6e-6·1640² ≈ 16 cm⁻¹), H is not (H_v ~ 1e-11 from
	// the Dunham constants above: not in the simulated data at all).
	c, err := ChooseModel(coLines(t, [][2]int{{1, 0}}, 40, 1e-4, 1), fit.Settings{Reject: fit.DefaultReject})
	if err != nil {
		t.Fatal(err)
	}
	if c.Model != model.KindTermValues || !slices.Equal(c.Terms, []string{"B", "D"}) {
		t.Errorf("one band: chose %s %v, want term-values [B D]\n%v", c.Model, c.Terms, c.Log)
	}
	// Three bands reaching v = 0…3: Dunham with the five leading terms and
	// Y30, which the simulated data contain (ωeye = 0.010511 cm⁻¹ against
	// 1e-4 cm⁻¹ noise).
	c, err = ChooseModel(coLines(t, [][2]int{{1, 0}, {2, 1}, {3, 2}}, 35, 1e-4, 2), fit.Settings{Reject: fit.DefaultReject})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Y10", "Y20", "Y01", "Y11", "Y02", "Y30"} {
		if !slices.Contains(c.Terms, want) {
			t.Errorf("several bands: %s missing from %v\n%v", want, c.Terms, c.Log)
		}
	}
	if c.Model != model.KindDunham {
		t.Errorf("several bands: chose %s", c.Model)
	}
	// Terms the simulated data do not contain must mostly stay out: at 1 %
	// significance at most one of the seven zero-valued candidates may slip in.
	extra := 0
	for _, x := range c.Terms {
		if !slices.Contains([]string{"Y10", "Y20", "Y01", "Y11", "Y02", "Y30"}, x) {
			extra++
		}
	}
	if extra > 1 {
		t.Errorf("several bands: %d spurious terms in %v\n%v", extra, c.Terms, c.Log)
	}
}

// simLines returns lines of label computed from the Dunham constants y
// (exact positions) for the transitions (v′, J′, v″, J″), in cm⁻¹ or, with
// mhz, in MHz, with the stated uncertainty unc (in the lines' unit).
func simLines(t testing.TB, label, file string, y map[string]float64, trans [][4]int, unc float64, mhz bool) []linelist.Line {
	t.Helper()
	iso, err := species.Parse(label)
	if err != nil {
		t.Fatal(err)
	}
	var fixes []model.Fix
	for name, v := range y {
		fixes = append(fixes, model.Fix{Name: name, V: -1, Value: v})
	}
	m, err := model.NewDunham([]species.Isotopologue{iso}, model.DunhamOptions{Fixes: fixes})
	if err != nil {
		t.Fatal(err)
	}
	p := model.Values(m.Params())
	var out []linelist.Line
	for _, tr := range trans {
		nu := m.Energy(0, tr[0], tr[1], p, nil) - m.Energy(0, tr[2], tr[3], p, nil)
		l := linelist.Line{File: file, Row: len(out) + 2, Species: label, VUp: tr[0], JUp: tr[1], VLo: tr[2], JLo: tr[3], Position: nu, Unc: unc, Unit: linelist.Wavenumber}
		if mhz {
			l.Position, l.Unit = nu*units.MHzPerWavenumber, linelist.MHz
		}
		out = append(out, l)
	}
	return out
}

// TestChooseModelNamesWhatWasMeasured: the 12C16O fundamental with
// pure-rotation lines in MHz, and the 14N2 Raman fundamental (O, Q, S), reach
// two vibrational levels. A Dunham model would call the band origin ω_e (the
// issue that made this rule: 2143.27 against the molecule's 2169.81); the
// automatic choice takes the term-values model, whose derived constants are
// the band origin ν₀ and B_v. Constants: Huber & Herzberg (1979), from memory.
func TestChooseModelNamesWhatWasMeasured(t *testing.T) {
	co := map[string]float64{"Y10": 2169.81358, "Y20": -13.28831, "Y30": 0.010511, "Y01": 1.93128087, "Y11": -0.01750441, "Y02": -6.12147e-6}
	n2 := map[string]float64{"Y10": 2358.57, "Y20": -14.324, "Y30": -0.00226, "Y01": 1.99824, "Y11": -0.017318, "Y02": -5.76e-6}
	var coT, n2T [][4]int
	for j := 0; j <= 30; j++ {
		coT = append(coT, [4]int{1, j + 1, 0, j})
		if j > 0 {
			coT = append(coT, [4]int{1, j - 1, 0, j})
		}
		for _, d := range []int{-2, 0, 2} {
			if j+d >= 0 {
				n2T = append(n2T, [4]int{1, j + d, 0, j})
			}
		}
	}
	var mw [][4]int
	for j := 0; j <= 5; j++ {
		mw = append(mw, [4]int{0, j + 1, 0, j})
	}
	cases := map[string][]linelist.Line{
		"12C16O fundamental + microwave": append(simLines(t, "12C16O", "ir.csv", co, coT, 1e-3, false), simLines(t, "12C16O", "mw.csv", co, mw, 0.05, true)...),
		"14N2 Raman fundamental":         simLines(t, "14N14N", "raman.csv", n2, n2T, 1e-3, false),
	}
	for name, lines := range cases {
		c, err := ChooseModel(lines, fit.Settings{Reject: fit.DefaultReject})
		if err != nil {
			t.Fatal(err)
		}
		if c.Model != model.KindTermValues {
			t.Errorf("%s: chose %s %v\n%v", name, c.Model, c.Terms, c.Log)
			continue
		}
		m, err := fit.BuildModel(lines, fit.ModelSpec{Kind: c.Model, Terms: c.Terms})
		if err != nil {
			t.Fatal(err)
		}
		r, err := fit.Fit(fit.Problem{Lines: lines, Model: m}, fit.Settings{})
		if err != nil {
			t.Fatal(err)
		}
		origin := false
		for _, d := range r.Derived {
			if d.Name == "omega_e" || d.Name == "omega_e_x_e" {
				t.Errorf("%s: reports %s = %g", name, d.Name, d.Value)
			}
			origin = origin || d.Name == "nu0_1-0"
		}
		if !origin {
			t.Errorf("%s: no band origin among %v", name, r.Derived)
		}
	}
}
