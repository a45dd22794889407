package fit

import (
	"fmt"
	"math"

	"bandwright/fit/lsq"
)

// Nonlinear refinement: Gauss–Newton steps, each a QR solve of the problem
// linearised in every free parameter (and calibration factor), damped to
// Levenberg–Marquardt steps where an undamped one does not lower χ². One
// mechanism serves both nonlinear cases, the calibration factors κ and the
// energies of open-shell levels, which are eigenvalues (DEVELOPERS.md,
// "Nonlinear refinement"). The covariance, rank analysis and messages are
// those of the last undamped solve, at the converged values: the same as a
// linear fit's.

// convergence records how the iterations of a fit went (constants.Convergence).
type convergence struct {
	starts    int
	damped    bool
	finalStep float64
	converged bool
}

// Tuning of the iterations.
const (
	// maxIter bounds the QR solves of one solve (one rejection pass).
	maxIter = 60
	// muStart is the first damping, in units of the squared column norms of
	// the weighted design: a step about as large as the parameters' σ.
	muStart = 1e-3
	// muMax ends the damping: a step this damped is no step at all.
	muMax = 1e12
	// muMin is the damping below which steps go undamped again.
	muMin = 1e-9
	// chi2Slack is the relative rise of χ² that still counts as no rise:
	// rounding noise of the sum, far below any real change.
	chi2Slack = 1e-12
)

// Convergence of the Gauss–Newton steps, in units of each parameter's σ.
const (
	stepConverged = 1e-6
	stepStalled   = 1e-3
)

// iterate refines the free parameters and κ from the current values. Each
// iteration solves the linearised problem with damping mu (0 at first): a
// step that lowers χ² is taken and mu divided by ten (to 0 below muMin),
// one that raises it is undone and mu raised tenfold (from muStart). It stops
// after an undamped step below stepConverged σ, or below stepStalled σ and no
// longer shrinking (the rounding floor of the solution); a damped step below
// stepConverged σ ends with one undamped solve (finish), so that the
// covariance is always that of the undamped problem at the final values.
func (w *work) iterate(free, rows []int) error {
	it := &iteration{w: w, free: free, rows: rows, chi: w.chi2Used(), prev: math.Inf(1)}
	for n := 0; n < maxIter; n++ {
		done, err := it.step(n)
		if done || err != nil {
			return err
		}
	}
	if w.res == nil {
		return &CannotFitError{Msg: fmt.Sprintf("fit: the nonlinear fit found no step that lowers χ² in %d iterations; give starting values of the fine-structure constants in the electronic-states file", maxIter)}
	}
	w.conv.converged = false
	w.status = IterationLimit
	w.warn = append(w.warn, fmt.Sprintf("the Gauss–Newton refinement stopped after %d iterations without its steps falling below %g σ (last step %.3g σ): the constants and their σ are those of the last step", maxIter, stepConverged, w.conv.finalStep))
	return nil
}

// iteration is the state of iterate.
type iteration struct {
	w          *work
	free, rows []int
	mu         float64
	scale      []float64
	chi, prev  float64
}

// damp raises the damping (from muStart) and reports false when it passes muMax.
func (it *iteration) damp() bool {
	if it.mu == 0 {
		it.mu, it.scale = muStart, it.w.columnNorms(it.free, it.rows)
	} else {
		it.mu *= 10
	}
	it.w.conv.damped = true
	return it.mu <= muMax
}

// step makes iteration n and reports whether the iterations are done.
func (it *iteration) step(n int) (bool, error) {
	w := it.w
	res, err := w.lsqSolve(it.free, it.rows, it.mu, it.scale)
	if err != nil {
		if _, ok := err.(*UndeterminedError); ok && w.nonlinear && !w.startLimit && n < maxIter-1 {
			// Undetermined at these values (a start where a constant has no
			// effect yet): damp, and judge the rank at the end.
			return !it.damp(), nil
		}
		return true, err
	}
	w.iter++
	step := maxStep(res, len(it.free), res.X)
	if it.mu > 0 && step <= stepConverged {
		return true, it.finish()
	}
	old := w.stepBy(it.free, res.X, 1)
	if it.mu == 0 && step <= stepConverged {
		// A step this small is the rounding floor: χ² may rise by
		// rounding alone.
		w.res, w.conv.finalStep, w.conv.converged = res, step, true
		return true, nil
	}
	newChi := w.chi2Used()
	if newChi > it.chi*(1+chi2Slack)+w.chi2Floor() && w.nonlinear {
		w.restore(it.free, old)
		if it.mu == 0 && step <= stepStalled {
			// An undamped step of a thousandth of σ that raises χ²: the
			// rounding floor of an ill-conditioned problem.
			w.res, w.conv.finalStep, w.conv.converged = res, step, true
			return true, nil
		}
		return !it.damp(), nil
	}
	it.chi = newChi
	if it.mu > 0 {
		if it.mu /= 10; it.mu < muMin {
			it.mu = 0
		}
		return false, nil
	}
	w.res, w.conv.finalStep = res, step
	if step <= stepConverged || (step <= stepStalled && step > it.prev/2) {
		w.conv.converged = true
		return true, nil
	}
	it.prev = step
	return false, nil
}

// finish ends damped iterations whose steps have become negligible: one
// undamped solve at the current values gives the covariance (and its rank
// analysis); its step is taken unless it raises χ².
func (it *iteration) finish() error {
	w := it.w
	res, err := w.lsqSolve(it.free, it.rows, 0, nil)
	if err != nil {
		return err
	}
	w.iter++
	step := maxStep(res, len(it.free), res.X)
	old := w.stepBy(it.free, res.X, 1)
	if w.chi2Used() > it.chi*(1+chi2Slack)+w.chi2Floor() {
		w.restore(it.free, old)
	}
	w.res, w.conv.finalStep, w.conv.converged = res, step, step <= stepStalled
	if !w.conv.converged {
		w.status = IterationLimit
		w.warn = append(w.warn, fmt.Sprintf("the damped refinement stalled with an undamped step of %.3g σ left: the constants and their σ are those of the last step", step))
	}
	return nil
}

// stepBy adds f·x to the free parameters and κ (columns in design order) and
// returns their values before.
func (w *work) stepBy(free []int, x []float64, f float64) []float64 {
	old := make([]float64, 0, len(free)+len(w.kfree))
	for c, j := range free {
		old = append(old, w.values[j])
		w.values[j] += f * x[c]
	}
	for c, k := range w.kfree {
		old = append(old, w.kappa[k])
		w.kappa[k] += f * x[len(free)+c]
	}
	w.omcOK = false
	return old
}

// restore sets the free parameters and κ back to old (stepBy's return).
func (w *work) restore(free []int, old []float64) {
	for c, j := range free {
		w.values[j] = old[c]
	}
	for c, k := range w.kfree {
		w.kappa[k] = old[len(free)+c]
	}
	w.omcOK = false
}

// maxStep returns the largest |x_c|/σ_c, σ_c from the unscaled covariance of r.
func maxStep(r *lsq.Result, _ int, x []float64) float64 {
	step := 0.0
	for c, d := range x {
		step = math.Max(step, math.Abs(d)/math.Sqrt(r.Cov.At(c, c)))
	}
	return step
}

// chi2Floor returns Σ (floor_i/u_i)² over the lines in use: the part of χ²
// that rounding of the calculated positions alone can make.
func (w *work) chi2Floor() float64 {
	w.residuals()
	f := 0.0
	for i, u := range w.used {
		if u {
			z := w.floor[i] / w.unc[i]
			f += z * z
		}
	}
	return f
}

// chi2Used returns χ² over the lines in use at the current values.
func (w *work) chi2Used() float64 {
	c, _ := w.chi2()
	return c
}

// columnNorms returns the Euclidean norm of each column of the weighted
// design at the current values (the scale of the damping rows).
func (w *work) columnNorms(free, rows []int) []float64 {
	ncol := len(free) + len(w.kfree)
	d := w.newDesign(free)
	row := make([]float64, ncol)
	sum := make([]float64, ncol)
	for _, i := range rows {
		clear(row)
		_, u := d.row(i, row)
		for c, a := range row {
			sum[c] += (a / u) * (a / u)
		}
	}
	for c := range sum {
		sum[c] = math.Sqrt(sum[c])
		if sum[c] == 0 {
			sum[c] = 1
		}
	}
	return sum
}
