package fit

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"bandwright/fit/lsq"
	"bandwright/fit/model"
)

// The solver of a fit: the weighted design rows, the QR solve (package lsq)
// and, with calibration factors, its Gauss–Newton refinement, and the
// residuals and χ² at the current values.
//
// Gauss–Newton stays the refinement after a measured comparison with
// gonum/optimize (BFGS over the calibration factors, the model parameters
// solved exactly at each step): both reach the same κ, Gauss–Newton with
// a third of the QR solves in half the time (calibrate_compare_test.go;
// DEVELOPERS.md has the figures).

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
	// unconnected lists the term values held at 0 by holdUnconnected.
	unconnected []int
	// lm is the model when its levels need more than (v, J): electronic
	// states or fine structure (levels.go); up and lo are the levels of
	// each line, nonlinear whether energies are eigenvalues.
	lm        model.LevelModel
	up, lo    []model.Level
	nonlinear bool
	conv      convergence
	// startLimit: the fit of the case-(b) limit (start.go), which gives up
	// on a parameter the lines do not determine instead of damping it.
	startLimit bool
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
	w.setLevelModel()
	for i, l := range p.Lines {
		si, ok := spIdx[l.Species]
		if !ok {
			bad = append(bad, fmt.Sprintf("%s:%d: species: %s is not in the model", l.File, l.Row, l.Species))
			continue
		}
		if why := w.levelsOf(i, si); why != "" {
			bad = append(bad, fmt.Sprintf("%s:%d: %s", l.File, l.Row, why))
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
	w.holdUnconnected()
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

// solve fits the lines in use from the current values: one QR solve for a
// linear problem, Gauss–Newton iterations (damped where needed, see iterate)
// for a nonlinear one.
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
	if len(w.kfree) > 0 || w.nonlinear {
		return w.iterate(free, rows)
	}
	res, err := w.lsqSolve(free, rows, 0, nil)
	if err != nil {
		return err
	}
	w.iter++
	for c, j := range free {
		w.values[j] += res.X[c]
	}
	w.res = res
	w.omcOK = false
	return nil
}

// lsqSolve solves the problem linearised at the current values for the step
// of the free parameters and κ: the design rows of the lines in use and,
// with mu > 0, one damping row √mu·d_c per column (Levenberg–Marquardt as an
// augmented least-squares problem, [J; √mu·D] δ = [r; 0]). A rank error of
// an undamped solve becomes the fit's *UndeterminedError.
func (w *work) lsqSolve(free, rows []int, mu float64, d []float64) (*lsq.Result, error) {
	ncol := len(free) + len(w.kfree)
	n := len(rows)
	damp := 0
	if mu > 0 {
		damp = ncol
	}
	rowFn := func(dd *design) func(int, []float64) (float64, float64) {
		return func(r int, dst []float64) (float64, float64) {
			if r < n {
				return dd.row(rows[r], dst)
			}
			dst[r-n] = math.Sqrt(mu) * d[r-n]
			return 0, 1
		}
	}
	dsg := w.newDesign(free)
	prob := lsq.Problem{
		Rows: n + damp, Cols: ncol, Names: dsg.names,
		Row: rowFn(dsg),
		// Each call gets its own design scratch, so lsq may fold the two
		// halves of a large problem on the two cores.
		NewRow: func() func(int, []float64) (float64, float64) { return rowFn(w.newDesign(free)) },
	}
	res, err := lsq.Solve(prob, lsq.Settings{RankTolerance: w.s.RankTolerance})
	if err != nil {
		var re *lsq.RankError
		if errors.As(err, &re) && mu == 0 {
			return nil, w.undetermined(re)
		}
		return nil, fmt.Errorf("fit: %w", err)
	}
	return res, nil
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
	if w.lm != nil {
		return w.lm.LevelTransition(w.sp[i], w.up[i], w.lo[i], w.values, dnu)
	}
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
