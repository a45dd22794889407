package fit

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// Predictions of open-shell and electronic lines: every electric-dipole line
// of a band between two vibronic levels (OpenBandTransitions), or exactly the
// transitions of a list (PredictLines), with σ from the full covariance.

// openModel returns the constants' model as a LevelModel and whether its
// levels need more than (v, J): electronic states or fine structure.
func openModel(c *constants.Set) (model.LevelModel, bool) {
	lm, ok := c.Model.(model.LevelModel)
	if !ok {
		return nil, false
	}
	sts := lm.States()
	return lm, len(sts) > 1 || sts[0].Case() != states.Singlet
}

// OpenShell reports whether the constants describe electronic states or
// fine structure (predictions then go through OpenBandTransitions).
func OpenShell(c *constants.Set) bool {
	_, open := openModel(c)
	return open
}

func hasOpen(ts []Transition) bool {
	for _, t := range ts {
		if t.Open != nil {
			return true
		}
	}
	return false
}

// predictOpen calculates the transitions through the levels of the
// LevelModel, each with its 1σ, σ² = gᵀCg.
func predictOpen(c *constants.Set, lm model.LevelModel, ts []Transition) ([]Prediction, error) {
	n := len(c.Free)
	grad := make([]float64, n)
	g := mat.NewVecDense(max(n, 1), nil)
	out := make([]Prediction, 0, len(ts))
	for _, t := range ts {
		s := model.SpeciesIndex(c.Model, t.Species)
		if s < 0 {
			return nil, fmt.Errorf("fit: species %s is not in the constants record (it has %s)", t.Species, strings.Join(c.Model.Species(), ", "))
		}
		l := t.Line()
		up, lo, why := LineLevels(lm, s, &l, c.Values)
		if why != "" {
			return nil, fmt.Errorf("fit: %s of %s: %s", t.Label(), t.Species, why)
		}
		nu := c.LevelTransition(s, up, lo, grad)
		v := 0.0
		if n > 0 {
			for k, x := range grad {
				g.SetVec(k, x)
			}
			v = mat.Inner(g, c.Cov, g)
		}
		out = append(out, Prediction{Transition: t, Position: nu, Sigma: math.Sqrt(math.Max(v, 0)), Intensity: math.NaN()})
	}
	return out, nil
}

// stateIndex returns the index of the state labelled label ("" the ground
// state) among sts.
func stateIndex(sts []states.State, label string) (int, error) {
	if label == "" || label == sts[0].Label {
		return 0, nil
	}
	if i := states.Index(sts, label); i > 0 {
		return i, nil
	}
	var ls []string
	for _, s := range sts {
		ls = append(ls, s.Label)
	}
	return 0, fmt.Errorf("fit: the constants record has no electronic state %q (it has %s)", label, strings.Join(ls, ", "))
}

// OpenBandTransitions lists the electric-dipole lines (ΔJ = 0, ±1; e–e and
// f–f for ΔJ = ±1, e–f for ΔJ = 0) of band b of species sp between two
// vibronic levels of the constants c, lower J up to jmax (+½ for
// half-integer J), in the branches given (ΔJ letters; all three when none);
// within one vibronic level the upper level is the higher one. Levels the
// nuclear-spin statistics leave out (levelsExist) have no lines. Branches are
// written in the notation of linelist.Branch.
func OpenBandTransitions(c *constants.Set, sp string, b linelist.Band, branches []string, jmax int) ([]Transition, error) {
	lm, _ := openModel(c)
	s := model.SpeciesIndex(c.Model, sp)
	if lm == nil || s < 0 {
		return nil, fmt.Errorf("fit: species %s is not in the constants record (it has %s)", sp, strings.Join(c.Model.Species(), ", "))
	}
	sts := lm.States()
	su, err := stateIndex(sts, b.StateUp)
	if err != nil {
		return nil, err
	}
	sl, err := stateIndex(sts, b.StateLo)
	if err != nil {
		return nil, err
	}
	if !lm.HasVibronic(s, su, b.VUp) || !lm.HasVibronic(s, sl, b.VLo) {
		return nil, fmt.Errorf("fit: band %s of %s: the constants record has no parameters for one of its levels", b, sp)
	}
	want := map[int]bool{}
	for _, name := range branches {
		dj, ok := linelist.BranchDeltaJ(name)
		if !ok {
			return nil, fmt.Errorf("fit: branch %q: use O, P, Q, R or S", name)
		}
		want[dj] = true
	}
	existsUp, existsLo := levelsExist(sp, sts[su]), levelsExist(sp, sts[sl])
	upper := map[int][]model.Sublevel{}
	lm.Sublevels(s, su, b.VUp, 2*jmax+3, c.Values, false, func(l model.Sublevel) {
		if existsUp(l.N) {
			upper[l.J2] = append(upper[l.J2], l)
		}
	})
	var out []Transition
	lm.Sublevels(s, sl, b.VLo, 2*jmax+1, c.Values, false, func(lo model.Sublevel) {
		if !existsLo(lo.N) {
			return
		}
		for dj := -1; dj <= 1; dj++ {
			if len(want) > 0 && !want[dj] {
				continue
			}
			for _, up := range upper[lo.J2+2*dj] {
				if (dj == 0) == (up.Parity == lo.Parity) || (su == sl && b.VUp == b.VLo && !(up.E > lo.E)) {
					continue
				}
				out = append(out, openTransition(sp, b, up, lo))
			}
		}
	})
	return out, nil
}

// openTransition makes the Transition up ← lo of band b.
func openTransition(sp string, b linelist.Band, up, lo model.Sublevel) Transition {
	o := &linelist.OpenShell{HalfJ: up.J2%2 == 1,
		Up: linelist.LevelLabel{State: b.StateUp, N: up.N, F: up.F, Parity: up.Parity},
		Lo: linelist.LevelLabel{State: b.StateLo, N: lo.N, F: lo.F, Parity: lo.Parity}}
	t := Transition{Species: sp, Up: Level{b.VUp, up.J2 / 2}, Lo: Level{b.VLo, lo.J2 / 2}, Open: o}
	l := t.Line()
	t.Branch = linelist.LineBranch(&l).String()
	return t
}

// levelsExist returns whether the levels of N exist in a Σ state of isotopologue
// sp: a homonuclear molecule whose nuclear-spin weight of even or odd N is zero
// (16O2 X³Σg⁻: odd N only; species.NuclearSpinWeights) has no such levels. Any
// N exists otherwise (and in Π states, whose two Λ components share the
// weights).
func levelsExist(sp string, st states.State) func(n int) bool {
	all := func(int) bool { return true }
	iso, err := species.Parse(sp)
	if err != nil || st.Lambda != 0 {
		return all
	}
	even, odd, err := iso.NuclearSpinWeights(0, st.Symmetry)
	if err != nil {
		return all
	}
	return func(n int) bool {
		if n%2 == 0 {
			return even > 0
		}
		return odd > 0
	}
}

// PredictLines predicts exactly the transitions of lines (a list read with
// linelist.ReadTransitions and checked with linelist.CheckStates against the
// record's states), each with its 1σ from the full covariance of the
// constants, σ² = gᵀCg. A line whose species or levels the constants do not
// describe is an error naming its file and row.
func PredictLines(c *constants.Set, lines []linelist.Line) ([]Prediction, error) {
	ts := make([]Transition, len(lines))
	var bad []string
	for i := range lines {
		l := &lines[i]
		ts[i] = Transition{Species: l.Species, Up: Level{l.VUp, l.JUp}, Lo: Level{l.VLo, l.JLo}, Branch: l.Branch, Open: l.Open}
		if ts[i].Branch == "" {
			ts[i].Branch = linelist.LineBranch(l).String()
		}
		if model.SpeciesIndex(c.Model, l.Species) < 0 {
			bad = append(bad, fmt.Sprintf("%s:%d: species: %s is not in the constants record (it has %s)", l.File, l.Row, l.Species, strings.Join(c.Model.Species(), ", ")))
		}
	}
	if len(bad) > 0 {
		if len(bad) > 20 {
			bad = append(bad[:20], fmt.Sprintf("… and %d more", len(bad)-20))
		}
		return nil, fmt.Errorf("fit: %s", strings.Join(bad, "\nfit: "))
	}
	return PredictTransitions(c, ts)
}
