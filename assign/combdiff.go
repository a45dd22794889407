package assign

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// A combination difference is the difference of two assigned lines that
// share one level: their other levels, in one vibrational level v, differ in
// energy by exactly that much, whatever the shared level's energy.
//
//	lines sharing the upper level (v′, J):   R(J−1) − P(J+1) = E″(J+1) − E″(J−1)   (lower-state difference)
//	lines sharing the lower level (v″, J):   R(J) − P(J)     = E′(J+1) − E′(J−1)   (upper-state difference)
//
// (and likewise S − Q, Q − O, S − O in Raman spectra). Each difference is
// checked against the internal fit's value of the same level difference
// (|d − d_calc| ≤ CDThreshold·σ, σ² = u₁² + u₂² + σ_calc², u scaled by the
// fit's s when s > 1), and every difference of a level that other bands also
// measure (the upper-state differences of 1-0 and the lower-state differences
// of 2-1 both give level v = 1) against the weighted mean of the others. A
// line is dropped when the differences it takes part in fail and none passes,
// or when two or more fail and it has the larger fit residual in each: a
// wrongly assigned line breaks every difference it enters, a right one next
// to it only the one they share.
type cdPair struct {
	a, b     Transition // the two lines
	ka, kb   int        // their peaks
	shared   int        // 0: shared upper level (lower-state difference), 1: shared lower level
	sp       string
	v        int
	jlo, jhi int
	d, sig   float64 // measured E(v,jhi) − E(v,jlo) and its σ, cm⁻¹
	dev      float64 // (d − d_calc)/σ
	band     *band
	failed   bool
	why      string
	crossN   int // other bands measuring the same difference
	crossBad bool
}

type cdLevelKey struct {
	sp    string
	v, j  int
	upper bool
}

type cdDiffKey struct {
	sp       string
	v        int
	jlo, jhi int
}

// checkCombinationDifferences runs the checks on the current assignment and
// fit, records the statistics, drops the lines that fail, and returns how many
// were dropped.
func (r *run) checkCombinationDifferences() int {
	T := r.s.cdThreshold()
	pairs := r.cdPairs()
	r.checkAgainstFit(pairs, T)
	checkAcrossBands(pairs, T)
	tl := r.tallyCombinationDifferences(pairs)
	r.cdLine = map[Transition][2]int{}
	var drop []Transition
	for t, x := range tl {
		r.cdLine[t] = [2]int{x.pass + x.fail, x.pass}
		if (x.fail > 0 && x.pass == 0) || x.blamed >= 2 {
			drop = append(drop, t)
		}
	}
	sortTransitions(drop)
	for _, t := range drop {
		k := r.assigned[t]
		x := tl[t]
		r.drop(t, k, "breaks the combination differences: "+strings.Join(x.why, "; ")+passNote(x.pass))
	}
	return len(drop)
}

// cdPairs forms every combination difference of the current assignment:
// every two lines that share a level and whose other levels lie in one
// vibrational level, in a fixed order (species, v, J of the shared level).
func (r *run) cdPairs() []*cdPair {
	byLevel := map[cdLevelKey][]Transition{}
	for t := range r.assigned {
		byLevel[cdLevelKey{t.Species, t.VUp, t.JUp, true}] = append(byLevel[cdLevelKey{t.Species, t.VUp, t.JUp, true}], t)
		byLevel[cdLevelKey{t.Species, t.VLo, t.JLo, false}] = append(byLevel[cdLevelKey{t.Species, t.VLo, t.JLo, false}], t)
	}
	lkeys := make([]cdLevelKey, 0, len(byLevel))
	for k := range byLevel {
		lkeys = append(lkeys, k)
	}
	sort.Slice(lkeys, func(i, j int) bool {
		a, b := lkeys[i], lkeys[j]
		if a.sp != b.sp {
			return a.sp < b.sp
		}
		if a.v != b.v {
			return a.v < b.v
		}
		if a.j != b.j {
			return a.j < b.j
		}
		return a.upper && !b.upper
	})
	var pairs []*cdPair
	for _, lk := range lkeys {
		ts := byLevel[lk]
		if len(ts) < 2 {
			continue
		}
		sortTransitions(ts)
		for i := 0; i < len(ts); i++ {
			for j := i + 1; j < len(ts); j++ {
				if p := r.cdPair(lk, ts[i], ts[j]); p != nil {
					pairs = append(pairs, p)
				}
			}
		}
	}
	return pairs
}

// cdPair forms the combination difference of lines a and b, which share the
// level lk, or returns nil when their other levels are not two rotational
// levels of one vibrational level.
func (r *run) cdPair(lk cdLevelKey, a, b Transition) *cdPair {
	p := &cdPair{a: a, b: b, sp: lk.sp}
	var ja, jb int
	if lk.upper {
		// ν_a − ν_b = E(v″_b, J″_b) − E(v″_a, J″_a)
		if a.VLo != b.VLo {
			return nil
		}
		p.shared, p.v, ja, jb = 0, a.VLo, a.JLo, b.JLo
	} else {
		// ν_a − ν_b = E(v′_a, J′_a) − E(v′_b, J′_b)
		if a.VUp != b.VUp {
			return nil
		}
		p.shared, p.v, ja, jb = 1, a.VUp, a.JUp, b.JUp
	}
	if ja == jb {
		return nil
	}
	na, nb := r.pos[r.assigned[a]], r.pos[r.assigned[b]]
	diff := na - nb // upper shared: E(jb) − E(ja); lower shared: E(ja) − E(jb)
	if lk.upper {
		diff = -diff
	}
	// diff = E(v, ja) − E(v, jb) now, in both cases.
	if ja > jb {
		p.jhi, p.jlo, p.d = ja, jb, diff
	} else {
		p.jhi, p.jlo, p.d = jb, ja, -diff
	}
	p.ka, p.kb = r.assigned[a], r.assigned[b]
	ua, ub := r.unc[p.ka]*r.sFit, r.unc[p.kb]*r.sFit
	p.sig = math.Sqrt(ua*ua + ub*ub)
	p.band, _ = r.bandOf(a)
	if bb, _ := r.bandOf(b); bb != p.band {
		p.band = nil
	}
	return p
}

// checkAgainstFit compares every difference with the internal fit's value of
// the same level difference and fails it beyond T σ.
func (r *run) checkAgainstFit(pairs []*cdPair, T float64) {
	for _, p := range pairs {
		if !r.fp.has(p.sp, p.v, p.v) {
			continue
		}
		calc, sc := r.fp.line(p.sp, p.v, p.jhi, p.v, p.jlo)
		s := math.Sqrt(p.sig*p.sig + sc*sc)
		p.dev = (p.d - calc) / s
		if math.Abs(p.dev) > T {
			p.failed = true
			p.why = fmt.Sprintf("%s − %s deviates from the fit by %.1fσ", p.a.short(), p.b.short(), math.Abs(p.dev))
		}
	}
}

// checkAcrossBands compares every difference with the weighted mean of the
// same level difference measured by other bands and fails it beyond T σ.
func checkAcrossBands(pairs []*cdPair, T float64) {
	byDiff := map[cdDiffKey][]*cdPair{}
	for _, p := range pairs {
		k := cdDiffKey{p.sp, p.v, p.jlo, p.jhi}
		byDiff[k] = append(byDiff[k], p)
	}
	for _, ps := range byDiff {
		if len(ps) < 2 {
			continue
		}
		for _, p := range ps {
			var sw, swd float64
			n := 0
			for _, q := range ps {
				if q == p || q.band == p.band {
					continue
				}
				w := 1 / (q.sig * q.sig)
				sw += w
				swd += w * q.d
				n++
			}
			if n == 0 {
				continue
			}
			p.crossN = n
			mean, sm := swd/sw, math.Sqrt(1/sw)
			dev := (p.d - mean) / math.Sqrt(p.sig*p.sig+sm*sm)
			if math.Abs(dev) > T {
				p.crossBad = true
				if !p.failed {
					p.failed = true
					p.why = fmt.Sprintf("%s − %s disagrees by %.1fσ with the same level difference from other bands", p.a.short(), p.b.short(), math.Abs(dev))
				}
			}
		}
	}
}

// cdTally counts the combination differences of one line: passed, failed,
// and failed with this line the likelier culprit (the larger |o−c|/unc of
// the two in the internal fit), with the reasons of the failures.
type cdTally struct {
	pass, fail, blamed int
	why                []string
}

// tallyCombinationDifferences counts the differences per line and per band
// (r.cdBand, with the rms of their deviations from the fit).
func (r *run) tallyCombinationDifferences(pairs []*cdPair) map[Transition]*cdTally {
	tl := map[Transition]*cdTally{}
	get := func(t Transition) *cdTally {
		if tl[t] == nil {
			tl[t] = &cdTally{}
		}
		return tl[t]
	}
	normOf := make(map[Transition]float64, len(r.fitProb.Lines))
	for i, l := range r.fitProb.Lines {
		normOf[Transition{l.Species, l.VUp, l.JUp, l.VLo, l.JLo}] = math.Abs(r.fit.Lines[i].Norm)
	}
	r.cdBand = map[*band]*CDStats{}
	devs := map[*band][]float64{}
	for _, p := range pairs {
		ta, tb := get(p.a), get(p.b)
		if p.band != nil {
			r.countBandDifference(p)
			devs[p.band] = append(devs[p.band], p.dev)
		}
		if !p.failed {
			ta.pass++
			tb.pass++
			continue
		}
		ta.fail++
		tb.fail++
		ta.why = append(ta.why, p.why)
		tb.why = append(tb.why, p.why)
		if normOf[p.a] >= normOf[p.b] {
			ta.blamed++
		} else {
			tb.blamed++
		}
	}
	for b, ds := range devs {
		s := 0.0
		for _, d := range ds {
			s += d * d
		}
		r.cdBand[b].RMS = math.Sqrt(s / float64(len(ds)))
	}
	return tl
}

// countBandDifference adds difference p to the statistics of its band.
func (r *run) countBandDifference(p *cdPair) {
	st := r.cdBand[p.band]
	if st == nil {
		st = &CDStats{}
		r.cdBand[p.band] = st
	}
	if p.shared == 0 {
		st.Lower++
		if p.failed {
			st.LowerFailed++
		}
	} else {
		st.Upper++
		if p.failed {
			st.UpperFailed++
		}
	}
	if p.crossN > 0 {
		st.Cross++
		if p.crossBad {
			st.CrossFailed++
		}
	}
}

func passNote(pass int) string {
	if pass == 0 {
		return " (no difference involving it agrees)"
	}
	return fmt.Sprintf(" (%d agree)", pass)
}

// short writes "R(11)" for messages within one band.
func (t Transition) short() string { return fmt.Sprintf("%s(%d)", t.Branch(), t.JLo) }
