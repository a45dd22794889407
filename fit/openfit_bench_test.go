package fit

import (
	"math/rand/v2"
	"testing"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// benchDoubletPiLines returns at least n synthetic NO X²Π lines of v = 0
// and 1 (nitricOxideTruth): the fundamental band with both subbands and the
// satellites, the pure-rotation lines of each level with their satellites,
// and the Λ-doubling lines, all up to J = 60.5, e and f levels, measured
// repeatedly (independent noise) until n lines are reached.
func benchDoubletPiLines(n int) (*openTruth, []linelist.Line) {
	o := nitricOxideTruth()
	rng := rand.New(rand.NewPCG(21, 2))
	var lines []linelist.Line
	for len(lines) < n {
		lines = append(lines, o.lines("14N16O", bandSpec{vU: 1, vL: 0, j2max: 121, satellites: true, unc: 2e-4}, rng)...)
		for v := 0; v <= 1; v++ {
			lines = append(lines, o.lines("14N16O", bandSpec{vU: v, vL: v, j2max: 121, satellites: true, unc: 1e-5}, rng)...)
		}
	}
	return o, lines[:n]
}

// BenchmarkFitDoubletPi10k: a ²Π fit of 10 000 lines (two vibrational
// levels, both subbands, e and f levels) without starting values — the
// case-(b) start, two starts for the sign of A, Levenberg–Marquardt — from
// the checked line list to the result with derived constants. Target (the
// README's table): under 2 s.
func BenchmarkFitDoubletPi10k(b *testing.B) {
	o, lines := benchDoubletPiLines(10000)
	list := &linelist.List{Lines: lines}
	if err := linelist.CheckStates(list, o.sts); err != nil {
		b.Fatal(err)
	}
	terms := []string{"B", "D", "H", "A", "gamma", "p", "q", "p_D", "q_D"}
	b.ReportAllocs()
	b.ResetTimer()
	var r *Result
	for i := 0; i < b.N; i++ {
		m, err := BuildModel(list.Lines, ModelSpec{Kind: model.KindTermValues, Terms: terms, States: []states.State{o.sts[0]}})
		if err != nil {
			b.Fatal(err)
		}
		if r, err = Fit(Problem{Lines: list.Lines, Model: m}, Settings{Reject: DefaultReject}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(lines)), "lines/op")
	b.ReportMetric(float64(r.Stats.Iter), "QR-solves/op")
}

// BenchmarkSublevelsNitricOxide: the enumeration the thermo stage sums over
// (constants.Set.Sublevels) for NO X²Π from a Dunham record: v = 0 … 40,
// J ≤ 250.5, every spin and Λ-doubling component with its gradient over the
// fitted parameters.
func BenchmarkSublevelsNitricOxide(b *testing.B) {
	o, lines := benchDoubletPiLines(3000)
	list := &linelist.List{Lines: lines}
	if err := linelist.CheckStates(list, o.sts); err != nil {
		b.Fatal(err)
	}
	m, err := BuildModel(list.Lines, ModelSpec{Kind: model.KindDunham, Terms: []string{"Y10", "Y01", "Y11", "Y02", "A_e", "alpha_A", "gamma_e", "p_e", "q_e"}, States: o.sts})
	if err != nil {
		b.Fatal(err)
	}
	r, err := Fit(Problem{Lines: list.Lines, Model: m}, Settings{})
	if err != nil {
		b.Fatal(err)
	}
	set, err := NewRecord(r).Constants()
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	n := 0
	for i := 0; i < b.N; i++ {
		n = 0
		sum := 0.0
		for v := 0; v <= 40; v++ {
			set.Sublevels(0, 0, v, 501, true, func(l model.Sublevel) {
				n++
				sum += l.E + l.Grad[0]
			})
		}
		if sum != sum {
			b.Fatal("NaN")
		}
	}
	b.ReportMetric(float64(n), "levels/op")
}
