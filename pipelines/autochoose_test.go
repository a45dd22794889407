package pipelines

import (
	"math/rand/v2"
	"slices"
	"testing"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
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
