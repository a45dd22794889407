package assign

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// fitLines builds the line list of the current assignment.
func (r *run) fitLines() ([]linelist.Line, []Transition) {
	ts := make([]Transition, 0, len(r.assigned))
	for t := range r.assigned {
		ts = append(ts, t)
	}
	sortTransitions(ts)
	lines := make([]linelist.Line, len(ts))
	for i, t := range ts {
		lines[i] = r.lineOf(t, r.assigned[t])
	}
	return lines, ts
}

func (r *run) lineOf(t Transition, k int) linelist.Line {
	pk := &r.p.Peaks.Peaks[r.peakOf[k]]
	return linelist.Line{File: r.p.Peaks.File, Row: pk.Row, Species: t.Species, VUp: t.VUp, JUp: t.JUp, VLo: t.VLo, JLo: t.JLo,
		Position: pk.Position, Unc: pk.Unit.FromWavenumber(r.unc[k]), Unit: pk.Unit, Branch: t.Branch()}
}

func sortTransitions(ts []Transition) {
	sort.Slice(ts, func(i, j int) bool {
		a, b := ts[i], ts[j]
		if a.Species != b.Species {
			return a.Species < b.Species
		}
		if a.VLo != b.VLo {
			return a.VLo < b.VLo
		}
		if a.VUp != b.VUp {
			return a.VUp < b.VUp
		}
		if a.DeltaJ() != b.DeltaJ() {
			return a.DeltaJ() < b.DeltaJ()
		}
		return a.JLo < b.JLo
	})
}

// fitModel chooses the terms of each level from the J range the lines cover:
// B always; D with 4 or more distinct J; H with 10 or more and J ≥ 20; L with
// 20 or more and J ≥ 50. Terms that do not float are held at the values the
// starting constants give (H and L of a Dunham start without them: 0).
func (r *run) fitModel(lines []linelist.Line, extraFix map[string]bool) (model.Model, error) {
	type lk struct {
		s string
		v int
	}
	js := map[lk]map[int]bool{}
	for _, l := range lines {
		for _, x := range [][2]int{{l.VUp, l.JUp}, {l.VLo, l.JLo}} {
			k := lk{l.Species, x[0]}
			if js[k] == nil {
				js[k] = map[int]bool{}
			}
			js[k][x[1]] = true
		}
	}
	var fixes []model.Fix
	keys := make([]lk, 0, len(js))
	for k := range js {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].s != keys[j].s {
			return keys[i].s < keys[j].s
		}
		return keys[i].v < keys[j].v
	})
	for _, k := range keys {
		n, jmax := len(js[k]), 0
		for j := range js[k] {
			jmax = max(jmax, j)
		}
		sp := r.speciesState(k.s)
		prior, err := levelPrior(sp.sp, k.v)
		if err != nil {
			return nil, err
		}
		float := map[string]bool{"D": n >= 4, "H": n >= 10 && jmax >= 20, "L": n >= 20 && jmax >= 50}
		for _, name := range []string{"D", "H", "L"} {
			id := fmt.Sprintf("%s_v%d[%s]", name, k.v, k.s)
			if !float[name] || extraFix[id] {
				fixes = append(fixes, model.Fix{Name: name, V: k.v, Species: k.s, Value: prior[name]})
			}
		}
	}
	return fit.BuildModel(lines, fit.ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D", "H", "L"}, Fixes: fixes})
}

func (r *run) speciesState(label string) *spState {
	for _, s := range r.species {
		if s.sp.Label == label {
			return s
		}
	}
	return nil
}

// doFit fits the current assignment. Lines the fit rejects are dropped and
// banned; it reports whether any were. The centrifugal terms the fit cannot
// determine, or that come out below significantSigmas σ, are held at their
// starting values and the fit repeated.
func (r *run) doFit() (bool, error) {
	extraFix := map[string]bool{}
	for attempt := 0; ; attempt++ {
		lines, ts := r.fitLines()
		if attempt > 12 {
			return false, errors.New("assign: the internal fit did not settle on its terms")
		}
		m, err := r.fitModel(lines, extraFix)
		if err != nil {
			return false, err
		}
		prob := fit.Problem{Lines: lines, Model: m}
		res, err := fit.Fit(prob, fit.Settings{Reject: r.s.sigmas()})
		if err != nil {
			var ue *fit.UndeterminedError
			if errors.As(err, &ue) && attempt < 4 && holdUndeterminedTerms(ue, extraFix) {
				continue
			}
			if ce := (*fit.CannotFitError)(nil); errors.As(err, &ce) || errors.As(err, &ue) {
				return false, fmt.Errorf("assign: the internal fit of the %d assigned lines failed: %w", len(lines), err)
			}
			return false, fmt.Errorf("assign: internal fit: %w", err)
		}
		if holdInsignificantTerms(res, extraFix) && attempt < 8 {
			continue
		}
		rejected, norms := r.dropRejected(res, ts)
		r.fit, r.fitProb = res, prob
		r.fp = newFitPredictor(res)
		r.setFitScale(norms)
		return rejected, nil
	}
}

// significantSigmas: a centrifugal term floats only when its value exceeds
// this many σ, as a spectroscopist floats a term only when it is significant.
const significantSigmas = 3

// isCentrifugal reports whether a level term is a centrifugal-distortion
// term (D, H, L), which the internal fit may hold.
func isCentrifugal(name string) bool { return name == "D" || name == "H" || name == "L" }

// holdUndeterminedTerms adds to extraFix the centrifugal terms of the groups
// the fit could not determine, and reports whether there were any.
func holdUndeterminedTerms(ue *fit.UndeterminedError, extraFix map[string]bool) bool {
	added := false
	for _, g := range ue.Groups {
		for _, id := range g {
			if (strings.HasPrefix(id, "D_") || strings.HasPrefix(id, "H_") || strings.HasPrefix(id, "L_")) && !extraFix[id] {
				extraFix[id] = true
				added = true
			}
		}
	}
	return added
}

// holdInsignificantTerms adds to extraFix the fitted centrifugal terms below
// significantSigmas σ, and reports whether there were any.
func holdInsignificantTerms(res *fit.Result, extraFix map[string]bool) bool {
	pruned := false
	for _, j := range res.Free {
		q := res.Params[j]
		if isCentrifugal(q.Name) && q.Sigma > 0 && math.Abs(q.Value) < significantSigmas*q.Sigma && !extraFix[q.ID()] {
			extraFix[q.ID()] = true
			pruned = true
		}
	}
	return pruned
}

// dropRejected drops the lines (transitions ts) the fit rejected, and
// returns whether there were any and the |o−c|/unc of the others.
func (r *run) dropRejected(res *fit.Result, ts []Transition) (bool, []float64) {
	rejected := false
	var norms []float64
	for i, lr := range res.Lines {
		if !lr.Used {
			t := ts[i]
			k := r.assigned[t]
			reason := fmt.Sprintf("rejected by the internal fit: |o−c|/unc = %.1f > %.1f s (s = %.2f)", math.Abs(lr.Norm), r.s.sigmas(), res.Stats.Sigma)
			r.drop(t, k, reason)
			rejected = true
			continue
		}
		norms = append(norms, math.Abs(lr.Norm))
	}
	return rejected, norms
}

// setFitScale sets the scale of the stated uncertainties, robust against a
// minority of bad lines: madToSigma × the median |o−c|/unc of the lines used
// (norms), never below 1 when the peaks give uncertainties.
func (r *run) setFitScale(norms []float64) {
	srob := madToSigma * median(norms)
	switch {
	case r.uncEst && srob > 0:
		r.sFit = srob
	case srob > 1:
		r.sFit = srob
	default:
		r.sFit = 1
	}
}

// drop removes an assignment and bans the pair.
func (r *run) drop(t Transition, k int, reason string) {
	delete(r.assigned, t)
	r.bans[banKey{t, k}] = reason
	r.dropped[k] = droppedInfo{t: t, reason: reason}
}
