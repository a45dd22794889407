package assign

import (
	"fmt"
	"strings"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
)

// Problem is what an assignment works on.
type Problem struct {
	Peaks *PeakList
	Start *Start
	// Bands are looked for in every species of Start.
	Bands    []linelist.Band
	Spectrum Spectrum
	// Temperature of the sample in K, for predicted intensities; 0 means
	// DefaultTemperature.
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
type LockError struct {
	Bands []BandResult
	// Hint says what the peaks look like when their unit seems wrong (a
	// peak list in MHz read as cm⁻¹); empty otherwise.
	Hint string
}

func (e *LockError) Error() string {
	var b strings.Builder
	b.WriteString("assign: no band could be locked onto the peaks")
	if e.Hint != "" {
		b.WriteString(": " + e.Hint)
	}
	for _, r := range e.Bands {
		fmt.Fprintf(&b, "\n  %s: %s", r.Label(), r.Lock.Reason)
	}
	return b.String()
}

// FailureKind returns failure.CannotCompute.
func (e *LockError) FailureKind() failure.Kind { return failure.CannotCompute }

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
