package pipelines

import (
	"fmt"
	"math"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
)

// MaxChainSigma is the dimensionless standard deviation s of the fit above
// which a chain (`bandwright run`, `bandwright nightly`) stops before thermo:
// s ≈ 1 when the lines' uncertainties describe their scatter, 2 or 3 when they
// are somewhat optimistic; above 10 the uncertainties are understated
// tenfold or, far more often, a line has a wrong position, unit or assignment
// and every σ of the fit is scaled by s. A pipeline file accepts such a fit
// with accept_poor_fit = true in its [fit] section.
const MaxChainSigma = 10.0

// PoorFitError is the error of a chain whose fit is too poor to carry on to
// thermo (s above MaxChainSigma, or line rejection stopped at its cap). It
// names the worst line.
type PoorFitError struct {
	Why   string
	Worst string // the line with the largest |o−c|/unc, "FILE:ROW band branch", if any
}

func (e *PoorFitError) Error() string {
	s := "run: the fit is too poor to go on to thermo: " + e.Why
	if e.Worst != "" {
		s += "; the worst line is " + e.Worst
	}
	return s + ". Check that line's position, unit and assignment; to go on anyway, set accept_poor_fit = true in the [fit] section of the pipeline file"
}

// FailureKind returns failure.CannotCompute (exit code 2).
func (e *PoorFitError) FailureKind() failure.Kind { return failure.CannotCompute }

// checkFitQuality returns a *PoorFitError when the fit's s is above
// MaxChainSigma or its rejection stopped at the cap, unless accept.
func checkFitQuality(f *FitOutcome, accept bool) error {
	if accept || f == nil || f.Result == nil {
		return nil
	}
	r := f.Result
	var why string
	switch s := r.Stats.Sigma; {
	case s > MaxChainSigma:
		why = fmt.Sprintf("its dimensionless standard deviation s = %.3g is far above 1 (a chain stops above %g)", s, MaxChainSigma)
	case r.Status == fit.RejectionCapped:
		why = "more lines exceed the rejection threshold than the cap allows (" + r.Status.String() + ")"
	default:
		return nil
	}
	return &PoorFitError{Why: why, Worst: worstLine(f)}
}

// worstLine names the line with the largest normalised residual.
func worstLine(f *FitOutcome) string {
	best, at := 0.0, -1
	for i, lr := range f.Result.Lines {
		if a := math.Abs(lr.Norm); i < len(f.Problem.Lines) && a > best {
			best, at = a, i
		}
	}
	if at < 0 {
		return ""
	}
	l := f.Problem.Lines[at]
	return fmt.Sprintf("%s:%d (%s %s, position %g %s, o−c = %.3g unc)", l.File, l.Row, l.Species,
		linelist.TransitionLabel(l.VUp, l.JUp, l.VLo, l.JLo), l.Position, l.Unit, f.Result.Lines[at].Norm)
}
