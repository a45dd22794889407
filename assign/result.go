package assign

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
)

// result assembles the Result of the finished run: the final fit, the
// assigned lines, the bands, the peaks left over and the warnings.
func (r *run) result() (*Result, error) {
	res := &Result{Settings: r.s, Problem: r.p, Iterations: r.iter, UncEstimated: r.uncEst, IntensityScatter: math.NaN()}
	if r.p.Peaks.HasIntensity {
		res.IntensityScatter = r.sigI
	}
	if len(r.assigned) == 0 {
		return nil, failure.Errorf(failure.CannotCompute, "assign: no line is left assigned: every line the locks brought was dropped by the internal fit or the combination-difference checks; check the starting constants and the bands")
	}
	lines, ts, err := r.finalFit(res)
	if err != nil {
		return nil, fmt.Errorf("assign: the final fit of the %d assigned lines failed: %w", len(r.assigned), err)
	}
	byBand := r.bandResults()
	r.addAssignments(res, lines, ts, byBand)
	r.addLeftovers(res, byBand)
	for _, b := range r.bands {
		res.Bands = append(res.Bands, *byBand[b])
	}
	for _, w := range r.p.Peaks.Warnings {
		res.Warnings = append(res.Warnings, w.String())
	}
	res.Warnings = append(res.Warnings, r.warnings...)
	res.Warnings = append(res.Warnings, blendWarnings(r.p.Peaks.File, res.Lines)...)
	for _, w := range res.Fit.Warnings {
		res.Warnings = append(res.Warnings, "internal fit: "+w)
	}
	return res, nil
}

// maxBlendWarnings caps the blended peaks named one by one in the warnings;
// the rest are counted (lines.csv marks every one in its blend column).
const maxBlendWarnings = 10

// blendWarnings names the peaks that lie within the tolerance of two
// transitions: assigned to one, claimed by the other.
func blendWarnings(file string, ls []Assignment) []string {
	var out []string
	n := 0
	for _, a := range ls {
		if len(a.Blend) == 0 {
			continue
		}
		n++
		if n > maxBlendWarnings {
			continue
		}
		var others []string
		for _, t := range a.Blend {
			others = append(others, t.Label())
		}
		out = append(out, fmt.Sprintf("peak %d (%s, %s %s) fits two transitions: assigned to %s, also within the tolerance of %s (a blend; lines.csv marks it, check it before fitting)",
			a.Peak.Index, textcheck.At(file, a.Peak.Row), a.Peak.Text, a.Peak.Unit, a.Label(), strings.Join(others, ", ")))
	}
	if n > maxBlendWarnings {
		out = append(out, fmt.Sprintf("… and %d more blended peaks (blend = yes in lines.csv)", n-maxBlendWarnings))
	}
	return out
}

// finalFit fits the final assignment without rejection, into res.Fit and
// res.FitProblem, and makes it the run's predictor; it returns the lines fitted
// and their transitions. When no peak had an uncertainty (unit weights), the
// lines' unc is first set to the rms of the residuals of the last fit,
// rounded to two significant digits.
func (r *run) finalFit(res *Result) ([]linelist.Line, []Transition, error) {
	lines, ts := r.fitLines()
	if r.uncEst {
		// The last fit weighted every line by the placeholder unc, so its
		// dimensionless σ is the rms scatter in units of that unc.
		rms := r.fit.Stats.RMSCm
		if r.fit.Stats.DOF > 0 {
			rms = r.fit.Stats.Sigma * placeholderUnc
		}
		if !(rms > 0) {
			rms = placeholderUnc
		}
		rms = roundSig(rms, 2)
		for k := range r.unc {
			r.unc[k] = rms
		}
		lines, ts = r.fitLines()
	}
	m, err := r.fitModel(lines, r.finalFixes())
	if err != nil {
		return nil, nil, err
	}
	prob := fit.Problem{Lines: lines, Model: m}
	fr, err := fit.Fit(prob, fit.Settings{})
	if err != nil {
		return nil, nil, err
	}
	res.Fit, res.FitProblem = fr, prob
	r.fp = newFitPredictor(fr)
	return lines, ts, nil
}

// bandResults starts the report of every band: its lock, intensity scale
// and combination-difference statistics.
func (r *run) bandResults() map[*band]*BandResult {
	byBand := map[*band]*BandResult{}
	for _, b := range r.bands {
		br := &BandResult{Species: b.sp.sp.Label, VUp: b.vu, VLo: b.vl, Lock: b.lock, Locked: b.locked, Branches: map[string][2]int{}, Intensity: math.NaN(), MaxPredict: b.pmax}
		if b.hasG[0] {
			br.Intensity = b.g[0]
		} else if b.hasG[1] {
			br.Intensity = b.g[1]
		}
		if st := r.cdBand[b]; st != nil {
			br.CD = *st
		}
		if b.locked && !r.fp.has(b.sp.sp.Label, b.vu, b.vl) {
			br.Note = "locked, but every line was dropped later"
		}
		byBand[b] = br
	}
	return byBand
}

// addAssignments adds the assigned lines (fitted as lines, transitions ts)
// to res, with their calculated positions, confidence and checks, and counts
// them into their bands' reports with the bands' rms.
func (r *run) addAssignments(res *Result, lines []linelist.Line, ts []Transition, byBand map[*band]*BandResult) {
	// Predictions of the last matching, by transition.
	predIdx := map[Transition]int{}
	if r.last != nil {
		for i, p := range r.last.preds {
			predIdx[p.t] = i
		}
	}
	fp, fr := r.fp, res.Fit
	sumsq := map[*band][2]float64{}
	for i, t := range ts {
		k := r.assigned[t]
		pk := &r.p.Peaks.Peaks[r.peakOf[k]]
		b, bb := r.bandOf(t)
		calc, sig := fp.line(t.Species, t.VUp, t.JUp, t.VLo, t.JLo)
		a := Assignment{Transition: t, Peak: pk, Calc: calc, Sigma: sig,
			ObsMinusCalc: pk.Unit.FromWavenumber(r.pos[k] - calc), Unc: lines[i].Unc, UncSource: r.uSource[k]}
		if bb != nil {
			a.Intensity = bb.inten[t.JLo] / r.maxIntensity()
		}
		if x, ok := r.cdLine[t]; ok {
			a.CDChecked, a.CDPassed = x[0], x[1]
		}
		a.Confidence = r.confidence(t, k, b, predIdx, &a)
		res.Lines = append(res.Lines, a)
		if b == nil {
			continue
		}
		st := byBand[b]
		st.Lines++
		l := t.Branch()
		jr, ok := st.Branches[l]
		if !ok {
			jr = [2]int{t.JLo, t.JLo}
		}
		jr[0], jr[1] = min(jr[0], t.JLo), max(jr[1], t.JLo)
		st.Branches[l] = jr
		d := r.pos[k] - calc
		s := sumsq[b]
		s[0] += d * d
		s[1] += sq(fr.Lines[i].Norm)
		sumsq[b] = s
	}
	for b, s := range sumsq {
		st := byBand[b]
		st.RMS = math.Sqrt(s[0] / float64(st.Lines))
		st.RMSNorm = math.Sqrt(s[1] / float64(st.Lines))
	}
}

// addLeftovers adds the peaks without an assignment to res, in peak-list
// order, each with the nearest prediction of a locked band and, for a peak
// whose assignment was dropped, the transition and the reason (also listed
// under its band).
func (r *run) addLeftovers(res *Result, byBand map[*band]*BandResult) {
	all := r.lockedPredictions()
	taken := map[int]bool{}
	for _, k := range r.assigned {
		taken[k] = true
	}
	for k := range r.pos {
		if taken[k] {
			continue
		}
		pk := &r.p.Peaks.Peaks[r.peakOf[k]]
		lo := Leftover{Peak: pk}
		if n := nearestPrediction(all, r.pos[k]); n >= 0 {
			p := all[n]
			lo.Nearest = &p
			lo.Distance = pk.Unit.FromWavenumber(r.pos[k] - p.Position)
		}
		if d, ok := r.dropped[k]; ok {
			t := d.t
			lo.Dropped, lo.Reason = &t, d.reason
			if b, _ := r.bandOf(t); b != nil {
				byBand[b].Dropped = append(byBand[b].Dropped, lo)
			}
		} else if lo.Nearest != nil {
			lo.Reason = r.leftoverReason(k, *lo.Nearest)
		}
		res.Unassigned = append(res.Unassigned, lo)
	}
	sort.SliceStable(res.Unassigned, func(i, j int) bool { return res.Unassigned[i].Peak.Index < res.Unassigned[j].Peak.Index })
}

// lockedPredictions predicts, from the final fit, every line of the locked
// bands within a line spacing of the peaks' range, sorted by position.
func (r *run) lockedPredictions() []Prediction {
	fp := r.fp
	var all []Prediction
	for _, b := range r.bands {
		if !b.locked || !fp.has(b.sp.sp.Label, b.vu, b.vl) {
			continue
		}
		for _, br := range b.branches {
			for j := br.jmin; j <= br.jmax; j++ {
				nu, sig := fp.line(b.sp.sp.Label, b.vu, j+br.dJ, b.vl, j)
				if nu < r.lo-2*b.bbar || nu > r.hi+2*b.bbar {
					continue
				}
				all = append(all, Prediction{Transition: Transition{b.sp.sp.Label, b.vu, j + br.dJ, b.vl, j}, Position: nu, Sigma: sig, Intensity: br.inten[j] / r.maxIntensity()})
			}
		}
	}
	sort.Slice(all, func(i, j int) bool { return all[i].Position < all[j].Position })
	return all
}

// finalFixes lists the rotational terms the last fit had to hold.
func (r *run) finalFixes() map[string]bool {
	out := map[string]bool{}
	if r.fit == nil {
		return out
	}
	for _, p := range r.fit.Params {
		if p.Fixed && p.V >= 0 && p.Name != "T" {
			out[p.ID()] = true
		}
	}
	return out
}

// confidence scores an assignment (see Assignment.Confidence):
//
//	lock × p_match × cd × share
//
// lock = min(1, margin/0.1) of the band's lock; p_match = L/(ΣL + L₀) over
// the candidate peaks of the prediction, L = exp(−cost/2) with the matching
// cost (z² + intensity deviation²) and L₀ = exp(−cost of no peak/2); cd = 1
// when a combination difference involving the line agrees, 0.9 when none can
// be formed, 0.7 + 0.3·passed/checked otherwise; share = I/(I + ΣI_blend),
// the share of a blended peak the line is predicted to carry.
func (r *run) confidence(t Transition, k int, b *band, predIdx map[Transition]int, a *Assignment) float64 {
	c := 1.0
	if b != nil {
		c = math.Min(1, b.lock.Margin/fullMargin)
	}
	pm := 0.5
	if i, ok := predIdx[t]; ok && r.last != nil {
		mt := r.last
		var sum, mine float64
		for _, e := range mt.edgesOf[i] {
			l := math.Exp(-mt.edges[e].cost / 2)
			sum += l
			if mt.edges[e].k == k {
				mine = l
			}
		}
		sum += math.Exp(-mt.preds[i].unCost / 2)
		if mine > 0 {
			pm = mine / sum
		}
		share := 1.0
		if bl := mt.blendOf[k]; len(bl) > 0 {
			tot := a.Intensity
			for _, j := range bl {
				o := mt.preds[j]
				a.Blend = append(a.Blend, o.t)
				tot += o.br.inten[o.t.JLo] / r.maxIntensity()
			}
			share = 0.5
			if tot > 0 && a.Intensity > 0 {
				share = a.Intensity / tot
			}
		}
		c *= share
	}
	c *= pm
	switch {
	case a.CDChecked == 0:
		c *= 0.9
	case a.CDPassed < a.CDChecked:
		c *= 0.7 + 0.3*float64(a.CDPassed)/float64(a.CDChecked)
	}
	return math.Max(0, math.Min(1, c))
}

func nearestPrediction(all []Prediction, x float64) int {
	if len(all) == 0 {
		return -1
	}
	i := sort.Search(len(all), func(i int) bool { return all[i].Position >= x })
	switch {
	case i == 0:
		return 0
	case i == len(all):
		return len(all) - 1
	case x-all[i-1].Position <= all[i].Position-x:
		return i - 1
	}
	return i
}

// roundSig rounds x to n significant digits.
func roundSig(x float64, n int) float64 {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', n, 64), 64)
	return v
}

// maxIntensity returns the strongest predicted line of all bands, the unit of
// the relative intensities reported.
func (r *run) maxIntensity() float64 {
	m := 0.0
	for _, b := range r.bands {
		m = math.Max(m, b.pmax)
	}
	if m == 0 {
		return 1
	}
	return m
}
