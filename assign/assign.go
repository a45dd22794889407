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
	"bandwright/internal/failure"
)

// Problem is what an assignment works on.
type Problem struct {
	Peaks *PeakList
	Start *Start
	// Bands are looked for in every species of Start.
	Bands    []linelist.Band
	Spectrum Spectrum
	// Temperature of the sample in K, for predicted intensities.
	Temperature float64
}

// Settings are the limits of an assignment. The zero value uses the
// documented defaults.
type Settings struct {
	// Tolerance is the largest |observed − predicted| (cm⁻¹) for a peak to
	// be a candidate of a predicted line. 0: Sigmas·√(u² + σ²) per pair, with
	// u the peak's uncertainty (scaled up by the internal fit's dimensionless
	// standard deviation when that exceeds 1) and σ the prediction's.
	Tolerance float64
	// Sigmas is the k of the default tolerance and of the internal fit's
	// rejection threshold (k·s). 0 means 4.
	Sigmas float64
	// DefaultUnc is the 1σ (cm⁻¹) of peaks that give none. 0: the median of
	// the given ones, or, when no peak has one, the rms of the internal
	// fit's residuals (unit weights), which is then written as their unc.
	DefaultUnc float64
	// LockOffset is the half-width of the offset search in line spacings
	// (2B); 0 means 1.25.
	LockOffset float64
	// LockScale is the half-width of the search in the relative error of B;
	// 0 means 0.005. Wrong-J patterns need a relative error near αe/Be (about
	// 1 % for CO), which a prior of half this width disfavours.
	LockScale float64
	// CDThreshold is the threshold, in standard deviations, of the
	// combination-difference checks; 0 means 4.
	CDThreshold float64
	// MaxIter bounds the predict–match–fit iterations; 0 means 60.
	MaxIter int
}

func (s Settings) sigmas() float64 {
	if s.Sigmas > 0 {
		return s.Sigmas
	}
	return 4
}
func (s Settings) lockOffset() float64 {
	if s.LockOffset > 0 {
		return s.LockOffset
	}
	return 1.25
}
func (s Settings) lockScale() float64 {
	if s.LockScale > 0 {
		return s.LockScale
	}
	return 0.005
}
func (s Settings) cdThreshold() float64 {
	if s.CDThreshold > 0 {
		return s.CDThreshold
	}
	return 4
}
func (s Settings) maxIter() int {
	if s.MaxIter > 0 {
		return s.MaxIter
	}
	return 60
}

// Assignment is one assigned line: a peak and the transition it is.
type Assignment struct {
	Transition
	Peak *Peak
	// Calc is the position calculated by the final internal fit (cm⁻¹) and
	// Sigma its 1σ; ObsMinusCalc is in the peak's unit.
	Calc, Sigma  float64
	ObsMinusCalc float64
	// Unc is the 1σ written to lines.csv, in the peak's unit; UncSource says
	// where it came from: "peak list", "default" or "fit scatter".
	Unc       float64
	UncSource string
	// Intensity is the predicted relative intensity of the transition.
	Intensity float64
	// Confidence (0…1) combines the band lock's margin, how clearly the
	// peak beats the other candidates (position and intensity), the
	// combination-difference checks and the share of a blended peak the
	// line is predicted to carry. It is a score for ranking, not a
	// calibrated probability.
	Confidence float64
	// Blend lists the other predicted transitions that claim the same peak
	// within their tolerance but got no peak of their own.
	Blend []Transition
	// CDChecked and CDPassed count the combination differences the line
	// takes part in and those that agreed.
	CDChecked, CDPassed int
}

// Leftover is a peak without an assignment.
type Leftover struct {
	Peak *Peak
	// Nearest is the nearest predicted line of a locked band (nil when no
	// band was locked); Distance is observed − predicted in the peak's unit.
	Nearest  *Prediction
	Distance float64
	// Dropped is the transition that was assigned to this peak and dropped
	// by a check (nil for a peak that no prediction claimed), Reason why.
	Dropped *Transition
	Reason  string
}

// CDStats counts combination differences of one band.
type CDStats struct {
	Lower, LowerFailed int // lower-state differences (lines sharing their upper level)
	Upper, UpperFailed int // upper-state differences (lines sharing their lower level)
	// Cross counts level differences also measured in another band, and
	// CrossFailed those that disagree.
	Cross, CrossFailed int
	// RMS is the rms of (observed − calculated)/σ over the band's differences.
	RMS float64
}

// BandResult reports one band of one isotopologue.
type BandResult struct {
	Species  string
	VUp, VLo int
	Lock     Lock
	Locked   bool
	// Lines assigned; JMin and JMax of the lower level per branch letter.
	Lines      int
	Branches   map[string][2]int
	RMS        float64 // rms of o−c of the band's lines, cm⁻¹
	RMSNorm    float64 // rms of (o−c)/unc
	CD         CDStats
	Dropped    []Leftover
	Intensity  float64 // ln of the observed/predicted intensity scale (NaN without intensities)
	Note       string
	MaxPredict float64 // strongest predicted relative intensity
}

// Label returns "12C16O 1-0".
func (b BandResult) Label() string { return fmt.Sprintf("%s %d-%d", b.Species, b.VUp, b.VLo) }

// Result is the outcome of an assignment.
type Result struct {
	Lines      []Assignment // sorted by species, band, branch, J″
	Unassigned []Leftover   // peaks without assignment, in peak-list order, dropped lines included
	Bands      []BandResult
	// Fit is the final internal fit (term-values model, see package doc) of
	// exactly Lines; FitProblem its lines and model.
	Fit        *fit.Result
	FitProblem fit.Problem
	// IntensityScatter is the σ of ln(observed/predicted intensity) after
	// each band's scale (NaN without intensities).
	IntensityScatter float64
	Iterations       int
	Warnings         []string
	// UncEstimated is set when no peak had an uncertainty and none was given:
	// the lines' unc is the rms of the internal fit's residuals.
	UncEstimated bool
	Settings     Settings
	Problem      Problem
}

// LockError reports that no band could be locked; its kind is
// failure.CannotCompute (exit code 2).
type LockError struct{ Bands []BandResult }

func (e *LockError) Error() string {
	var b strings.Builder
	b.WriteString("assign: no band could be locked onto the peaks")
	for _, r := range e.Bands {
		fmt.Fprintf(&b, "\n  %s: %s", r.Label(), r.Lock.Reason)
	}
	return b.String()
}

// FailureKind returns failure.CannotCompute.
func (e *LockError) FailureKind() failure.Kind { return failure.CannotCompute }

// run is the state of one assignment.
type run struct {
	p Problem
	s Settings

	pos     []float64 // sorted peak positions, cm⁻¹
	unc     []float64 // stated or default 1σ, cm⁻¹
	lnI     []float64 // ln intensity, NaN when unknown
	peakOf  []int     // sorted index → index in p.Peaks.Peaks
	uSource []string
	lo, hi  float64
	uMed    float64
	uncEst  bool
	// scaleGuess is a rough ln(I_obs/I_pred) from the strongest peaks and the
	// strongest predicted lines (NaN without intensities).
	scaleGuess   float64
	speciesScale map[string]float64 // ln(I_obs/I_pred) of each species with a locked band

	species []*spState
	bands   []*band

	assigned map[Transition]int // transition → sorted peak index
	bans     map[banKey]string
	dropped  map[int]droppedInfo // sorted peak index → why its assignment was dropped

	fit      *fit.Result
	fitProb  fit.Problem
	fp       *fitPredictor
	sFit     float64 // dimensionless standard deviation of the last fit (≥ 1 for tolerances)
	sigI     float64 // intensity scatter (ln units)
	last     *matching
	cdBand   map[*band]*CDStats
	cdLine   map[Transition][2]int // checked, passed
	iter     int
	warnings []string
}

type banKey struct {
	t    Transition
	peak int
}

type droppedInfo struct {
	t      Transition
	reason string
}

type spState struct {
	sp StartSpecies
	im *IntensityModel
}

// branch holds the predictions of one branch of a band, indexed by J″.
type branch struct {
	dJ         int
	jmin, jmax int
	start      []float64 // start-constant position, cm⁻¹ (index J″)
	inten      []float64 // relative intensity
	elo        []float64 // lower-level energy above the lowest level, cm⁻¹
	group      int       // intensity group: 1 for the Raman Q branch, else 0
	jhi        int       // highest J″ assigned so far (−1: none)
}

type band struct {
	id       int
	sp       *spState
	vu, vl   int
	branches []*branch
	bbar     float64 // mean rotational constant of the two levels, cm⁻¹
	origin   float64 // start-constant origin E(v′,0) − E(v″,0), cm⁻¹
	lnPFirst float64 // ln of the predicted intensity of the line next to the gap
	pmax     float64
	lock     Lock
	locked   bool
	jcore    int // highest J″ of the lock lines
	// intensity scale ln(I_obs/I_pred) = g + h·E″ per group
	g, h [2]float64
	hasG [2]bool
	// lockPos holds positions predicted by a fit of the lines already
	// assigned (nil: lock from the starting constants), lockOrigin the
	// origin from the same fit.
	lockPos       map[*branch][]float64
	lockSig       map[*branch][]float64
	lockOrigin    float64
	lockSigOrigin float64
	tries         int
}

func (b *band) label() string { return fmt.Sprintf("%s %d-%d", b.sp.sp.Label, b.vu, b.vl) }

// Assign assigns the peaks of p to transitions of the bands of p, starting
// from the constants of p.Start:
//
//  1. predict positions and relative intensities of every band;
//  2. lock each band, strongest first, onto the peaks not taken by a
//     stronger band (see Lock); a band that cannot be locked is reported with
//     the best offset found and its score, and left out;
//  3. fit the locked lines (term-values model per isotopologue, package fit),
//     predict every band again with σ from the fit's covariance, extend
//     each branch to higher J, and match peaks to predictions one to one by
//     a minimum-cost assignment on the sparse graph of candidates within
//     tolerance (Hungarian algorithm per connected component; cost z² of the
//     position plus the squared intensity deviation); repeat until the
//     assignment no longer changes;
//  4. check every combination difference (lines sharing a level) against the
//     fit and across bands; lines that break them, and lines the internal
//     fit rejects, are dropped with the reason and the loop resumes.
//
// An error means no honest result exists: bad settings, or no band locked
// (*LockError).
func Assign(p Problem, s Settings) (*Result, error) {
	r, err := newRun(p, s)
	if err != nil {
		return nil, err
	}
	if err := r.lockAll(); err != nil {
		return nil, err
	}
	return r.result()
}

func newRun(p Problem, s Settings) (*run, error) {
	if p.Peaks == nil || len(p.Peaks.Peaks) == 0 {
		return nil, errors.New("assign: no peaks")
	}
	if p.Start == nil || len(p.Start.Species) == 0 {
		return nil, errors.New("assign: no species to look for")
	}
	if len(p.Bands) == 0 {
		return nil, errors.New("assign: no bands given (e.g. 1-0,2-1)")
	}
	if p.Temperature == 0 {
		p.Temperature = 296
	}
	if !(p.Temperature > 0) || math.IsInf(p.Temperature, 0) {
		return nil, fmt.Errorf("assign: temperature must be > 0 K, got %g", p.Temperature)
	}
	if s.Tolerance < 0 || math.IsNaN(s.Tolerance) || s.DefaultUnc < 0 || math.IsNaN(s.DefaultUnc) {
		return nil, errors.New("assign: tolerance and default uncertainty must be ≥ 0")
	}
	r := &run{p: p, s: s, speciesScale: map[string]float64{}, assigned: map[Transition]int{}, bans: map[banKey]string{}, dropped: map[int]droppedInfo{}, sFit: 1, sigI: 0.3}

	// Peaks, sorted by wavenumber.
	pk := p.Peaks.Peaks
	idx := make([]int, len(pk))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return pk[idx[a]].Wavenumber() < pk[idx[b]].Wavenumber() })
	r.peakOf = idx
	n := len(pk)
	r.pos, r.unc, r.lnI, r.uSource = make([]float64, n), make([]float64, n), make([]float64, n), make([]string, n)
	var given []float64
	for k, i := range idx {
		r.pos[k] = pk[i].Wavenumber()
		if pk[i].Unc > 0 {
			given = append(given, pk[i].UncWavenumber())
		}
		r.lnI[k] = math.NaN()
		if pk[i].Intensity > 0 {
			r.lnI[k] = math.Log(pk[i].Intensity)
		}
	}
	def := s.DefaultUnc
	src := "default"
	if def == 0 && len(given) > 0 {
		def = median(append([]float64(nil), given...))
		src = "median of the peak list"
	}
	if def == 0 {
		// No uncertainty anywhere: unit weights, estimated from the scatter.
		r.uncEst = true
		def = 1e-3
		src = "fit scatter"
	}
	for k, i := range idx {
		if pk[i].Unc > 0 {
			r.unc[k] = pk[i].UncWavenumber()
			r.uSource[k] = "peak list"
		} else {
			r.unc[k] = def
			r.uSource[k] = src
		}
	}
	r.lo, r.hi = r.pos[0], r.pos[n-1]
	if !r.uncEst {
		r.uMed = median(append([]float64(nil), r.unc...))
	}

	// Species and bands.
	for _, sp := range p.Start.Species {
		if sp.Iso.Homonuclear() && p.Spectrum != Raman {
			return nil, fmt.Errorf("assign: %s is homonuclear: it has no electric-dipole %s spectrum; use --spectrum raman", sp.Label, map[Spectrum]string{Infrared: "infrared", Rotation: "rotational"}[p.Spectrum])
		}
		im, err := NewIntensityModel(p.Spectrum, p.Temperature, sp)
		if err != nil {
			return nil, err
		}
		r.species = append(r.species, &spState{sp: sp, im: im})
	}
	seen := map[linelist.Band]bool{}
	for _, spst := range r.species {
		for _, bs := range p.Bands {
			if seen[bs] && spst == r.species[0] {
				return nil, fmt.Errorf("assign: band %d-%d is given twice", bs.VUp, bs.VLo)
			}
			seen[bs] = true
			b, err := r.newBand(spst, bs)
			if err != nil {
				return nil, err
			}
			b.id = len(r.bands)
			r.bands = append(r.bands, b)
		}
	}
	r.scaleGuess = r.guessScale()
	return r, nil
}

// guessScale compares the strongest peaks with the strongest predicted lines
// of all bands: the median ln intensity of the top k of each, k = 10 or a
// tenth of the peaks, whichever is smaller.
func (r *run) guessScale() float64 {
	var obs, pre []float64
	for _, x := range r.lnI {
		if !math.IsNaN(x) {
			obs = append(obs, x)
		}
	}
	if len(obs) < 5 {
		return math.NaN()
	}
	for _, b := range r.bands {
		for _, br := range b.branches {
			for j := br.jmin; j <= br.jmax; j++ {
				if x := br.start[j]; br.inten[j] > 0 && x >= r.lo && x <= r.hi {
					pre = append(pre, math.Log(br.inten[j]))
				}
			}
		}
	}
	if len(pre) == 0 {
		return math.NaN()
	}
	k := min(10, max(1, len(obs)/10), len(pre))
	sort.Sort(sort.Reverse(sort.Float64Slice(obs)))
	sort.Sort(sort.Reverse(sort.Float64Slice(pre)))
	return median(obs[:k]) - median(pre[:k])
}

// newBand predicts the lines of a band from the starting constants.
func (r *run) newBand(sp *spState, bs linelist.Band) (*band, error) {
	dJs, err := r.p.Spectrum.DeltaJ(bs)
	if err != nil {
		return nil, err
	}
	m := sp.sp.Constants.Model
	if !m.HasLevel(sp.sp.Index, bs.VUp) || !m.HasLevel(sp.sp.Index, bs.VLo) {
		return nil, fmt.Errorf("assign: band %d-%d of %s: the starting constants have no parameters for one of its levels", bs.VUp, bs.VLo, sp.sp.Label)
	}
	b := &band{sp: sp, vu: bs.VUp, vl: bs.VLo, lnPFirst: math.Inf(-1)}
	E := func(v, J int) float64 { return sp.sp.Constants.Energy(sp.sp.Index, v, J, nil) }
	b.origin = E(bs.VUp, 0) - E(bs.VLo, 0)
	b.bbar = ((E(bs.VUp, 1) - E(bs.VUp, 0)) + (E(bs.VLo, 1) - E(bs.VLo, 0))) / 4
	if !(b.bbar > 0) {
		return nil, fmt.Errorf("assign: band %d-%d of %s: the starting constants give no positive rotational constant", bs.VUp, bs.VLo, sp.sp.Label)
	}
	const jLimit = 400
	for _, dJ := range dJs {
		br := &branch{dJ: dJ, jhi: -1}
		if r.p.Spectrum == Raman && dJ == 0 {
			br.group = 1
		}
		br.jmin = max(0, -dJ)
		if dJ == 0 {
			br.jmin = 1 // Q(0) has no strength (and is no line in pure rotation)
		}
		pmax := 0.0
		prevU, prevL := math.Inf(-1), math.Inf(-1)
		for J := 0; J <= jLimit; J++ {
			if J < br.jmin {
				br.start = append(br.start, math.NaN())
				br.inten = append(br.inten, 0)
				br.elo = append(br.elo, math.NaN())
				continue
			}
			eu, el := E(bs.VUp, J+dJ), E(bs.VLo, J)
			// The expansion in J(J+1) stops describing the molecule where the
			// rotational energy stops growing.
			if eu <= prevU || el <= prevL {
				break
			}
			prevU, prevL = eu, el
			nu := eu - el
			t := Transition{Species: sp.sp.Label, VUp: bs.VUp, JUp: J + dJ, VLo: bs.VLo, JLo: J}
			p := sp.im.RelativeIntensity(t, nu)
			if !(nu > 0) {
				break
			}
			br.start = append(br.start, nu)
			br.inten = append(br.inten, p)
			br.elo = append(br.elo, sp.im.LowerEnergy(bs.VLo, J))
			pmax = math.Max(pmax, p)
			if J > br.jmin+5 && p < 1e-9*pmax {
				break
			}
		}
		br.jmax = len(br.start) - 1
		if br.jmax < br.jmin {
			continue
		}
		b.pmax = math.Max(b.pmax, pmax)
		b.branches = append(b.branches, br)
		// The line next to the infrared gap: R(0).
		if dJ == 1 && br.jmin == 0 {
			b.lnPFirst = math.Log(br.inten[0])
		}
	}
	if len(b.branches) == 0 {
		return nil, fmt.Errorf("assign: band %d-%d of %s: no line can be predicted", bs.VUp, bs.VLo, sp.sp.Label)
	}
	return b, nil
}

// lockAll locks the bands, strongest first. The first band of a molecule is
// locked from the starting constants; every later one from a joint Dunham
// fit of the lines already assigned in that molecule (see refreshPrediction),
// after the predict–match–fit loop has taken the locked bands as far as the
// data go. Bands that fail are tried once more at the end.
func (r *run) lockAll() error {
	order := make([]*band, len(r.bands))
	copy(order, r.bands)
	sort.SliceStable(order, func(i, j int) bool { return order[i].pmax > order[j].pmax })
	globalScale := math.NaN()
	anyLocked := false
	for pass := 0; pass < 2; pass++ {
		progress := false
		for _, b := range order {
			if b.locked || (pass > 0 && !anyLocked) {
				continue
			}
			if err := r.refreshPrediction(b); err != nil {
				return err
			}
			taken := make([]bool, len(r.pos))
			for _, k := range r.assigned {
				taken[k] = true
			}
			L, ms := r.lockBand(b, taken, globalScale, true)
			if !L.OK && b.lockPos != nil {
				if L2, ms2 := r.lockBand(b, taken, globalScale, false); L2.OK || L2.Score > L.Score {
					L, ms = L2, ms2
				}
			}
			b.tries++
			if !L.OK {
				if b.tries == 1 || L.Score >= b.lock.Score || b.lockPos != nil {
					b.lock = L
				}
				continue
			}
			b.lock = L
			b.locked, anyLocked, progress = true, true, true
			var ells []float64
			for _, m := range ms {
				t := Transition{Species: b.sp.sp.Label, VUp: b.vu, JUp: m.line.jlo + m.line.br.dJ, VLo: b.vl, JLo: m.line.jlo}
				r.assigned[t] = m.peak
				b.jcore = max(b.jcore, m.line.jlo)
				m.line.br.jhi = max(m.line.br.jhi, m.line.jlo)
				if m.line.group == 0 && !math.IsNaN(r.lnI[m.peak]) {
					ells = append(ells, r.lnI[m.peak]-m.line.lnP)
				}
			}
			if len(ells) > 0 && abs(b.vu-b.vl) <= 1 {
				g := median(ells)
				if math.IsNaN(globalScale) {
					globalScale = g
				}
				if _, ok := r.speciesScale[b.sp.sp.Label]; !ok {
					r.speciesScale[b.sp.sp.Label] = g
				}
			}
			r.updateIntensityScales()
			if err := r.loop(); err != nil {
				return err
			}
		}
		if !progress {
			break
		}
	}
	if !anyLocked {
		var brs []BandResult
		for _, b := range r.bands {
			brs = append(brs, BandResult{Species: b.sp.sp.Label, VUp: b.vu, VLo: b.vl, Lock: b.lock})
		}
		return &LockError{Bands: brs}
	}
	for _, b := range r.bands {
		if !b.locked {
			r.warnings = append(r.warnings, fmt.Sprintf("band %s not locked: %s", b.label(), b.lock.Reason))
		}
	}
	return nil
}

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
		Position: pk.Position, Unc: fromCm(r.unc[k], pk.Unit), Unit: pk.Unit, Branch: t.Branch()}
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
// banned; it reports whether any were.
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
			if errors.As(err, &ue) && attempt < 4 {
				added := false
				for _, g := range ue.Groups {
					for _, id := range g {
						if (strings.HasPrefix(id, "D_") || strings.HasPrefix(id, "H_") || strings.HasPrefix(id, "L_")) && !extraFix[id] {
							extraFix[id] = true
							added = true
						}
					}
				}
				if added {
					continue
				}
			}
			if ce := (*fit.CannotFitError)(nil); errors.As(err, &ce) || errors.As(err, &ue) {
				return false, fmt.Errorf("assign: the internal fit of the %d assigned lines failed: %w", len(lines), err)
			}
			return false, fmt.Errorf("assign: internal fit: %w", err)
		}
		// Hold centrifugal terms the data do not determine to 3σ at their
		// starting values (a spectroscopist floats a term only when it is
		// significant), and fit again.
		pruned := false
		for _, j := range res.Free {
			q := res.Params[j]
			if (q.Name == "H" || q.Name == "L" || q.Name == "D") && q.Sigma > 0 && math.Abs(q.Value) < 3*q.Sigma && !extraFix[q.ID()] {
				extraFix[q.ID()] = true
				pruned = true
			}
		}
		if pruned && attempt < 8 {
			continue
		}
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
		r.fit, r.fitProb = res, prob
		r.fp = newFitPredictor(res)
		// The scale of the stated uncertainties, robust against a minority of
		// bad lines: 1.4826 × the median |o−c|/unc (never below 1 when the
		// peaks give uncertainties).
		srob := 1.4826 * median(norms)
		switch {
		case r.uncEst && srob > 0:
			r.sFit = srob
		case srob > 1:
			r.sFit = srob
		default:
			r.sFit = 1
		}
		return rejected, nil
	}
}

// drop removes an assignment and bans the pair.
func (r *run) drop(t Transition, k int, reason string) {
	delete(r.assigned, t)
	r.bans[banKey{t, k}] = reason
	r.dropped[k] = droppedInfo{t: t, reason: reason}
}

// loop runs fit → predict → match until the assignment is stable, then the
// combination-difference checks, and again while they drop lines.
func (r *run) loop() error {
	for round := 0; round < 6; round++ {
		stable := false
		for it := 0; it < r.s.maxIter(); it++ {
			r.iter++
			rejected, err := r.doFit()
			if err != nil {
				return err
			}
			if len(r.assigned) == 0 {
				return errors.New("assign: every assigned line was rejected by the internal fit")
			}
			mt := r.matchAll()
			changed := !sameAssignment(r.assigned, mt.assigned)
			r.assigned = mt.assigned
			r.last = mt
			r.updateIntensityScales()
			if !changed && !rejected {
				stable = true
				break
			}
		}
		if !stable {
			r.warnings = append(r.warnings, fmt.Sprintf("the assignment did not settle within %d iterations; the last one is reported", r.s.maxIter()))
		}
		// Re-fit the final assignment (it may differ from the last fit).
		if _, err := r.doFit(); err != nil {
			return err
		}
		flagged := r.checkCombinationDifferences()
		if flagged == 0 && stable && r.fitMatchesAssignment() {
			return nil
		}
		if flagged == 0 && !stable {
			return nil
		}
	}
	return nil
}

func (r *run) fitMatchesAssignment() bool {
	if r.fit == nil || len(r.fitProb.Lines) != len(r.assigned) {
		return false
	}
	for _, lr := range r.fit.Lines {
		if !lr.Used {
			return false
		}
	}
	return true
}

func sameAssignment(a, b map[Transition]int) bool {
	if len(a) != len(b) {
		return false
	}
	for t, k := range a {
		if k2, ok := b[t]; !ok || k2 != k {
			return false
		}
	}
	return true
}

// updateIntensityScales estimates, for every band and intensity group, the
// scale of observed to predicted intensity, ln(I_obs/I_pred) = g + h·E″ (h
// absorbs an error of the stated temperature), by least squares with two
// passes of 3×MAD trimming, and the pooled scatter σ_I of the residuals.
func (r *run) updateIntensityScales() {
	groups := map[[2]int][]ept{}
	for t, k := range r.assigned {
		if math.IsNaN(r.lnI[k]) {
			continue
		}
		b, br := r.bandOf(t)
		if b == nil {
			continue
		}
		P := br.inten[t.JLo]
		if !(P > 0) {
			continue
		}
		key := [2]int{b.id, br.group}
		groups[key] = append(groups[key], ept{br.elo[t.JLo], r.lnI[k] - math.Log(P)})
	}
	var allRes []float64
	for _, b := range r.bands {
		for g := 0; g < 2; g++ {
			ps := groups[[2]int{b.id, g}]
			if len(ps) == 0 {
				b.hasG[g] = false
				continue
			}
			keep := ps
			var g0, h0 float64
			for pass := 0; pass < 3; pass++ {
				g0, h0 = lineFit(keep, len(keep) >= 6)
				res := make([]float64, len(keep))
				for i, p := range keep {
					res[i] = math.Abs(p.y - g0 - h0*p.e)
				}
				mad := 1.4826 * median(append([]float64(nil), res...))
				if pass == 2 || mad == 0 {
					break
				}
				var nk []ept
				for i, p := range keep {
					if res[i] <= 3*mad {
						nk = append(nk, p)
					}
				}
				if len(nk) < 3 {
					break
				}
				keep = nk
			}
			b.g[g], b.h[g], b.hasG[g] = g0, h0, true
			for _, p := range ps {
				allRes = append(allRes, math.Abs(p.y-g0-h0*p.e))
			}
		}
	}
	if len(allRes) >= 8 {
		r.sigI = math.Max(0.1, 1.4826*median(allRes))
	}
}

// ept is a point (lower-state energy, ln intensity ratio).
type ept struct{ e, y float64 }

// lineFit fits y = g + h·e by least squares (h = 0 unless withSlope).
func lineFit(ps []ept, withSlope bool) (float64, float64) {
	n := float64(len(ps))
	var se, sy, see, sey float64
	for _, p := range ps {
		se += p.e
		sy += p.y
		see += p.e * p.e
		sey += p.e * p.y
	}
	if !withSlope {
		return sy / n, 0
	}
	d := n*see - se*se
	if d <= 1e-12*n*see || d == 0 {
		return sy / n, 0
	}
	h := (n*sey - se*sy) / d
	return (sy - h*se) / n, h
}

// bandOf returns the band and branch of a transition.
func (r *run) bandOf(t Transition) (*band, *branch) {
	for _, b := range r.bands {
		if b.sp.sp.Label != t.Species || b.vu != t.VUp || b.vl != t.VLo {
			continue
		}
		for _, br := range b.branches {
			if br.dJ == t.DeltaJ() && t.JLo >= br.jmin && t.JLo <= br.jmax {
				return b, br
			}
		}
	}
	return nil, nil
}
