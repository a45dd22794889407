// Package fit is bandwright's fitting stage: from assigned lines to molecular
// constants with a full covariance matrix.
//
// A fit minimises
//
//	χ² = Σ_i ((ν_obs,i − (1+κ_f(i))·[E(upper_i) − E(lower_i)]) / u_i)²
//
// over the free parameters of an energy-level model (package model) and, with
// Settings.Calibrate, one multiplicative calibration factor κ_f per input file
// (the first file is the reference, κ = 0). Positions ν and uncertainties u are
// in cm⁻¹ (MHz lines are converted with 1 cm⁻¹ = 29 979.2458 MHz). Without
// calibration the problem is linear and is solved in one step by Householder QR
// on the column-scaled weighted design matrix (package lsq); with calibration it
// is refined by Gauss–Newton steps, each a QR solve of the linearised problem.
//
// Uncertainty convention (the same everywhere in bandwright): the covariance of
// the fitted parameters is s²·(AᵀWA)⁻¹, scaled by the square of the
// dimensionless standard deviation s = √(χ²/dof) of the fit, W = diag(1/u²). A
// fit whose uncertainties u are all too small by a factor c therefore reports
// the same σ as one with honest u; s tells how well the stated u describe the
// scatter.
package fit

import (
	"errors"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/lsq"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// Problem is what a fit works on: the lines and the model, and the starting
// values of a nonlinear fit. It holds no settings.
type Problem struct {
	Lines []linelist.Line
	Model model.Model
	// Start are starting values of constants of the electronic states
	// (usually the electronic-states file's [state.start]): every free
	// parameter that stands for one starts there — the constant of each
	// vibrational level in the term-values model; in the Dunham model X_e of
	// a fine-structure constant, Y01 for B, −Y02 for D, T_e for T. Without
	// them a nonlinear fit starts from the linear fit of the case-(b) limit
	// (start.go).
	Start []states.Start
}

// Settings are the limits and switches of a fit. The zero value is a plain
// weighted fit: no rejection, calibration or rounding. 0 means the same for
// Reject on every layer (fit.Settings, pipelines.FitOptions, the pipeline
// file and --reject): rejection off.
type Settings struct {
	// Reject is the rejection threshold in units of the fit's dimensionless
	// standard deviation s: lines with |o−c|/u > Reject·s are dropped and the
	// fit repeated. 0 turns rejection off; the command line and the pipeline
	// file use DefaultReject when none is given.
	Reject float64
	// MaxRejectFraction caps the rejected share of lines; 0 means 0.10. When
	// the cap is reached rejection stops and a warning says so.
	MaxRejectFraction float64
	// Calibrate floats one multiplicative factor κ_f per input file except the
	// first.
	Calibrate bool
	// Round applies sequential rounding and refitting after the fit (Le Roy
	// 1998; rounding units from Watson's parameter sensitivity, 1977).
	Round bool
	// RankTolerance is passed to the least-squares engine (0: its default).
	RankTolerance float64
	// Unit is the unit the outputs show constants and residuals in, and the
	// unit in whose powers of ten sequential rounding rounds (zero value:
	// cm⁻¹). The fit itself works in cm⁻¹ whatever it is.
	Unit linelist.Unit
}

func (s Settings) maxRejectFraction() float64 {
	if s.MaxRejectFraction > 0 {
		return s.MaxRejectFraction
	}
	return 0.10
}

// Status tells how a fit ended when it did end with a result.
type Status int

const (
	// Converged: the fit ended normally.
	Converged Status = iota
	// RejectionCapped: more lines exceeded the rejection threshold than the cap allowed.
	RejectionCapped
	// IterationLimit: Gauss–Newton refinement stopped at its iteration limit.
	IterationLimit
)

func (s Status) String() string {
	switch s {
	case Converged:
		return "converged"
	case RejectionCapped:
		return "converged; rejection stopped at its cap"
	case IterationLimit:
		return "stopped at the Gauss–Newton iteration limit"
	}
	return "unknown"
}

// Calibration is the fitted calibration factor of one input file.
type Calibration struct {
	File         string
	Kappa, Sigma float64
	Fixed        bool // the reference file
}

// LineResult is the outcome of one line.
type LineResult struct {
	Calc   float64 // calculated position in the line's own unit, including its file's calibration
	OmC    float64 // observed − calculated, line's unit
	Norm   float64 // (o−c)/unc
	Used   bool
	Reason string // why a line was not used
}

// Result is the outcome of a fit.
type Result struct {
	Model  model.Model
	Params []model.Param // every model parameter with value and 1σ (σ = 0 when fixed)
	// Free indexes the fitted parameters in Params; the covariance rows are
	// Free in order, then the calibration factors of Calib that are not fixed.
	Free  []int
	Calib []Calibration
	// Cov is the covariance of the fitted parameters (see the package doc for
	// its scaling).
	Cov      *mat.SymDense
	Stats    constants.Stats
	Lines    []LineResult
	Status   Status
	Warnings []string
	Derived  []constants.Derived
	Rounding *constants.Rounding
	Files    []string
	// Bands lists the bands (and pure-rotation sets, VUp = VLo) among the lines
	// used; Observed the levels they reach with the highest J in each.
	Bands    []constants.Band
	Observed []constants.LevelRange
	// Unit is Settings.Unit: the unit the outputs show.
	Unit linelist.Unit
	// Unconnected indexes in Params the term values held at 0 because no
	// line connects their level to the lowest level of its isotopologue
	// (fixed, outside the covariance; the record marks them).
	Unconnected []int
	// Convergence describes the iterations of a nonlinear fit; nil for a
	// linear one.
	Convergence *constants.Convergence
	// Truncation lists, for a Dunham fit, the next term of each series the
	// model stops (vibration, B_v, D_v, rotation) with its expected size and
	// its first-order shift of the parameters (truncation.go); Derive
	// carries them into Derived.Truncation. Empty for term values, whose
	// secondary fits (ω_e, B_e, …) Derive treats itself.
	Truncation []TruncationTerm
}

// CovNames returns the names of the covariance rows (parameter IDs, then κ of
// each floated file).
func (r *Result) CovNames() []string {
	var n []string
	for _, i := range r.Free {
		n = append(n, r.Params[i].ID())
	}
	for _, c := range r.Calib {
		if !c.Fixed {
			n = append(n, "kappa["+c.File+"]")
		}
	}
	return n
}

// Correlation returns the correlation matrix of the fitted parameters
// (lsq.Correlation: a parameter of zero variance is uncorrelated with all).
func (r *Result) Correlation() *mat.SymDense { return lsq.Correlation(r.Cov) }

// Fit runs the fit. An error means no honest result exists (bad input, too few
// lines, undetermined parameters: *UndeterminedError); a result always carries
// a Status and any warnings.
func Fit(p Problem, s Settings) (*Result, error) {
	if p.Model == nil {
		return nil, errors.New("fit: no model")
	}
	if len(p.Lines) == 0 {
		return nil, errors.New("fit: no lines")
	}
	w, err := newWork(p, s)
	if err != nil {
		return nil, err
	}
	if err := w.run(); err != nil {
		return nil, err
	}
	res := w.result()
	res.Truncation = w.truncation()
	if s.Round {
		if err := w.round(res); err != nil {
			return nil, err
		}
	}
	res.Derived = Derive(res)
	return res, nil
}
