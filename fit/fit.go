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
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/lsq"
	"bandwright/fit/model"
	"bandwright/internal/failure"
	"bandwright/units"
)

// Problem is what a fit works on: the lines and the model. It holds no settings.
type Problem struct {
	Lines []linelist.Line
	Model model.Model
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

// CannotFitError is a fit that cannot be done honestly, with the reason
// (fewer lines than parameters, lines a model cannot predict). Its kind is
// failure.CannotCompute: the command line maps it to exit code 2.
type CannotFitError struct{ Msg string }

func (e *CannotFitError) Error() string { return e.Msg }

// FailureKind returns failure.CannotCompute.
func (e *CannotFitError) FailureKind() failure.Kind { return failure.CannotCompute }

// FailureKind returns failure.CannotCompute.
func (e *UndeterminedError) FailureKind() failure.Kind { return failure.CannotCompute }

// UndeterminedError reports parameters the data cannot determine. Its kind is
// failure.CannotCompute: the command line maps it to exit code 2.
type UndeterminedError struct {
	Groups [][]string // parameter IDs of each null direction, strongest first
	Hints  []string   // what data would determine them
}

func (e *UndeterminedError) Error() string {
	var b strings.Builder
	b.WriteString("fit: the data cannot determine ")
	for i, g := range e.Groups {
		if i > 0 {
			b.WriteString("; nor ")
		}
		if len(g) == 1 {
			b.WriteString(g[0])
		} else {
			b.WriteString("the combination of " + strings.Join(g, ", "))
		}
	}
	if len(e.Hints) > 0 {
		b.WriteString(". ")
		b.WriteString(strings.Join(e.Hints, " "))
	}
	b.WriteString(" Remove the parameter from --terms, hold it with --fix NAME=VALUE, or add such lines.")
	return b.String()
}

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
	if s.Round {
		if err := w.round(res); err != nil {
			return nil, err
		}
	}
	res.Derived = Derive(res)
	return res, nil
}

// work is the state of one fit.
type work struct {
	p        Problem
	s        Settings
	params   []model.Param
	values   []float64 // all model parameters
	free     []int
	fixedIdx map[int]bool // free parameters additionally held (rounding)
	sp       []int        // species index of each line
	file     []int        // file index of each line
	files    []string
	kappa    []float64 // per file
	kfree    []int     // files whose κ floats
	used     []bool
	reason   []string
	obs, unc []float64 // cm⁻¹
	// omc and floor hold o−c of every line and its rounding level (cm⁻¹)
	// at the current values when omcOK; see residuals.
	omc, floor []float64
	omcOK      bool
	tm         model.Transitioner // the model, when it evaluates transitions directly
	s1, s2     []float64          // scratch of transition for other models
	rows       []int              // indices of the lines in use in the last solve
	res        *lsq.Result
	status     Status
	warn       []string
	iter       int
}

func newWork(p Problem, s Settings) (*work, error) {
	w := &work{p: p, s: s, params: p.Model.Params(), fixedIdx: map[int]bool{}}
	w.tm, _ = p.Model.(model.Transitioner)
	w.values = model.Values(w.params)
	for i, q := range w.params {
		if !q.Fixed {
			w.free = append(w.free, i)
		}
	}
	n := len(p.Lines)
	w.sp = make([]int, n)
	w.rows = make([]int, 0, n)
	w.file = make([]int, n)
	w.used = make([]bool, n)
	w.reason = make([]string, n)
	w.obs = make([]float64, n)
	w.unc = make([]float64, n)
	fileIdx := map[string]int{}
	spIdx := map[string]int{}
	for i, sp := range p.Model.Species() {
		spIdx[sp] = i
	}
	var bad []string
	for i, l := range p.Lines {
		si, ok := spIdx[l.Species]
		if !ok {
			bad = append(bad, fmt.Sprintf("%s:%d: species: %s is not in the model", l.File, l.Row, l.Species))
			continue
		}
		if !p.Model.HasLevel(si, l.VUp) || !p.Model.HasLevel(si, l.VLo) {
			bad = append(bad, fmt.Sprintf("%s:%d: v: the model has no parameters for v=%d or v=%d of %s", l.File, l.Row, l.VUp, l.VLo, l.Species))
			continue
		}
		w.sp[i] = si
		fi, ok := fileIdx[l.File]
		if !ok {
			fi = len(w.files)
			fileIdx[l.File] = fi
			w.files = append(w.files, l.File)
		}
		w.file[i] = fi
		w.obs[i] = l.Wavenumber()
		w.unc[i] = l.UncWavenumber()
		w.used[i] = true
	}
	if len(bad) > 0 {
		if len(bad) > 20 {
			bad = append(bad[:20], fmt.Sprintf("… and %d more", len(bad)-20))
		}
		return nil, errors.New("fit: " + strings.Join(bad, "\nfit: "))
	}
	w.kappa = make([]float64, len(w.files))
	if s.Calibrate {
		if len(w.files) < 2 {
			return nil, errors.New("fit: --calibrate needs lines from at least two files (the first is the reference)")
		}
		for f := 1; f < len(w.files); f++ {
			w.kfree = append(w.kfree, f)
		}
	}
	return w, nil
}

// freeNow lists the model parameters that float in the current solve.
func (w *work) freeNow() []int {
	if len(w.fixedIdx) == 0 {
		return w.free
	}
	var out []int
	for _, j := range w.free {
		if !w.fixedIdx[j] {
			out = append(out, j)
		}
	}
	return out
}

// design makes the rows of the problem linearised at the current values: the
// columns are the free model parameters (in the order given) and then the
// floated calibration factors.
type design struct {
	w      *work
	free   []int
	kcol   []int // column of κ of each file, -1 when it is not floated
	names  []string
	dnu    []float64 // ∂ν/∂p of the current line
	s1, s2 []float64 // scratch of work.transition
}

func (w *work) newDesign(free []int) *design {
	d := &design{w: w, free: free, kcol: make([]int, len(w.files))}
	d.names = make([]string, 0, len(free)+len(w.kfree))
	for _, j := range free {
		d.names = append(d.names, w.params[j].ID())
	}
	for i := range d.kcol {
		d.kcol[i] = -1
	}
	for c, f := range w.kfree {
		d.kcol[f] = len(free) + c
		d.names = append(d.names, "kappa["+w.files[f]+"]")
	}
	d.dnu = make([]float64, len(w.params))
	if w.tm == nil {
		d.s1 = make([]float64, len(w.params))
		d.s2 = make([]float64, len(w.params))
	}
	return d
}

// row fills dst (one entry per column) with the derivatives of the calculated
// position c_i = (1+κ_f)·ν_i of line i, ν_i = E(upper) − E(lower):
// ∂c_i/∂p_j = (1+κ_f)(∂E′/∂p_j − ∂E″/∂p_j) and ∂c_i/∂κ_f = ν_i (zero for the
// other files), and returns o−c and unc of the line (cm⁻¹).
func (d *design) row(i int, dst []float64) (float64, float64) {
	w := d.w
	nu, _ := w.transition(i, d.dnu, d.s1, d.s2)
	fac := 1 + w.kappa[w.file[i]]
	for c, j := range d.free {
		dst[c] = fac * d.dnu[j]
	}
	for _, f := range w.kfree {
		dst[d.kcol[f]] = 0
	}
	if k := d.kcol[w.file[i]]; k >= 0 {
		dst[k] = nu
	}
	return w.obs[i] - fac*nu, w.unc[i]
}

// solve performs Gauss–Newton from the current values until the step is
// negligible (one step for a linear problem) on the lines in use.
func (w *work) solve() error {
	w.omcOK = false
	free := w.freeNow()
	// The lines in use; the slice is kept for the next solve (one per
	// rejection pass) instead of growing a new one each time.
	rows := w.rows[:0]
	for i, u := range w.used {
		if u {
			rows = append(rows, i)
		}
	}
	w.rows = rows
	ncol := len(free) + len(w.kfree)
	if len(rows) < ncol {
		return &CannotFitError{fmt.Sprintf("fit: %d lines in use for %d fitted parameters; a fit needs at least as many lines as parameters", len(rows), ncol)}
	}
	d := w.newDesign(free)
	prob := lsq.Problem{
		Rows: len(rows), Cols: ncol, Names: d.names,
		Row: func(r int, dst []float64) (float64, float64) {
			return d.row(rows[r], dst)
		},
		// Each call gets its own design scratch, so lsq may fold the two
		// halves of a large problem on the two cores.
		NewRow: func() func(int, []float64) (float64, float64) {
			dd := w.newDesign(free)
			return func(r int, dst []float64) (float64, float64) { return dd.row(rows[r], dst) }
		},
	}
	const maxIter = 30
	prev := math.Inf(1)
	for it := 0; it < maxIter; it++ {
		res, err := lsq.Solve(prob, lsq.Settings{RankTolerance: w.s.RankTolerance})
		if err != nil {
			var re *lsq.RankError
			if errors.As(err, &re) {
				return w.undetermined(re)
			}
			return fmt.Errorf("fit: %w", err)
		}
		w.iter++
		step := 0.0 // largest |Δx_c|/σ_c of this step
		for c, j := range free {
			d := res.X[c]
			w.values[j] += d
			step = math.Max(step, stepRatio(d, res, c))
		}
		for c, f := range w.kfree {
			d := res.X[len(free)+c]
			w.kappa[f] += d
			step = math.Max(step, stepRatio(d, res, len(free)+c))
		}
		w.res = res
		// A linear problem is solved exactly by its first step. With
		// calibration, stop once the step is far below the uncertainty:
		// below stepConverged σ, or below stepStalled σ and no longer
		// shrinking — the rounding floor of the solution, which for
		// well-measured lines lies near 1e-7 σ and cannot be passed.
		if len(w.kfree) == 0 || step <= stepConverged || (step <= stepStalled && step > prev/2) {
			return nil
		}
		prev = step
	}
	w.status = IterationLimit
	w.warn = append(w.warn, fmt.Sprintf("Gauss–Newton refinement of the calibration factors stopped after %d iterations without its steps falling below %g σ", maxIter, stepConverged))
	return nil
}

// Convergence of the Gauss–Newton steps, in units of each parameter's σ.
const (
	stepConverged = 1e-6
	stepStalled   = 1e-3
)

// stepRatio returns |d|/σ_c with σ_c from the unscaled covariance of r.
func stepRatio(d float64, r *lsq.Result, c int) float64 {
	return math.Abs(d) / math.Sqrt(r.Cov.At(c, c))
}

// run fits with iterative rejection.
func (w *work) run() error {
	n := len(w.p.Lines)
	maxRej := int(math.Floor(w.s.maxRejectFraction() * float64(n)))
	if len(w.kfree) > 0 {
		// Gauss–Newton needs a starting point where ∂ν/∂κ = ν is not zero:
		// solve the linear problem with every κ at 0 first.
		kf := w.kfree
		w.kfree = nil
		err := w.solve()
		w.kfree = kf
		if err != nil {
			return err
		}
	}
	for {
		if err := w.solve(); err != nil {
			return err
		}
		if !(w.s.Reject > 0) {
			return nil
		}
		sd := w.sigma()
		if !(sd > 0) {
			return nil
		}
		thr := w.s.Reject * sd
		rejected := n - w.countUsed()
		type cand struct {
			i int
			z float64
		}
		var cs []cand
		for i := range w.p.Lines {
			if !w.used[i] {
				continue
			}
			res := math.Abs(w.omc[i])
			if res <= w.floor[i] {
				// Within the rounding error of the calculation: on data the
				// model reproduces exactly, s itself is rounding noise and
				// Reject·s no measure of an outlier.
				continue
			}
			z := res / w.unc[i]
			if z > thr {
				cs = append(cs, cand{i, z})
			}
		}
		if len(cs) == 0 {
			return nil
		}
		sort.Slice(cs, func(a, b int) bool { return cs[a].z > cs[b].z })
		room := maxRej - rejected
		capped := false
		if len(cs) > room {
			cs = cs[:max(room, 0)]
			capped = true
		}
		for _, c := range cs {
			w.used[c.i] = false
			w.reason[c.i] = fmt.Sprintf("rejected: |o−c|/unc = %.2f > %.2f (%.1f × s)", c.z, thr, w.s.Reject)
		}
		if capped {
			w.status = RejectionCapped
			w.warn = append(w.warn, fmt.Sprintf("more lines exceed the rejection threshold (%.1f × s) than the cap of %.0f %% allows; the worst %d were rejected and the rest kept — check the assignment", w.s.Reject, 100*w.s.maxRejectFraction(), maxRej))
			if len(cs) > 0 {
				if err := w.solve(); err != nil {
					return err
				}
			}
			return nil
		}
	}
}

func (w *work) countUsed() int {
	c := 0
	for _, u := range w.used {
		if u {
			c++
		}
	}
	return c
}

// roundoff is the relative size, 1024 ε, below which a residual cannot be told
// from the rounding error of the terms it is computed from.
const roundoff = 1024 * 0x1p-52

// transition returns ν = E′ − E″ of line i (cm⁻¹) at the current values and
// the magnitude Σ_j |∂ν/∂p_j·p_j| of the terms it is summed from, and, when
// dnu is not nil, stores ∂ν/∂p_j there (len(params)). The models are linear in
// p, so ν = Σ_j (∂ν/∂p_j)·p_j: a term common to both levels — T_v and the
// vibrational Y_k0 of a pure-rotation line — cancels exactly, instead of
// leaving the rounding error of two energies of thousands of cm⁻¹ in a line
// of a few cm⁻¹. Models that implement model.Transitioner evaluate this
// directly; for others it is formed from the two energy gradients in the
// scratch slices s1, s2 (len(params)).
func (w *work) transition(i int, dnu, s1, s2 []float64) (nu, mag float64) {
	l := &w.p.Lines[i]
	if w.tm != nil {
		return w.tm.Transition(w.sp[i], l.VUp, l.JUp, l.VLo, l.JLo, w.values, dnu)
	}
	m := w.p.Model
	m.Energy(w.sp[i], l.VUp, l.JUp, w.values, s1)
	m.Energy(w.sp[i], l.VLo, l.JLo, w.values, s2)
	for j, v := range w.values {
		d := s1[j] - s2[j]
		if dnu != nil {
			dnu[j] = d
		}
		t := d * v
		nu += t
		mag += math.Abs(t)
	}
	return nu, mag
}

// residuals computes o−c (cm⁻¹) of every line at the current values into
// w.omc, and into w.floor the size below which it is rounding noise:
// roundoff·(|ν_obs| + Σ_j |∂ν/∂p_j·p_j|). The pass is made once per set of
// values (solve and round mark it stale).
func (w *work) residuals() {
	if w.omcOK {
		return
	}
	n := len(w.p.Lines)
	if len(w.omc) != n {
		w.omc = make([]float64, n)
		w.floor = make([]float64, n)
	}
	if w.tm == nil && len(w.s1) != len(w.params) {
		w.s1 = make([]float64, len(w.params))
		w.s2 = make([]float64, len(w.params))
	}
	for i := range w.p.Lines {
		nu, mag := w.transition(i, nil, w.s1, w.s2)
		fac := 1 + w.kappa[w.file[i]]
		w.omc[i] = w.obs[i] - fac*nu
		w.floor[i] = roundoff * (math.Abs(w.obs[i]) + math.Abs(fac)*mag)
	}
	w.omcOK = true
}

// calc returns the calculated position (1+κ_f)ν of line i in cm⁻¹ at the
// current values.
func (w *work) calc(i int) float64 {
	w.residuals()
	return w.obs[i] - w.omc[i]
}

// sigma returns the dimensionless standard deviation √(χ²/dof) of the current
// solution, or NaN when dof = 0.
func (w *work) sigma() float64 {
	chi2, dof := w.chi2()
	if dof <= 0 {
		return math.NaN()
	}
	return math.Sqrt(chi2 / float64(dof))
}

// chi2 returns χ² = Σ ((o−c)/unc)² over the used lines and the degrees of
// freedom at the current values.
func (w *work) chi2() (float64, int) {
	w.residuals()
	chi2 := 0.0
	n := 0
	for i, u := range w.used {
		if u {
			z := w.omc[i] / w.unc[i]
			chi2 += z * z
			n++
		}
	}
	return chi2, n - len(w.freeNow()) - len(w.kfree)
}

// result assembles the Result of the current solution.
func (w *work) result() *Result {
	r := &Result{Model: w.p.Model, Files: w.files, Status: w.status}
	chi2, dof := w.chi2()
	s := 1.0
	if dof > 0 {
		s = math.Sqrt(chi2 / float64(dof))
	} else {
		w.warn = append(w.warn, "no degrees of freedom (as many lines as parameters): uncertainties are not scaled by the fit's standard deviation and the residuals cannot test the model")
	}
	nc := w.res.Cov.SymmetricDim()
	r.Cov = mat.NewSymDense(nc, nil)
	r.Cov.ScaleSym(s*s, w.res.Cov)
	r.Params = make([]model.Param, len(w.params))
	copy(r.Params, w.params)
	for j := range r.Params {
		r.Params[j].Value = w.values[j]
		r.Params[j].Sigma = 0
	}
	r.Free = append([]int(nil), w.free...)
	for c, j := range r.Free {
		r.Params[j].Sigma = math.Sqrt(r.Cov.At(c, c))
	}
	kc := len(r.Free)
	for f, file := range w.files {
		c := Calibration{File: file, Kappa: w.kappa[f], Fixed: true}
		if w.s.Calibrate && f > 0 {
			c.Fixed = false
			c.Sigma = math.Sqrt(r.Cov.At(kc, kc))
			kc++
		}
		if w.s.Calibrate {
			r.Calib = append(r.Calib, c)
		}
	}
	r.Lines = make([]LineResult, len(w.p.Lines))
	var sumCm, sumMHz float64
	var nMHz int
	for i, l := range w.p.Lines {
		c := w.calc(i)
		omc := w.obs[i] - c
		lr := LineResult{Used: w.used[i], Reason: w.reason[i]}
		if l.Unit == linelist.MHz {
			lr.Calc = c * units.MHzPerWavenumber
			lr.OmC = l.Position - lr.Calc
		} else {
			lr.Calc = c
			lr.OmC = l.Position - c
		}
		lr.Norm = lr.OmC / l.Unc
		r.Lines[i] = lr
		if w.used[i] {
			sumCm += omc * omc
			if l.Unit == linelist.MHz {
				sumMHz += lr.OmC * lr.OmC
				nMHz++
			}
		}
	}
	r.Bands, r.Observed = coverage(w.p.Lines, w.used)
	used := w.countUsed()
	r.Stats = constants.Stats{
		Lines: len(w.p.Lines), Used: used, Rejected: len(w.p.Lines) - used,
		Params: nc, DOF: dof, Chi2: chi2, Sigma: s,
		RMSCm:     math.Sqrt(sumCm / float64(max(used, 1))),
		Condition: w.res.Condition, Iter: w.iter,
	}
	if dof <= 0 {
		r.Stats.Sigma = math.NaN()
	}
	if nMHz > 0 {
		r.Stats.RMSMHz = math.Sqrt(sumMHz / float64(nMHz))
		r.Stats.LinesMHz = nMHz
	}
	r.Warnings = append(r.Warnings, w.warn...)
	r.Warnings = append(r.Warnings, significanceWarnings(r)...)
	return r
}

// significanceWarnings flags parameters with |value|/σ < 3 and pairs with
// |correlation| > 0.999.
func significanceWarnings(r *Result) []string {
	var out []string
	for _, j := range r.Free {
		p := r.Params[j]
		if p.Sigma > 0 && math.Abs(p.Value) < 3*p.Sigma {
			out = append(out, fmt.Sprintf("%s = %s is less than 3σ from zero: the data barely determine it; consider removing it or fixing it at a literature value", p.ID(), constants.FormatParen(p.Value, p.Sigma)))
		}
	}
	names := r.CovNames()
	c := r.Correlation()
	for i := 0; i < len(names); i++ {
		for j := i + 1; j < len(names); j++ {
			if math.Abs(c.At(i, j)) > 0.999 {
				out = append(out, fmt.Sprintf("%s and %s are correlated at %.5f: their individual values are poorly defined", names[i], names[j], c.At(i, j)))
			}
		}
	}
	return out
}

// undetermined turns a rank error of the engine into a message naming the
// parameters and the data that would determine them.
func (w *work) undetermined(re *lsq.RankError) error {
	e := &UndeterminedError{Groups: re.Names}
	seen := map[string]bool{}
	for _, g := range re.Names {
		for _, id := range g {
			h := hintFor(id, w)
			if h != "" && !seen[h] {
				seen[h] = true
				e.Hints = append(e.Hints, h)
			}
		}
	}
	return e
}

func hintFor(id string, w *work) string {
	switch {
	case strings.HasPrefix(id, "kappa["):
		return "A calibration factor needs lines in that file that are also measured in the reference file or tied to it through the model."
	case strings.HasPrefix(id, "T_v"):
		return "A term value T_v needs a band that connects level v to another level of the same isotopologue (a vibrational band, not only pure-rotation lines within v)."
	case strings.HasPrefix(id, "B_v"):
		return "B_v needs lines with J > 0 in level v."
	case strings.HasPrefix(id, "D_v"), strings.HasPrefix(id, "H_v"), strings.HasPrefix(id, "L_v"):
		return "Centrifugal-distortion terms need lines over a wider J range (higher J) in that level."
	case strings.HasPrefix(id, "BOB"):
		return "A Born–Oppenheimer-breakdown term of element X needs isotopologues that differ in the isotope of X, measured well enough to separate the breakdown from the mass scaling."
	case strings.HasPrefix(id, "Y"):
		k, l, err := model.ParseDunhamTerm(id)
		if err != nil {
			return ""
		}
		if l == 0 {
			return fmt.Sprintf("Y%d%d needs bands reaching at least %d vibrational levels of one isotopologue (or several isotopologues).", k, l, k+1)
		}
		if k > 0 {
			return fmt.Sprintf("Y%d%d needs rotational structure in at least %d vibrational levels.", k, l, k+1)
		}
		return fmt.Sprintf("Y0%d needs lines reaching higher J.", l)
	}
	return ""
}

// coverage lists the bands and levels reached by the used lines.
func coverage(lines []linelist.Line, used []bool) ([]constants.Band, []constants.LevelRange) {
	type bk struct {
		s      string
		vu, vl int
	}
	type lk struct {
		s string
		v int
	}
	bi := map[bk]int{}
	var bands []constants.Band
	lv := map[lk]int{}
	var levels []constants.LevelRange
	for i, l := range lines {
		if !used[i] {
			continue
		}
		k := bk{l.Species, l.VUp, l.VLo}
		j, ok := bi[k]
		if !ok {
			j = len(bands)
			bi[k] = j
			bands = append(bands, constants.Band{Species: l.Species, VUp: l.VUp, VLo: l.VLo, JMin: l.JLo, JMax: l.JLo})
		}
		b := &bands[j]
		b.Lines++
		b.JMin = min(b.JMin, l.JLo, l.JUp)
		b.JMax = max(b.JMax, l.JLo, l.JUp)
		for _, x := range [][2]int{{l.VUp, l.JUp}, {l.VLo, l.JLo}} {
			k := lk{l.Species, x[0]}
			j, ok := lv[k]
			if !ok {
				j = len(levels)
				lv[k] = j
				levels = append(levels, constants.LevelRange{Species: l.Species, V: x[0], JMax: x[1]})
			}
			levels[j].JMax = max(levels[j].JMax, x[1])
		}
	}
	sort.Slice(bands, func(a, b int) bool {
		if bands[a].Species != bands[b].Species {
			return bands[a].Species < bands[b].Species
		}
		if bands[a].VLo != bands[b].VLo {
			return bands[a].VLo < bands[b].VLo
		}
		return bands[a].VUp < bands[b].VUp
	})
	sort.Slice(levels, func(a, b int) bool {
		if levels[a].Species != levels[b].Species {
			return levels[a].Species < levels[b].Species
		}
		return levels[a].V < levels[b].V
	})
	return bands, levels
}
