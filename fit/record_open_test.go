package fit

import (
	"bytes"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// TestRecordOpenShellRoundTrip: a record of a fit with electronic states
// (NO X²Π and A²Σ⁺, term values and Dunham) is written, read back and
// rebuilt; the rebuilt model gives the same levels, and Set.Sublevels — the
// enumeration the thermo stage sums over — gives every level with the
// gradient over the fitted parameters (checked against finite differences).
func TestRecordOpenShellRoundTrip(t *testing.T) {
	no := nitricOxideTruth()
	a := states.State{Label: "A", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}, TermEnergy: 44000}
	o := newTruth([]states.State{no.sts[0], a}, map[[2]int]genState{
		{0, 0}: no.lv[[2]int{0, 0}], {0, 1}: no.lv[[2]int{0, 1}],
		{1, 0}: {S2: 1, T: 44138.25, B: 1.99651, D: 5.4e-6, Gamma: -2.7e-3},
	})
	rng := rand.New(rand.NewPCG(4, 4))
	lines := append(nitricOxideLines(o, rng), o.lines("14N16O", bandSpec{stU: 1, j2max: 51, satellites: true, unc: 5e-3}, rng)...)
	list := &linelist.List{Lines: lines}
	if err := linelist.CheckStates(list, o.sts); err != nil {
		t.Fatal(err)
	}
	for _, spec := range []ModelSpec{
		{Kind: model.KindTermValues, Terms: []string{"B", "D", "A", "gamma", "p", "q"}, States: o.sts},
		{Kind: model.KindDunham, Terms: []string{"Y10", "Y01", "Y11", "Y02", "A_e", "alpha_A", "gamma_e", "p_e", "q_e", "A:Y01", "A:Y02", "A:gamma_e"}, States: o.sts},
	} {
		m, err := BuildModel(list.Lines, spec)
		if err != nil {
			t.Fatal(err)
		}
		r, err := Fit(Problem{Lines: list.Lines, Model: m}, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecord(r)
		var buf bytes.Buffer
		if err := rec.Write(&buf); err != nil {
			t.Fatal(err)
		}
		back, err := constants.Read(&buf, "c.json")
		if err != nil {
			t.Fatalf("%s: %v", spec.Kind, err)
		}
		if len(back.States) != 2 || back.States[1].Label != "A" || back.Convergence == nil {
			t.Errorf("%s: states %+v, convergence %+v", spec.Kind, back.States, back.Convergence)
		}
		set, err := back.Constants()
		if err != nil {
			t.Fatal(err)
		}
		checkSublevels(t, spec.Kind, r, set)
	}
}

// checkSublevels compares the levels of the rebuilt set with the fit's
// model and the gradients of Set.Sublevels with finite differences.
func checkSublevels(t *testing.T, kind string, r *Result, set *constants.Set) {
	t.Helper()
	lm := r.Model.(model.LevelModel)
	vals := make([]float64, len(r.Params))
	for i, p := range r.Params {
		vals[i] = p.Value
	}
	x0 := set.FreeValues()
	num := make([]float64, len(x0))
	for st, v := range map[int]int{0: 1, 1: 0} {
		n := 0
		set.Sublevels(0, st, v, 41, true, func(l model.Sublevel) {
			n++
			want := lm.LevelEnergy(0, l.Level, vals, nil)
			if !scalar.EqualWithinAbsOrRel(l.E, want, 1e-9, 1e-12) {
				t.Errorf("%s: %+v: rebuilt %.12g, fitted %.12g", kind, l.Level, l.E, want)
			}
			if n%7 != 0 {
				return
			}
			g := append([]float64(nil), l.Grad...)
			lv := l.Level
			fd.Gradient(num, func(x []float64) float64 { return set.WithFree(x).LevelEnergy(0, lv, nil) }, x0, &fd.Settings{Formula: fd.Central, Step: 1e-6})
			for k := range g {
				if !scalar.EqualWithinAbsOrRel(g[k], num[k], 1e-5, 1e-5) {
					t.Errorf("%s: %+v: ∂E/∂%s = %g, finite difference %g", kind, lv, set.Params[set.Free[k]].ID(), g[k], num[k])
				}
			}
		})
		if want := map[int]int{0: 2 + 4*20, 1: 2 * 21}[st]; n != want {
			t.Errorf("%s: state %d v=%d: %d levels up to J = 20.5, want %d", kind, st, v, n, want)
		}
	}
	if math.IsNaN(set.LevelEnergy(0, model.Level{State: 1, V: 0, J2: 1, F: 1}, nil)) {
		t.Errorf("%s: A state J = 1/2 F1 missing", kind)
	}
}
