package assign

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// Lock is the outcome of the search that pins a band's predicted pattern onto
// the peaks before any fit.
//
// The search moves the predicted lines of the band's lock set (its strongest
// lines at low J, where the starting constants predict best) by
//
//	Δν = a + δ·(x′ − x″),   x = J(J+1),
//
// a common offset a and a common error δ of the rotational constants of both
// levels (a scale error δ/B of B), over a grid of a within ±LockOffset line
// spacings (a = 0 for pure rotation, which has no vibrational origin) and δ
// within ±LockScale·B. Each hypothesis is scored by the share of lock lines
// that find an unused peak within their window, each weighted by its closeness
// and, when the peaks have intensities, by how well the observed intensity
// agrees with the predicted one after a common scale; an infrared band is
// also penalised when an intensity-compatible peak sits at its predicted
// origin, where no line can be (the gap between P(1) and R(0)), which tells
// the true pattern from the one shifted by one J. The best hypothesis is
// refined by least squares in a, δ and a difference ε of the two rotational
// constants (Δν += ε·(x′ + x″)/2).
type Lock struct {
	Offset  float64 // a, cm⁻¹
	DeltaB  float64 // δ, cm⁻¹
	Epsilon float64 // ε, cm⁻¹ (refinement only)
	Score   float64 // 0…1
	// Alternative is the best hypothesis that puts the lock lines on other
	// peaks (for a wrong-J lock, typically one line spacing away).
	AltOffset, AltDeltaB, AltScore float64
	// Margin is (Score − AltScore)/Score: the evidence that the lock is not
	// shifted by whole lines.
	Margin float64
	// Matched lock lines, of Tried predicted inside the peaks' range.
	Matched, Tried int
	RMS            float64 // rms of the lock residuals after refinement, cm⁻¹
	OK             bool
	Reason         string // why the band could not be locked
}

// Lock acceptance thresholds.
const (
	minLockScore  = 0.35 // share of the lock set explained
	minLockLines  = 4
	minLockMargin = 0.02 // below: two patterns explain the peaks equally well
	fullMargin    = 0.10 // margin from which the lock is taken as certain
)

type lockLine struct {
	br     *branch
	jlo    int
	nu     float64 // start prediction, cm⁻¹
	dx, sx float64 // x′ − x″ and (x′ + x″)/2
	lnP    float64
	w      float64 // window half-width, cm⁻¹
	group  int
}

type lockMatch struct {
	line *lockLine
	peak int // sorted peak index
	r    float64
}

// lockBand runs the lock search for band b against the peaks not yet taken.
//
// With narrow set (a prediction from a fit, see refreshPrediction), the
// windows and the offset search shrink to the prediction's σ (k·σ, at least
// 2 % of a line spacing and 4× the peaks' uncertainty, for the errors of the
// mass scaling and of the terms held) and δ is not searched.
func (r *run) lockBand(b *band, taken []bool, globalScale float64, narrow bool) (Lock, []lockMatch) {
	fitted := b.lockPos != nil
	narrow = narrow && fitted
	origin := b.origin
	if fitted {
		origin = b.lockOrigin
	}
	posOf := func(br *branch, j int) float64 {
		if fitted {
			return b.lockPos[br][j]
		}
		return br.start[j]
	}
	var L Lock
	spacing := 2 * b.bbar
	wBase := 0.125 * spacing
	if r.uMed > 0 {
		wBase = math.Max(wBase, 4*r.uMed)
	}
	if r.s.Tolerance > 0 {
		wBase = math.Max(wBase, r.s.Tolerance)
	}
	// Lock set: the strong low-J lines inside the spectral range.
	jpeak, pmax := 0, 0.0
	for _, br := range b.branches {
		for j := br.jmin; j <= br.jmax; j++ {
			if br.inten[j] > pmax {
				pmax, jpeak = br.inten[j], j
			}
		}
	}
	jcap := min(max(2*jpeak+3, 8), 30)
	var lines []*lockLine
	for _, frac := range []float64{0.05, 0.005, 0} {
		lines = lines[:0]
		for _, br := range b.branches {
			for j := br.jmin; j <= min(br.jmax, jcap); j++ {
				nu := posOf(br, j)
				if math.IsNaN(nu) || br.inten[j] < frac*pmax || br.inten[j] <= 0 || nu < r.lo-wBase || nu > r.hi+wBase {
					continue
				}
				xu := float64((j + br.dJ) * (j + br.dJ + 1))
				xl := float64(j * (j + 1))
				lines = append(lines, &lockLine{br: br, jlo: j, nu: nu, dx: xu - xl, sx: (xu + xl) / 2, lnP: math.Log(br.inten[j]), group: br.group})
			}
		}
		if len(lines) >= 8 {
			break
		}
	}
	L.Tried = len(lines)
	if len(lines) < minLockLines {
		L.Reason = fmt.Sprintf("only %d of its lines are predicted inside the peaks' range (%.4f–%.4f cm-1); a lock needs %d", len(lines), r.lo, r.hi, minLockLines)
		return L, nil
	}
	// Windows: narrower where predicted lines crowd (Q branches, band heads).
	var all []float64
	for _, br := range b.branches {
		for j := br.jmin; j <= br.jmax; j++ {
			if x := posOf(br, j); !math.IsNaN(x) {
				all = append(all, x)
			}
		}
	}
	sort.Float64s(all)
	dxMax := 0.0
	for _, l := range lines {
		nn := math.Inf(1)
		k := sort.SearchFloat64s(all, l.nu)
		for _, kk := range []int{k - 1, k, k + 1} {
			if kk >= 0 && kk < len(all) && all[kk] != l.nu {
				nn = math.Min(nn, math.Abs(all[kk]-l.nu))
			}
		}
		l.w = math.Max(math.Min(wBase, 0.45*nn), math.Max(wBase/8, 3*r.uMed))
		if narrow {
			l.w = math.Min(l.w, math.Max(3*r.s.sigmas()*b.lockSig[l.br][l.jlo], math.Max(0.02*spacing, 4*r.uMed)))
		}
		dxMax = math.Max(dxMax, math.Abs(l.dx))
	}
	sort.SliceStable(lines, func(i, j int) bool { return lines[i].lnP > lines[j].lnP })

	aMax := r.s.lockOffset() * spacing
	aStep := wBase / 4
	if narrow {
		wmin := math.Inf(1)
		for _, l := range lines {
			wmin = math.Min(wmin, l.w)
		}
		aStep = wmin / 4
		aMax = math.Min(aMax, math.Max(3*r.s.sigmas()*b.lockSigOrigin, 0.1*spacing))
	}
	if b.vu == b.vl {
		aMax = 0
	}
	na := int(math.Ceil(aMax/aStep)) * 2
	dMax := r.s.lockScale() * b.bbar
	// Prior on δ: half the search range for starting constants; a tenth of it
	// when the prediction comes from a fit of lines already assigned.
	sigD := dMax / 2
	if fitted {
		sigD = dMax / 10
	}
	nd := 0
	if dxMax > 0 && !narrow {
		nd = min(int(math.Ceil(dMax*dxMax/(wBase/2))), 50) * 2
	}
	hasSentinel := r.p.Spectrum == Infrared
	// The intensity scale expected for this band: that of the bands already
	// locked, else the rough scale from the strongest peaks (scaleGuess).
	// Its own species' scale when a band of it is locked; else the scale
	// of the bands locked so far, loosely (the abundance may be off); else
	// the guess from the strongest peaks.
	gRef, sigG, sigSel := globalScale, math.Log(30), 2.5
	if g, ok := r.speciesScale[b.sp.sp.Label]; ok {
		gRef, sigG, sigSel = g, math.Log(5), 1
	} else if math.IsNaN(gRef) {
		gRef, sigG, sigSel = r.scaleGuess, math.Log(10), 1.5
	}
	prior := !math.IsNaN(gRef) && r.p.Spectrum != Raman && abs(b.vu-b.vl) <= 1

	gen := 0
	used := make([]int, len(r.pos))
	ells := make([][]float64, 2)
	// eval scores a hypothesis; the returned score includes the priors (on
	// δ, the intensity scale and the offset), raw is without them and
	// decides whether a lock is accepted at all.
	var raw float64
	eval := func(a, d, e float64, shrink float64, collect bool) (float64, []lockMatch) {
		gen++
		var ms []lockMatch
		type hit struct {
			q   float64
			ell float64
			grp int
			ok  bool
		}
		hits := make([]hit, len(lines))
		ells[0], ells[1] = ells[0][:0], ells[1][:0]
		for i, l := range lines {
			t := l.nu + a + d*l.dx + e*l.sx
			w := l.w * shrink
			k := r.bestFree(t, w, l.lnP+gRef, sigSel, taken, used, gen)
			if k < 0 {
				continue
			}
			used[k] = gen
			res := r.pos[k] - t
			h := hit{q: math.Exp(-0.5 * sq(res/(w/2))), grp: l.group, ok: true, ell: math.NaN()}
			if !math.IsNaN(r.lnI[k]) {
				h.ell = r.lnI[k] - l.lnP
				ells[l.group] = append(ells[l.group], h.ell)
			}
			hits[i] = h
			if collect {
				ms = append(ms, lockMatch{line: l, peak: k, r: r.pos[k] - l.nu})
			}
		}
		var g [2]float64
		for grp := range ells {
			g[grp] = median(ells[grp])
		}
		score := 0.0
		for _, h := range hits {
			if !h.ok {
				continue
			}
			qi := 1.0
			if !math.IsNaN(h.ell) {
				qi = math.Exp(-0.5 * sq((h.ell-g[h.grp])/0.35))
			}
			score += h.q * qi
		}
		score /= float64(len(lines))
		raw = score
		score *= math.Exp(-0.5 * sq(d/sigD))
		if prior && len(ells[0]) > 0 {
			score *= math.Exp(-0.5 * sq((g[0]-gRef)/sigG))
		}
		if hasSentinel {
			t0 := origin + a
			k := r.nearestFree(t0, wBase*shrink, taken, used, gen)
			if k >= 0 {
				pen := 1.0
				if !math.IsNaN(r.lnI[k]) && len(ells[0]) > 0 {
					pen = 0
					if r.lnI[k]-g[0] >= b.lnPFirst-math.Log(3) {
						pen = 2
					}
				}
				score -= pen / float64(len(lines))
				raw -= pen / float64(len(lines))
			}
		}
		// A weak preference for small corrections, to break exact ties only.
		if aMax > 0 {
			score *= 1 - 0.002*sq(a/spacing)
		}
		return score, ms
	}

	type hyp struct{ a, d, s, raw float64 }
	var hs []hyp
	best := hyp{s: math.Inf(-1)}
	for ia := 0; ia <= na; ia++ {
		a := 0.0
		if na > 0 {
			a = -aMax + float64(ia)*2*aMax/float64(na)
		}
		for id := 0; id <= nd; id++ {
			d := 0.0
			if nd > 0 {
				d = -dMax + float64(id)*2*dMax/float64(nd)
			}
			s, _ := eval(a, d, 0, 1, false)
			h := hyp{a, d, s, raw}
			hs = append(hs, h)
			if s > best.s {
				best = h
			}
		}
	}
	// The best hypothesis that moves the lock lines onto other peaks.
	alt := hyp{s: 0}
	devs := make([]float64, len(lines))
	for _, h := range hs {
		if h.s <= alt.s {
			continue
		}
		for i, l := range lines {
			devs[i] = math.Abs((h.a-best.a)+(h.d-best.d)*l.dx) / l.w
		}
		if median(devs) > 1 {
			alt = h
		}
	}
	L.Score, L.AltOffset, L.AltDeltaB, L.AltScore = best.raw, alt.a, alt.d, alt.s*best.raw/math.Max(best.s, 1e-300)
	if best.s > 0 {
		L.Margin = (best.s - alt.s) / best.s
	}

	// Refinement: least squares in a, δ, ε on the matched lock lines, with
	// outliers (beyond 4× the robust scatter or the peak's uncertainty) set
	// aside and the windows shrinking towards the scatter.
	a, d, e := best.a, best.d, 0.0
	shrink := 1.0
	wmin := math.Inf(1)
	for _, l := range lines {
		wmin = math.Min(wmin, l.w)
	}
	var ms []lockMatch
	for it := 0; it < 8; it++ {
		_, all := eval(a, d, e, shrink, true)
		ms = all
		if len(ms) < minLockLines {
			break
		}
		fa, fd, fe := b.vu != b.vl, dxMax > 0, true
		var x [3]float64
		var srob float64
		ok := false
		for pass := 0; pass < 3; pass++ {
			fe = len(ms) >= 8
			if r.p.Spectrum == Infrared && fe {
				np, nr := 0, 0
				for _, m := range ms {
					if m.line.br.dJ < 0 {
						np++
					} else {
						nr++
					}
				}
				fe = np >= 3 && nr >= 3
			}
			x, _, ok = lockLSQ(ms, fa, fd, fe)
			if !ok {
				break
			}
			res := make([]float64, len(ms))
			for i, m := range ms {
				res[i] = math.Abs(m.r - x[0] - x[1]*m.line.dx - x[2]*m.line.sx)
			}
			srob = madToSigma * median(append([]float64(nil), res...))
			var in []lockMatch
			for i, m := range ms {
				if res[i] <= 4*math.Max(srob, r.unc[m.peak]) {
					in = append(in, m)
				}
			}
			if len(in) == len(ms) || len(in) < minLockLines {
				break
			}
			ms = in
		}
		if !ok {
			break
		}
		a, d, e = x[0], x[1], x[2]
		L.RMS = srob
		// Stop once the windows would shrink by less than a tenth: the
		// matches just used were gathered with windows this close to final.
		next := math.Min(1, math.Max(0.05, math.Max(5*srob, 4*r.uMed)/wmin))
		if it > 0 && next >= shrink*0.9 {
			break
		}
		shrink = math.Min(shrink, next)
	}
	// The lock lines: a strict core, matches within 3× the robust scatter of
	// the refined pattern (at least 1.5× the median peak uncertainty); lines
	// left out here are matched later with their own tolerance.
	if len(ms) >= minLockLines {
		lim := 3 * math.Max(L.RMS, r.uMed/2)
		var in []lockMatch
		for _, m := range ms {
			if math.Abs(m.r-a-d*m.line.dx-e*m.line.sx) <= lim {
				in = append(in, m)
			}
		}
		if len(in) >= minLockLines {
			ms = in
		}
	}
	L.Offset, L.DeltaB, L.Epsilon = a, d, e
	L.Matched = len(ms)
	switch {
	case L.Matched < minLockLines || best.raw < minLockScore:
		L.Reason = fmt.Sprintf("no offset explains its strong low-J lines: best offset %+.4f cm-1 with ΔB %+.2g cm-1 has score %.2f (%d of %d lock lines on peaks; a lock needs score ≥ %.2f and %d lines)",
			best.a, best.d, best.raw, L.Matched, L.Tried, minLockScore, minLockLines)
		return L, nil
	case L.Margin < minLockMargin:
		L.Reason = fmt.Sprintf("ambiguous: offset %+.4f cm-1 (ΔB %+.2g cm-1, score %.2f) and offset %+.4f cm-1 (ΔB %+.2g cm-1, score %.2f) explain the peaks equally well; the assignments would differ by whole lines — improve the starting constants or the peak list",
			best.a, best.d, best.s, alt.a, alt.d, alt.s)
		return L, nil
	}
	L.OK = true
	return L, ms
}

// lockLSQ fits the residuals of the matched lock lines with a (when fa), δ
// (when fd) and ε (when fe); it returns (a, δ, ε), the rms of the fit and
// whether it could be solved.
func lockLSQ(ms []lockMatch, fa, fd, fe bool) ([3]float64, float64, bool) {
	var cols []int
	if fa {
		cols = append(cols, 0)
	}
	if fd {
		cols = append(cols, 1)
	}
	if fe {
		cols = append(cols, 2)
	}
	var x [3]float64
	if len(cols) == 0 || len(ms) <= len(cols) {
		return x, 0, false
	}
	A := mat.NewDense(len(ms), len(cols), nil)
	y := mat.NewVecDense(len(ms), nil)
	for i, m := range ms {
		row := [3]float64{1, m.line.dx, m.line.sx}
		for c, k := range cols {
			A.Set(i, c, row[k])
		}
		y.SetVec(i, m.r)
	}
	var s mat.VecDense
	if err := s.SolveVec(A, y); err != nil {
		return x, 0, false
	}
	for c, k := range cols {
		x[k] = s.AtVec(c)
	}
	var res mat.VecDense
	res.MulVec(A, &s)
	res.SubVec(y, &res)
	rms := math.Sqrt(mat.Dot(&res, &res) / float64(len(ms)))
	return x, rms, true
}

// bestFree returns the sorted index of the free peak within w of t that best
// agrees in position and, when both are known, in ln intensity with lnExp
// (the predicted ln intensity on the observed scale, with σ in ln units), or −1.
func (r *run) bestFree(t, w, lnExp, sigma float64, taken []bool, used []int, gen int) int {
	if math.IsNaN(lnExp) {
		return r.nearestFree(t, w, taken, used, gen)
	}
	k := sort.SearchFloat64s(r.pos, t-w)
	best, bs := -1, 0.0
	for ; k < len(r.pos) && r.pos[k] <= t+w; k++ {
		if taken[k] || used[k] == gen {
			continue
		}
		q := -0.5 * sq((r.pos[k]-t)/(w/2))
		if !math.IsNaN(r.lnI[k]) {
			q += -0.5 * sq((r.lnI[k]-lnExp)/sigma)
		}
		if best < 0 || q > bs {
			best, bs = k, q
		}
	}
	return best
}

// nearestFree returns the sorted index of the peak nearest to t within w that
// is neither taken nor used in the current hypothesis (used[k] == gen), or −1.
func (r *run) nearestFree(t, w float64, taken []bool, used []int, gen int) int {
	k := sort.SearchFloat64s(r.pos, t)
	best, bd := -1, w
	for i := k; i < len(r.pos) && r.pos[i]-t <= bd; i++ {
		if !taken[i] && used[i] != gen {
			best, bd = i, r.pos[i]-t
			break
		}
	}
	for i := k - 1; i >= 0 && t-r.pos[i] <= bd; i-- {
		if !taken[i] && used[i] != gen {
			if t-r.pos[i] < bd || best < 0 {
				best = i
			}
			break
		}
	}
	return best
}
