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
	// ChanceScore and ChanceSigma are the mean and standard deviation of the
	// raw score at random hypotheses (what the peaks give by chance), and
	// NeededScore the least score of a significant lock (see chanceScore).
	ChanceScore, ChanceSigma, NeededScore float64
	RMS                                   float64 // rms of the lock residuals after refinement, cm⁻¹
	OK                                    bool
	Reason                                string // why the band could not be locked
}

// Lock acceptance thresholds (see the tuning numbers below for what
// "measured" means).
const (
	// minLockScore is the least raw score of an accepted lock: the share of
	// the lock set explained. Measured: 0.25 assigns 78 % of hard (9 % of
	// its assignments wrong) and makes four runs of hard and the benchmark
	// end in an error; 0.5 makes hard clean but leaves 24 of co's 96 bands
	// and 4 of the benchmark's 12 unlocked.
	minLockScore = 0.35
	// minLockLines is the least number of lock lines of an accepted lock.
	// Reasoned: one more than the unknowns of the refinement (a, δ, ε).
	// Measured: 6 changes nothing.
	minLockLines = 4
	// minLockMargin is the least margin of an accepted lock: below it two
	// patterns explain the peaks equally well. Measured: 0.005 or 0.08
	// changes nothing.
	minLockMargin = 0.02
	// fullMargin is the margin from which the lock is taken as certain in
	// an assignment's confidence (Assignment.Confidence); it does not decide
	// the lock. Reasoned: for a lock that explains most of its set, a
	// margin of a tenth is the weight of one lock line in a set of 10 and of
	// about five in a set of 60.
	fullMargin = 0.10
)

// The tuning numbers of the lock search follow. Each doc comment says what
// the number is and why it has its value, reasoned or measured. Measured
// means changed alone, with the effect on BenchmarkLockSets ("co": 24 seeds
// of the CO test scenario; "hard": the same at 1200 K with the 2-0 overtone
// and starting constants twice as far off) and on BenchmarkAssign20000Peaks
// ("the benchmark"). With the values here and the chance test of
// significance.go, co assigns 99.98 % of its lines with none wrong, hard
// 96.3 % with 0.56 % of its assignments wrong (93.7 % and 2.2 % before the
// chance test refused its wrong locks), the benchmark 99.25 % with 0.12 % wrong (before refineOutlierSigmas was
// lowered to 3 its weakest band, 12C18O 3-2, locked onto the wrong peaks:
// 92.1 %). lockIntensitySigma 0.2 makes hard clean (99.97 %, none wrong)
// and changes nothing else, but without a reason beyond that set (picked
// intensities scatter by a tenth in the synthetic sets, by more in real
// spectra), so it is not taken. The N2 Raman and HCl
// rotation scenarios of the tests assign every line under every change
// tried. "Ends in an error" means that Assign refused the whole problem,
// mostly because the internal fit of wrongly locked lines could not be
// solved. The line spacing is 2B̄, B̄ the mean rotational constant of the
// band's two levels.

// Tuning of the lock set and its windows.
const (
	// lockWindowShare is the base half-width of a lock line's window as a
	// share of the line spacing (at least windowPeakSigmas peak σ and the
	// tolerance of the settings). Reasoned: well inside half a spacing, so
	// that a pattern shifted by one line cannot also take the peaks.
	// Measured: 1/16 makes hard clean (99.97 %, none wrong) but leaves 11 of
	// the benchmark's 12 bands unlocked; 3/16 assigns 86 % of hard (two runs
	// end in an error) and 67 % of the benchmark; 1/4 assigns 74 % of hard
	// (7.8 % wrong, two runs end in an error) and the benchmark ends in an
	// error.
	lockWindowShare = 0.125
	// windowPeakSigmas is the least half-width of a window in units of the
	// median peak σ. Reasoned: ±4σ holds a line's own position noise in all
	// but 6 of 100 000 cases (normal distribution).
	windowPeakSigmas = 4
	// The lock set reaches J″ = lockSetJSpan·J″peak + lockSetJPad, J″peak
	// the J″ of the band's strongest line, but at least minLockSetJ and at
	// most maxLockSetJ. Reasoned: in a Boltzmann band, J″ = 2J″peak is where
	// the lines have fallen to between a quarter and a half of the
	// strongest, so the set holds the strong lines on both sides of the
	// maximum, while the errors of the starting constants, which grow as
	// J(J+1), stay small; at J″ = 30 a 3 % error of αe (the largest the CO
	// test scenario draws) moves a CO line by about one eighth of a
	// spacing, the base window; minLockSetJ lets a band with its maximum at
	// J″ ≤ 2 still give lockSetSize lines. Measured: span 1, or
	// maxLockSetJ = 20, makes hard clean but leaves 4 of the benchmark's 12
	// bands unlocked (67 % assigned); span 3 leaves 8 of co's 96 bands
	// unlocked; pad 0 makes hard clean except one run that ends in an
	// error; maxLockSetJ = 45 makes one run of hard and the benchmark end in
	// an error; pad 6 and minLockSetJ 4 or 12 change nothing.
	lockSetJSpan             = 2
	lockSetJPad              = 3
	minLockSetJ, maxLockSetJ = 8, 30
	// lockSetSize is the number of lock lines wanted: the lock set takes the
	// lines of predicted intensity at least the first of lockSetFloors times
	// the band's strongest, and lowers the floor while it has fewer.
	// Reasoned: 8 lines leave 5 spare over the three unknowns of the
	// refinement. Measured: 4 or 16 change nothing.
	lockSetSize = 8
	// crowdedWindowShare caps a window at this share of the distance to the
	// nearest other predicted line of the band. Reasoned: just under one
	// half, so that the windows of two neighbours (in a Q branch, at a band
	// head) do not overlap. Measured: 0.3 assigns 97.0 % of hard (0.6 %
	// wrong) and changes nothing else.
	crowdedWindowShare = 0.45
	// minWindowShare and minWindowPeakSigmas are the floor of a crowded
	// window: a share of the base half-width, and peak σ. Reasoned: a
	// window never narrower than the peaks' own noise. Measured: a floor of
	// half the base window makes one run of hard end in an error.
	minWindowShare      = 0.125
	minWindowPeakSigmas = 3
	// narrowWindowSigmas multiplies k·σ of a prediction from a fit (k =
	// Settings.Sigmas) into the half-width of its narrow window, at least
	// narrowWindowShare of a line spacing and windowPeakSigmas peak σ.
	// Reasoned: the σ of such a prediction leaves out the errors of the
	// mass scaling and of the terms held at their starting values.
	// Measured: narrowWindowSigmas 1 or 10 changes nothing;
	// narrowWindowShare 0.005 locked the benchmark's 12C18O 3-2 right while
	// refineOutlierSigmas was 4 (99.2 % assigned), 0.08 leaves 8 of its 12 bands unlocked.
	narrowWindowSigmas = 3
	narrowWindowShare  = 0.02
)

// lockSetFloors are the successive floors of predicted intensity, relative to
// the band's strongest line, of the lines taken into the lock set (see
// lockSetSize). Reasoned: a band's lines below a few per cent of its
// strongest are the first to be lost in the noise or missing. Measured:
// lower floors (1 % then 0.1 %, or none) change nothing; 20 % then 2 % makes
// two runs of hard end in an error.
var lockSetFloors = [...]float64{0.05, 0.005, 0}

// Tuning of the hypothesis grid and its score.
const (
	// offsetStepsPerWindow is the number of grid steps of the offset a per
	// base window half-width. Reasoned: the best grid point then lies
	// within an eighth of a window of the true offset, where a line keeps
	// a closeness weight of exp(−½·(1/4)²) = 0.97. Measured: 2 changes
	// nothing of note; 8 makes one run of hard end in an error.
	offsetStepsPerWindow = 4
	// narrowOffsetShare is the least half-range of the offset search from a
	// fitted prediction, as a share of the line spacing (besides
	// narrowWindowSigmas times k·σ of the predicted origin). Reasoned: it
	// covers the errors of the mass scaling that the fit's σ leaves out.
	// Measured: 0.03 or 0.3 changes nothing.
	narrowOffsetShare = 0.1
	// The σ of the Gaussian prior on δ is the half-range of the δ search
	// divided by startDeltaBPriorDiv for starting constants, by
	// fittedDeltaBPriorDiv for a prediction from a fit. Reasoned: a wrong-J
	// pattern needs a δ/B near αe/Be, which the prior should disfavour (see
	// Settings.LockScale), and a fit of assigned lines knows B far better
	// than a start. Measured: startDeltaBPriorDiv 1 assigns 89 % of hard
	// and makes one run end in an error, 4 changes nothing;
	// fittedDeltaBPriorDiv 2 or 30 changes nothing.
	startDeltaBPriorDiv  = 2
	fittedDeltaBPriorDiv = 10
	// deltaBStepShare is the largest move of a lock line between two grid
	// steps of δ, as a share of the base window half-width; maxDeltaBSteps
	// bounds the steps on either side of δ = 0 (the cost of the search).
	// Reasoned as offsetStepsPerWindow, for the lines of the largest ΔJ·J.
	// Measured: deltaBStepShare 0.25 or 1 and maxDeltaBSteps 10 change
	// nothing.
	deltaBStepShare = 0.5
	maxDeltaBSteps  = 50
	// lockIntensitySigma is the σ of ln I of a lock line around the common
	// scale of its band. Reasoned: the scatter of picked intensities (a
	// tenth in the test scenarios) plus the error of predicted intensities
	// from starting constants and a stated temperature. Measured: 0.2 makes
	// hard clean (99.97 %, none wrong) and changes nothing else; 0.7 makes
	// four runs of hard and the benchmark end in an error.
	lockIntensitySigma = 0.35
	// A peak at the predicted origin of an infrared band counts against a
	// hypothesis when it is at least 1/originIntensityFactor of the
	// intensity predicted for R(0), the line next to the gap, on the band's
	// scale. originPenalty is the penalty of such a peak, in lock lines;
	// blindOriginPenalty that of any peak there when intensities are not
	// known. Reasoned: the gap is what tells the true pattern from the one
	// shifted by one line, and a peak as strong as the lines beside it
	// should outweigh a lock line; without intensities a peak there may be
	// another band's line. Measured: originPenalty 0 or 1 makes the
	// benchmark end in an error; originIntensityFactor 10 makes one run of
	// hard end in an error, 1 changes nothing.
	originIntensityFactor = 3
	originPenalty         = 2
	blindOriginPenalty    = 1
	// offsetTieBreak weighs the score by 1 − offsetTieBreak·(a/spacing)², a
	// preference for small offsets. Reasoned: at the edge of the default
	// search (1.25 spacings) it weighs 0.3 %, less than one lock line of a
	// set of 300, so it decides exact ties only. Measured: 0 or 0.02
	// changes nothing.
	offsetTieBreak = 0.002
	// altShiftWindows is the median move of the lock lines, in windows, from
	// which a hypothesis counts as an alternative to the best one. Reasoned:
	// a hypothesis that leaves most lines inside their windows is the same
	// pattern. Measured: 2 changes nothing.
	altShiftWindows = 1
)

// scaleExpectation is what a band's lock expects of its intensity scale
// ln(I_obs/I_pred): Factor is the factor by which the band's scale may
// differ from the reference scale (the σ of its prior is ln Factor), and
// PickSigma the σ of ln I with which a window chooses among its peaks.
type scaleExpectation struct{ Factor, PickSigma float64 }

// The intensity expectations of a band, by where the reference scale comes
// from. Reasoned: a band of a species already locked shares its abundance
// and transition moment; bands of other species differ by their abundance,
// which a start file may give loosely; the guess from the strongest peaks is
// rough. Measured: the other-species expectation as tight as the same-species
// one makes the benchmark end in an error; the same-species one as loose as
// the other-species one assigns 93.2 % of hard (1.6 % wrong); the guess as
// loose as the other-species one assigns 96.2 % of hard but makes one run end
// in an error, as tight as the same-species one 93.9 % (2.4 % wrong).
var (
	// a band of the same species is locked already
	sameSpeciesScale = scaleExpectation{Factor: 5, PickSigma: 1}
	// only bands of other species are locked
	otherSpeciesScale = scaleExpectation{Factor: 30, PickSigma: 2.5}
	// no band is locked: the rough scale from the strongest peaks
	guessedScale = scaleExpectation{Factor: 10, PickSigma: 1.5}
)

// Tuning of the refinement.
const (
	// maxRefineIter bounds the refinement iterations (gather the lock lines,
	// fit, shrink the windows); refinePasses bounds the outlier passes of
	// each fit. Reasoned: limits that are not reached in practice. Measured:
	// 105 of 107 locks in the test scenarios and the benchmark stop at the
	// second iteration, 2 at the third; maxRefineIter 2 changes nothing.
	maxRefineIter = 8
	refinePasses  = 3
	// minEpsilonLines is the number of matched lock lines from which ε is
	// fitted; an infrared band also needs minEpsilonSide lines in each of
	// its P and R branches. Reasoned: ε is told from δ only by lines on
	// both sides of the origin, spread in J. Measured: never fitting ε
	// changes hard by 8 lines and nothing else.
	minEpsilonLines = 8
	minEpsilonSide  = 3
	// refineOutlierSigmas sets aside, in each pass, the lines farther from
	// the fitted pattern than this many robust σ (or their peak's σ).
	// Reasoned: a line set aside here is not lost — it is matched later with
	// its own tolerance — so the cut can be tight and keep wrong peaks out of
	// the pattern that seeds the first fit; a normal residual lies beyond 3σ
	// about once in 370. Measured: 3 (from 4) locks the benchmark's
	// 12C18O 3-2 right (92.1 → 99.25 % assigned, wrong 0.13 → 0.12 %) and
	// raises seed 4 of its scenario from 67.0 to 75.9 %, with co, hard, the
	// other seeds, the synthetic tests and the random-peak test unchanged;
	// 6 loses one line of 12C18O 3-2.
	refineOutlierSigmas = 3
	// refineWindowScatters is the half-width, in robust σ of the refined
	// pattern (at least windowPeakSigmas peak σ), the windows shrink to;
	// minWindowShrink is the least factor they shrink by. Reasoned: the
	// windows close in on the lines of the pattern while keeping them all.
	// Measured: 3 locked the benchmark's 12C18O 3-2 right while
	// refineOutlierSigmas was 4 (99.2 %), 10 changes nothing.
	refineWindowScatters = 5
	minWindowShrink      = 0.05
	// shrinkSettled stops the refinement once the windows would shrink by
	// less than this factor. Reasoned: a tenth narrower changes few
	// matches. Measured: 0.98 locked the benchmark's 12C18O 3-2 right while
	// refineOutlierSigmas was 4 (99.2 %), 0.7 changes nothing.
	shrinkSettled = 0.9
	// coreScatters keeps, of the refined lock lines, those within this many
	// robust σ of the pattern, at least coreMinPeakShare of the median peak
	// σ each. Reasoned: the lock lines seed the first fit, so only those
	// that clearly belong are kept; the others are matched later with
	// their own tolerance. Measured: 2 locked the benchmark's 12C18O 3-2
	// right while refineOutlierSigmas was 4 (99.2 %), 5 changes nothing; coreMinPeakShare 2 changes nothing.
	coreScatters     = 3
	coreMinPeakShare = 0.5
)

// lockLine is one line of a band's lock set.
type lockLine struct {
	br     *branch
	jlo    int
	nu     float64 // predicted position, cm⁻¹
	dx, sx float64 // x′ − x″ and (x′ + x″)/2
	lnP    float64
	w      float64 // window half-width, cm⁻¹
	group  int
}

// lockMatch is a lock line on a peak.
type lockMatch struct {
	line *lockLine
	peak int     // sorted peak index
	r    float64 // observed − predicted, cm⁻¹
}

// lockHyp is one hypothesis (a, δ) of the grid with its score (priors
// included) and raw score (without).
type lockHyp struct{ a, d, score, raw float64 }

// lockHit is how one lock line fared under a hypothesis.
type lockHit struct {
	q   float64 // closeness to the peak, exp(−½(r/(w/2))²)
	ell float64 // ln(I_obs/I_pred), NaN when the peak has no intensity
	grp int
	ok  bool // the line found a peak
}

// lockSearch is the lock search of one band against the peaks not yet taken
// (see Lock). lockBand runs its phases in order:
//
//  1. lockSet: the band's strong low-J lines inside the peaks' range;
//  2. setWindows: each lock line's window, narrower where lines crowd;
//  3. setGrid: the grid of hypotheses (a, δ) and the prior on δ;
//  4. setScaleExpectation: the intensity scale the band should show;
//  5. gridSearch and alternative: score every hypothesis, keep the best and
//     the best one that puts the lock lines on other peaks;
//  6. refine: least squares in a, δ, ε on the matched lock lines;
//  7. core: the lock lines that agree with the refined pattern;
//  8. verdict: accept the lock or say why not.
type lockSearch struct {
	r      *run
	b      *band
	taken  []bool // sorted peak index → assigned to an earlier band
	fitted bool   // predictions from a fit of assigned lines (b.lockPos)
	narrow bool   // windows and offsets narrowed to the fit's σ
	origin float64
	// spacing is the line spacing 2B̄ and wBase the base window half-width
	// (cm⁻¹).
	spacing, wBase float64

	lines []*lockLine
	dxMax float64 // largest |x′ − x″| of the lock lines
	wMin  float64 // narrowest window half-width

	// The grid: na+1 offsets over ±aMax and nd+1 values of δ over ±dMax;
	// sigD is the σ of the prior on δ.
	aMax, dMax, sigD float64
	na, nd           int

	// gRef is the expected intensity scale ln(I_obs/I_pred) (NaN: none),
	// sigG the σ of its prior and sigPick the σ of ln I with which a window
	// picks among its peaks; scalePrior says whether the prior applies.
	gRef, sigG, sigPick float64
	scalePrior          bool

	// Scratch of the score: used[k] == gen marks a peak taken by the
	// current hypothesis.
	gen  int
	used []int
	ells [2][]float64
	hits []lockHit

	L Lock
}

// lockBand runs the lock search for band b against the peaks not yet taken.
//
// With narrow set (a prediction from a fit, see refreshPrediction), the
// windows and the offset search shrink to the prediction's σ
// (narrowWindowSigmas·k·σ, at least narrowWindowShare of a line spacing and
// windowPeakSigmas peak σ) and δ is not searched.
func (r *run) lockBand(b *band, taken []bool, globalScale float64, narrow bool) (Lock, []lockMatch) {
	s := newLockSearch(r, b, taken, narrow)
	if !s.lockSet() {
		return s.L, nil
	}
	s.setWindows()
	s.setGrid()
	s.setScaleExpectation(globalScale)
	hs, best := s.gridSearch()
	alt := s.alternative(hs, best)
	mu, sd, h := s.chanceScore(best)
	s.L.ChanceScore, s.L.ChanceSigma = mu, sd
	s.L.NeededScore = mu + sd*(math.Sqrt(2*math.Log(math.Max(h, 1)))+nullMarginSigmas)
	x, ms := s.refine(best)
	ms = s.core(ms, x)
	return s.verdict(best, alt, x, ms)
}

// newLockSearch sets up the search of band b: the predictions it starts from
// (a fit of assigned lines, or the starting constants) and the base window.
func newLockSearch(r *run, b *band, taken []bool, narrow bool) *lockSearch {
	s := &lockSearch{r: r, b: b, taken: taken, fitted: b.lockPos != nil, origin: b.origin, spacing: 2 * b.bbar, used: make([]int, len(r.pos))}
	s.narrow = narrow && s.fitted
	if s.fitted {
		s.origin = b.lockOrigin
	}
	s.wBase = lockWindowShare * s.spacing
	if r.uMed > 0 {
		s.wBase = math.Max(s.wBase, windowPeakSigmas*r.uMed)
	}
	if r.s.Tolerance > 0 {
		s.wBase = math.Max(s.wBase, r.s.Tolerance)
	}
	return s
}

// posOf is the predicted position of line J″ = j of branch br: from the fit
// of assigned lines when there is one, else from the starting constants.
func (s *lockSearch) posOf(br *branch, j int) float64 {
	if s.fitted {
		return s.b.lockPos[br][j]
	}
	return br.start[j]
}

// lockSetJ returns the highest J″ of the lock set of a band whose strongest
// line has J″ = jpeak.
func lockSetJ(jpeak int) int {
	return min(max(lockSetJSpan*jpeak+lockSetJPad, minLockSetJ), maxLockSetJ)
}

// lockSet chooses the lock lines: up to J″ = lockSetJ, inside the peaks'
// range (widened by a base window), above the first floor of lockSetFloors
// that gives lockSetSize lines. It reports false, with the reason, when fewer
// than minLockLines remain.
func (s *lockSearch) lockSet() bool {
	r, b := s.r, s.b
	jpeak, pmax := 0, 0.0
	for _, br := range b.branches {
		for j := br.jmin; j <= br.jmax; j++ {
			if br.inten[j] > pmax {
				pmax, jpeak = br.inten[j], j
			}
		}
	}
	jcap := lockSetJ(jpeak)
	var lines []*lockLine
	for _, frac := range lockSetFloors {
		lines = lines[:0]
		for _, br := range b.branches {
			for j := br.jmin; j <= min(br.jmax, jcap); j++ {
				nu := s.posOf(br, j)
				if math.IsNaN(nu) || br.inten[j] < frac*pmax || br.inten[j] <= 0 || nu < r.lo-s.wBase || nu > r.hi+s.wBase {
					continue
				}
				xu := float64((j + br.dJ) * (j + br.dJ + 1))
				xl := float64(j * (j + 1))
				lines = append(lines, &lockLine{br: br, jlo: j, nu: nu, dx: xu - xl, sx: (xu + xl) / 2, lnP: math.Log(br.inten[j]), group: br.group})
			}
		}
		if len(lines) >= lockSetSize {
			break
		}
	}
	s.lines = lines
	s.hits = make([]lockHit, len(lines))
	s.L.Tried = len(lines)
	if len(lines) < minLockLines {
		s.L.Reason = fmt.Sprintf("only %d of its lines are predicted inside the peaks' range (%.4f–%.4f cm-1); a lock needs %d", len(lines), r.lo, r.hi, minLockLines)
		return false
	}
	return true
}

// setWindows sets the window of every lock line: the base half-width, capped
// at crowdedWindowShare of the distance to the nearest other predicted line
// of the band (at least minWindowShare of the base and minWindowPeakSigmas
// peak σ), and for a narrow search at most the prediction's σ times
// narrowWindowSigmas·k. The lock lines are then ordered strongest first,
// the order in which they pick their peaks.
func (s *lockSearch) setWindows() {
	r, b := s.r, s.b
	var all []float64
	for _, br := range b.branches {
		for j := br.jmin; j <= br.jmax; j++ {
			if x := s.posOf(br, j); !math.IsNaN(x) {
				all = append(all, x)
			}
		}
	}
	sort.Float64s(all)
	s.wMin = math.Inf(1)
	for _, l := range s.lines {
		nn := math.Inf(1)
		k := sort.SearchFloat64s(all, l.nu)
		for _, kk := range []int{k - 1, k, k + 1} {
			if kk >= 0 && kk < len(all) && all[kk] != l.nu {
				nn = math.Min(nn, math.Abs(all[kk]-l.nu))
			}
		}
		l.w = math.Max(math.Min(s.wBase, crowdedWindowShare*nn), math.Max(s.wBase*minWindowShare, minWindowPeakSigmas*r.uMed))
		if s.narrow {
			l.w = math.Min(l.w, math.Max(narrowWindowSigmas*r.s.sigmas()*b.lockSig[l.br][l.jlo], math.Max(narrowWindowShare*s.spacing, windowPeakSigmas*r.uMed)))
		}
		s.dxMax = math.Max(s.dxMax, math.Abs(l.dx))
		s.wMin = math.Min(s.wMin, l.w)
	}
	sort.SliceStable(s.lines, func(i, j int) bool { return s.lines[i].lnP > s.lines[j].lnP })
}

// setGrid sets the hypothesis grid: offsets a over ±LockOffset line spacings
// (none for pure rotation; for a narrow search at most narrowWindowSigmas·k·σ
// of the predicted origin, at least narrowOffsetShare of a spacing) in steps
// of 1/offsetStepsPerWindow of a window, and δ over ±LockScale·B̄ (not for a
// narrow search) in steps that move no lock line by more than
// deltaBStepShare of a window.
func (s *lockSearch) setGrid() {
	r, b := s.r, s.b
	s.aMax = r.s.lockOffset() * s.spacing
	aStep := s.wBase / offsetStepsPerWindow
	if s.narrow {
		aStep = s.wMin / offsetStepsPerWindow
		s.aMax = math.Min(s.aMax, math.Max(narrowWindowSigmas*r.s.sigmas()*b.lockSigOrigin, narrowOffsetShare*s.spacing))
	}
	if b.vu == b.vl {
		s.aMax = 0
	}
	s.na = int(math.Ceil(s.aMax/aStep)) * 2
	s.dMax = r.s.lockScale() * b.bbar
	s.sigD = s.dMax / startDeltaBPriorDiv
	if s.fitted {
		s.sigD = s.dMax / fittedDeltaBPriorDiv
	}
	if s.dxMax > 0 && !s.narrow {
		s.nd = min(int(math.Ceil(s.dMax*s.dxMax/(s.wBase*deltaBStepShare))), maxDeltaBSteps) * 2
	}
}

// setScaleExpectation sets the intensity scale the band is expected to show:
// its own species' scale when a band of it is locked; else the scale of the
// bands locked so far (globalScale), loosely, since the abundance may be off;
// else the guess from the strongest peaks. The prior on the scale applies to
// fundamentals and hot bands of infrared and rotational spectra, whose
// predicted intensities share one transition moment.
func (s *lockSearch) setScaleExpectation(globalScale float64) {
	r, b := s.r, s.b
	s.gRef = globalScale
	e := otherSpeciesScale
	if g, ok := r.speciesScale[b.sp.sp.Label]; ok {
		s.gRef, e = g, sameSpeciesScale
	} else if math.IsNaN(s.gRef) {
		s.gRef, e = r.scaleGuess, guessedScale
	}
	s.sigG, s.sigPick = math.Log(e.Factor), e.PickSigma
	s.scalePrior = !math.IsNaN(s.gRef) && r.p.Spectrum != Raman && abs(b.vu-b.vl) <= 1
}

// place moves the lock lines by hypothesis (a, δ, ε) and lets each, strongest
// first, pick a free peak in its window scaled by shrink (bestFree); it fills
// s.hits and s.ells and, with collect, returns the matches.
func (s *lockSearch) place(a, d, e, shrink float64, collect bool) []lockMatch {
	r := s.r
	s.gen++
	var ms []lockMatch
	clear(s.hits)
	s.ells[0], s.ells[1] = s.ells[0][:0], s.ells[1][:0]
	for i, l := range s.lines {
		t := l.nu + a + d*l.dx + e*l.sx
		w := l.w * shrink
		k := s.bestFree(t, w, l.lnP+s.gRef)
		if k < 0 {
			continue
		}
		s.used[k] = s.gen
		res := r.pos[k] - t
		h := lockHit{q: math.Exp(-0.5 * sq(res/(w/2))), grp: l.group, ok: true, ell: math.NaN()}
		if !math.IsNaN(r.lnI[k]) {
			h.ell = r.lnI[k] - l.lnP
			s.ells[l.group] = append(s.ells[l.group], h.ell)
		}
		s.hits[i] = h
		if collect {
			ms = append(ms, lockMatch{line: l, peak: k, r: r.pos[k] - l.nu})
		}
	}
	return ms
}

// score scores hypothesis (a, δ, ε) with the windows scaled by shrink: the
// share of lock lines on a peak, each weighted by its closeness and by how
// well its intensity agrees with the median scale of its group (σ
// lockIntensitySigma), less the penalty of a peak at an infrared band's
// origin. raw is that; score also carries the priors on δ and on the
// intensity scale and the tie-break towards small offsets. raw decides
// whether a lock is accepted at all, score which hypothesis wins. With
// collect it also returns the matches.
func (s *lockSearch) score(a, d, e, shrink float64, collect bool) (score, raw float64, ms []lockMatch) {
	ms = s.place(a, d, e, shrink, collect)
	var g [2]float64
	for grp := range s.ells {
		g[grp] = median(s.ells[grp])
	}
	for _, h := range s.hits {
		if !h.ok {
			continue
		}
		qi := 1.0
		if !math.IsNaN(h.ell) {
			qi = math.Exp(-0.5 * sq((h.ell-g[h.grp])/lockIntensitySigma))
		}
		score += h.q * qi
	}
	n := float64(len(s.lines))
	score /= n
	raw = score
	score *= math.Exp(-0.5 * sq(d/s.sigD))
	if s.scalePrior && len(s.ells[0]) > 0 {
		score *= math.Exp(-0.5 * sq((g[0]-s.gRef)/s.sigG))
	}
	if pen, ok := s.originPenalty(a, shrink, g[0]); ok {
		score -= pen / n
		raw -= pen / n
	}
	if s.aMax > 0 {
		score *= 1 - offsetTieBreak*sq(a/s.spacing)
	}
	return score, raw, ms
}

// originPenalty returns the penalty, in lock lines, of a free peak within a
// window of the predicted origin of an infrared band moved by a, where the
// gap between P(1) and R(0) leaves no line: originPenalty when the peak is
// at least 1/originIntensityFactor of the intensity predicted for R(0) on the
// band's scale g0, none when it is weaker, blindOriginPenalty when
// intensities are not known. ok is false when there is no such peak (or the
// spectrum is not infrared).
func (s *lockSearch) originPenalty(a, shrink, g0 float64) (float64, bool) {
	r := s.r
	if r.p.Spectrum != Infrared {
		return 0, false
	}
	k := s.nearestFree(s.origin+a, s.wBase*shrink)
	if k < 0 {
		return 0, false
	}
	pen := float64(blindOriginPenalty)
	if !math.IsNaN(r.lnI[k]) && len(s.ells[0]) > 0 {
		pen = 0
		if r.lnI[k]-g0 >= s.b.lnPFirst-math.Log(originIntensityFactor) {
			pen = originPenalty
		}
	}
	return pen, true
}

// gridSearch scores every hypothesis of the grid (ε = 0, full windows) and
// returns them with the best.
func (s *lockSearch) gridSearch() ([]lockHyp, lockHyp) {
	var hs []lockHyp
	best := lockHyp{score: math.Inf(-1)}
	for ia := 0; ia <= s.na; ia++ {
		a := 0.0
		if s.na > 0 {
			a = -s.aMax + float64(ia)*2*s.aMax/float64(s.na)
		}
		for id := 0; id <= s.nd; id++ {
			d := 0.0
			if s.nd > 0 {
				d = -s.dMax + float64(id)*2*s.dMax/float64(s.nd)
			}
			sc, raw, _ := s.score(a, d, 0, 1, false)
			h := lockHyp{a, d, sc, raw}
			hs = append(hs, h)
			if sc > best.score {
				best = h
			}
		}
	}
	return hs, best
}

// alternative returns the best-scoring hypothesis that moves the lock lines
// by a median of more than altShiftWindows windows from best (a wrong-J
// pattern, typically one line spacing away; its score is 0 when there is
// none), and records in the lock the best score, the alternative (its score
// on the scale of the raw score) and the margin between them.
func (s *lockSearch) alternative(hs []lockHyp, best lockHyp) lockHyp {
	alt := lockHyp{score: 0}
	devs := make([]float64, len(s.lines))
	for _, h := range hs {
		if h.score <= alt.score {
			continue
		}
		for i, l := range s.lines {
			devs[i] = math.Abs((h.a-best.a)+(h.d-best.d)*l.dx) / l.w
		}
		if median(devs) > altShiftWindows {
			alt = h
		}
	}
	s.L.Score, s.L.AltOffset, s.L.AltDeltaB, s.L.AltScore = best.raw, alt.a, alt.d, alt.score*best.raw/math.Max(best.score, 1e-300)
	if best.score > 0 {
		s.L.Margin = (best.score - alt.score) / best.score
	}
	return alt
}

// refine refines the best hypothesis: it gathers the lock lines' peaks,
// fits a, δ and ε to them (fitPattern), and shrinks the windows towards the
// fit's robust scatter (refineWindowScatters σ, at least windowPeakSigmas
// peak σ, by a factor of at least minWindowShrink), until the windows would
// shrink by less than shrinkSettled or maxRefineIter iterations are done. It
// returns (a, δ, ε) and the matches of the last iteration, and sets the lock's
// RMS.
func (s *lockSearch) refine(best lockHyp) ([3]float64, []lockMatch) {
	r := s.r
	x := [3]float64{best.a, best.d, 0}
	shrink := 1.0
	var ms []lockMatch
	for it := 0; it < maxRefineIter; it++ {
		_, _, ms = s.score(x[0], x[1], x[2], shrink, true)
		if len(ms) < minLockLines {
			break
		}
		var fx [3]float64
		var srob float64
		var ok bool
		fx, srob, ms, ok = s.fitPattern(ms)
		if !ok {
			break
		}
		x = fx
		s.L.RMS = srob
		// Stop once the windows would shrink by less than shrinkSettled: the
		// matches just used were gathered with windows this close to final.
		next := math.Min(1, math.Max(minWindowShrink, math.Max(refineWindowScatters*srob, windowPeakSigmas*r.uMed)/s.wMin))
		if it > 0 && next >= shrink*shrinkSettled {
			break
		}
		shrink = math.Min(shrink, next)
	}
	return x, ms
}

// fitPattern fits (a, δ, ε) to the residuals of the matched lock lines by
// least squares (a not for pure rotation; ε only with minEpsilonLines lines,
// and for an infrared band minEpsilonSide in each of P and R), setting aside
// in up to refinePasses passes the lines farther than refineOutlierSigmas
// robust σ (or their peak's σ) from the pattern. It returns the fit, the
// robust σ of its last pass before the lines were set aside, the lines kept,
// and false when the fit could not be solved.
func (s *lockSearch) fitPattern(ms []lockMatch) ([3]float64, float64, []lockMatch, bool) {
	r, b := s.r, s.b
	fa, fd := b.vu != b.vl, s.dxMax > 0
	var x [3]float64
	var srob float64
	ok := false
	for pass := 0; pass < refinePasses; pass++ {
		fe := len(ms) >= minEpsilonLines
		if r.p.Spectrum == Infrared && fe {
			np, nr := 0, 0
			for _, m := range ms {
				if m.line.br.dJ < 0 {
					np++
				} else {
					nr++
				}
			}
			fe = np >= minEpsilonSide && nr >= minEpsilonSide
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
			if res[i] <= refineOutlierSigmas*math.Max(srob, r.unc[m.peak]) {
				in = append(in, m)
			}
		}
		if len(in) == len(ms) || len(in) < minLockLines {
			break
		}
		ms = in
	}
	return x, srob, ms, ok
}

// core keeps the lock lines within coreScatters robust σ of the refined
// pattern x (at least coreMinPeakShare of the median peak σ), when at least
// minLockLines do; lines left out here are matched later with their own
// tolerance.
func (s *lockSearch) core(ms []lockMatch, x [3]float64) []lockMatch {
	if len(ms) < minLockLines {
		return ms
	}
	lim := coreScatters * math.Max(s.L.RMS, s.r.uMed*coreMinPeakShare)
	var in []lockMatch
	for _, m := range ms {
		if math.Abs(m.r-x[0]-x[1]*m.line.dx-x[2]*m.line.sx) <= lim {
			in = append(in, m)
		}
	}
	if len(in) >= minLockLines {
		return in
	}
	return ms
}

// verdict completes the lock with the refined pattern x and the lock lines
// ms, and accepts it when enough lock lines agree, the raw score reaches
// minLockScore and the score chance needs (NeededScore, see chanceScore), and
// the margin over the alternative reaches minLockMargin; else it says why not
// and returns no lines.
func (s *lockSearch) verdict(best, alt lockHyp, x [3]float64, ms []lockMatch) (Lock, []lockMatch) {
	L := s.L
	L.Offset, L.DeltaB, L.Epsilon = x[0], x[1], x[2]
	L.Matched = len(ms)
	switch {
	case L.Matched < minLockLines || best.raw < minLockScore:
		L.Reason = fmt.Sprintf("no offset explains its strong low-J lines: best offset %+.4f cm-1 with ΔB %+.2g cm-1 has score %.2f (%d of %d lock lines on peaks; a lock needs score ≥ %.2f and %d lines)",
			best.a, best.d, best.raw, L.Matched, L.Tried, minLockScore, minLockLines)
		return L, nil
	case best.raw < L.NeededScore:
		L.Reason = fmt.Sprintf("not significant: its best offset %+.4f cm-1 scores %.2f, which chance gives at this peak density (random offsets score %.2f ± %.2f; the best of this search needs %.2f to stand out)",
			best.a, best.raw, L.ChanceScore, L.ChanceSigma, L.NeededScore)
		return L, nil
	case L.Margin < minLockMargin:
		L.Reason = fmt.Sprintf("ambiguous: offset %+.4f cm-1 (ΔB %+.2g cm-1, score %.2f) and offset %+.4f cm-1 (ΔB %+.2g cm-1, score %.2f) explain the peaks equally well; the assignments would differ by whole lines — improve the starting constants or the peak list",
			best.a, best.d, best.score, alt.a, alt.d, alt.score)
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
// (the predicted ln intensity on the observed scale, with σ sigPick in ln
// units), or −1. A peak is free when no earlier band took it and the current
// hypothesis has not used it.
func (s *lockSearch) bestFree(t, w, lnExp float64) int {
	r, taken, used, gen, sigma := s.r, s.taken, s.used, s.gen, s.sigPick
	if math.IsNaN(lnExp) {
		return s.nearestFree(t, w)
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

// nearestFree returns the sorted index of the free peak nearest to t within
// w, or −1.
func (s *lockSearch) nearestFree(t, w float64) int {
	r, taken, used, gen := s.r, s.taken, s.used, s.gen
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
