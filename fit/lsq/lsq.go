// Package lsq is the weighted linear least-squares engine of bandwright.
//
// It is generic: it knows nothing about spectroscopy. A Problem hands out the
// rows of a design matrix A (Rows×Cols) together with the observations y_i and
// their standard uncertainties σ_i, and Solve finds the parameters x that
// minimise
//
//	χ² = Σ_i ((y_i − Σ_j A_ij x_j) / σ_i)².
//
// The solution is found by Householder QR factorisation of the weighted rows
// (row i divided by σ_i); the normal equations are never formed. Rows are
// processed in blocks (tall-skinny QR, TSQR), so memory does not grow with the
// number of rows. Rank is judged from the singular values of the column-scaled
// triangular factor, and a problem the data cannot determine is reported as a
// *RankError that names the parameters involved.
//
// The covariance in Result is (AᵀWA)⁻¹ with W = diag(1/σ_i²), not scaled by
// the reduced χ²: the caller decides whether the σ_i are trusted absolutely
// (use Result.Sigma) or only relatively (use Result.SigmaScaled).
package lsq

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// Defaults used when the corresponding Settings field is zero.
const (
	// DefaultRankTolerance is the relative singular-value threshold
	// σ_min/σ_max of the column-scaled weighted design matrix below which a
	// problem is declared rank deficient.
	DefaultRankTolerance = 1e-12
	// DefaultBlockRows is the number of rows folded into the triangular
	// factor at a time.
	DefaultBlockRows = 2048
)

// nameWeight is the smallest magnitude of a component of a unit null-space
// vector of the column-scaled design for which the parameter is named in a
// *RankError.
const nameWeight = 0.1

// Problem is a weighted linear least-squares problem: find x (len Cols) that
// minimises
//
//	χ² = Σ_{i=0}^{Rows−1} ((y_i − Σ_j A_ij x_j) / σ_i)².
//
// The units of x_j are those of y divided by those of column j of A.
type Problem struct {
	Rows, Cols int
	// Row fills dst (len Cols) with row i (0 ≤ i < Rows) of the design
	// matrix and returns the observation y_i and its standard uncertainty
	// σ_i (> 0, same unit as y_i). dst is zeroed before each call, so a
	// sparse row need only set its non-zero entries. Row may be called more
	// than once for the same i and must return the same values each time;
	// it must not keep dst.
	Row func(i int, dst []float64) (y, sigma float64)
	// NewRow, when set, returns a row function like Row that is independent
	// of every other one it returns, so two may run at the same time (each
	// with its own scratch space). With it, and at least 2·ParallelRows rows,
	// Solve folds the first and the second half of the rows in two
	// goroutines and merges the two factors. The split is always in two
	// halves, so the result does not depend on the number of CPUs.
	NewRow func() func(i int, dst []float64) (y, sigma float64)
	// Names are the parameter names (len Cols) used in errors. If nil, the
	// parameters are called x0, x1, ….
	Names []string
}

// Settings holds the tolerances of Solve. The zero value is ready to use.
type Settings struct {
	// RankTolerance is the relative singular-value threshold
	// σ_min/σ_max of the column-scaled weighted design matrix: below it
	// the problem is rank deficient. 0 means DefaultRankTolerance (1e-12).
	RankTolerance float64
	// BlockRows is the number of rows per TSQR block. 0 means
	// DefaultBlockRows (2048). Memory use is about 8·(BlockRows+Cols+1)·(Cols+1)
	// bytes whatever the number of rows.
	BlockRows int
}

// Result is the outcome of a successful Solve.
type Result struct {
	// X are the fitted parameters.
	X []float64
	// Cov is the covariance matrix of X, (AᵀWA)⁻¹ with W = diag(1/σ_i²).
	// It is NOT scaled by the reduced χ² (Chi2/DOF): it is the covariance
	// if the σ_i are true standard uncertainties. Whether to scale is the
	// caller's decision; see Sigma and SigmaScaled.
	Cov *mat.SymDense
	// Chi2 is the minimised χ² = Σ_i ((y_i − A_i·x)/σ_i)².
	Chi2 float64
	// DOF is the number of degrees of freedom, Rows − Cols.
	DOF int
	// Condition is the 2-norm condition number σ_max/σ_min of the
	// column-scaled weighted design matrix (each column of A_ij/σ_i
	// scaled to unit Euclidean norm).
	Condition float64
}

// Sigma returns the standard uncertainties of X taken from the unscaled
// covariance, sqrt(Cov_jj): right when the σ_i of the rows are true 1σ
// uncertainties.
func (r *Result) Sigma() []float64 {
	n := len(r.X)
	s := make([]float64, n)
	for j := range s {
		s[j] = math.Sqrt(r.Cov.At(j, j))
	}
	return s
}

// SigmaScaled returns the standard uncertainties of X scaled by the
// reduced χ², sqrt(Cov_jj · Chi2/DOF): right when the σ_i of the rows are
// only relative weights. With DOF = 0 the reduced χ² is undefined and every
// entry is NaN.
func (r *Result) SigmaScaled() []float64 {
	s := r.Sigma()
	if r.DOF <= 0 {
		for j := range s {
			s[j] = math.NaN()
		}
		return s
	}
	f := math.Sqrt(r.Chi2 / float64(r.DOF))
	for j := range s {
		s[j] *= f
	}
	return s
}

// Correlation returns the correlation matrix of a covariance matrix,
// ρ_jk = C_jk / √(C_jj C_kk). It is the one correlation rule of bandwright
// (records, reports, warnings). A parameter with zero variance — held exactly
// by the fit, or with a zero row in a record — is uncorrelated with every
// other: ρ_jk = 0 for k ≠ j and ρ_jj = 1, so the matrix stays finite (JSON
// has no NaN) and a zero row of the covariance stays a zero row. A negative
// or NaN variance is not a covariance: its row and column are NaN.
func Correlation(cov *mat.SymDense) *mat.SymDense {
	n := cov.SymmetricDim()
	d := make([]float64, n)
	for j := range d {
		switch v := cov.At(j, j); {
		case v >= 0:
			d[j] = math.Sqrt(v)
		default:
			d[j] = math.NaN()
		}
	}
	c := mat.NewSymDense(n, nil)
	for j := 0; j < n; j++ {
		for k := j; k < n; k++ {
			var r float64
			switch {
			case math.IsNaN(d[j]) || math.IsNaN(d[k]):
				r = math.NaN()
			case j == k:
				r = 1
			case d[j] == 0 || d[k] == 0:
				r = 0
			default:
				r = cov.At(j, k) / math.Sqrt(cov.At(j, j)*cov.At(k, k))
			}
			c.SetSym(j, k, r)
		}
	}
	return c
}

// Errors wrapped by a *RowError.
var (
	// ErrBadSigma: a σ_i that is not finite and > 0.
	ErrBadSigma = errors.New("standard uncertainty must be finite and > 0")
	// ErrNonFinite: a NaN or infinite observation or design value.
	ErrNonFinite = errors.New("value is not finite")
)

// RowError reports a bad value in one row of a Problem.
type RowError struct {
	Row   int     // row index i as passed to Problem.Row (0-based)
	Field string  // "y", "sigma", or the name of the design-matrix column
	Value float64 // the offending value
	Err   error   // ErrBadSigma or ErrNonFinite
}

func (e *RowError) Error() string {
	switch e.Field {
	case "sigma":
		return fmt.Sprintf("lsq: row %d: sigma: %v, got %g", e.Row, e.Err, e.Value)
	case "y":
		return fmt.Sprintf("lsq: row %d: observation y: %v (%g)", e.Row, e.Err, e.Value)
	default:
		return fmt.Sprintf("lsq: row %d, column %s: design-matrix %v (%g)", e.Row, e.Field, e.Err, e.Value)
	}
}

func (e *RowError) Unwrap() error { return e.Err }

// RankError reports parameters that the data cannot determine: the
// column-scaled weighted design matrix has singular values below
// RankTolerance·σ_max. Each such singular value has a right singular vector
// v (a null direction): moving the parameters along it leaves the fit
// (almost) unchanged.
type RankError struct {
	// Names lists, for each null direction, the parameters whose
	// component in the column-scaled null vector has magnitude ≥ 0.1,
	// strongest first. The scaled vector is unit-free, so the choice does
	// not depend on the units of the parameters.
	Names [][]string
	// Vectors are the null directions in unscaled parameter space
	// (x + t·v fits the data equally well for any small t), with unit
	// Euclidean norm and largest component positive.
	Vectors [][]float64
	// Ratio is σ_min/σ_max of the column-scaled weighted design.
	Ratio float64
	// Tolerance is the RankTolerance in force.
	Tolerance float64
}

func (e *RankError) Error() string {
	var b strings.Builder
	b.WriteString("lsq: the data cannot determine ")
	for k, names := range e.Names {
		if k > 0 {
			b.WriteString(", nor ")
		}
		b.WriteString("{" + strings.Join(names, ", ") + "}")
		if len(names) == 1 {
			b.WriteString(" (the data hardly depend on it)")
		} else {
			b.WriteString(" separately (the data fix only a combination of them)")
		}
	}
	fmt.Fprintf(&b, "; the ratio of smallest to largest singular value of the column-scaled design is %.3g, below the rank tolerance %.3g: fix or remove a parameter, or add data that separates them",
		e.Ratio, e.Tolerance)
	return b.String()
}

// ParallelRows is the number of rows per half from which Solve folds the two
// halves of a problem with NewRow concurrently.
const ParallelRows = 16384

// factor returns the upper-triangular factor R ((Cols+1)×(Cols+1), row-major)
// of the weighted augmented rows [A_i/σ_i | y_i/σ_i], serially or, with
// p.NewRow and enough rows, as the factor of [R₁; R₂] of the two halves.
func factor(p Problem, block int) ([]float64, error) {
	n := p.Cols
	fold := func(row func(int, []float64) (float64, float64), from, to int) (*tsqr, error) {
		acc := newTSQR(n+1, block)
		for i := from; i < to; i++ {
			dst := acc.next()
			y, sigma := row(i, dst[:n])
			if err := weightRow(p, i, dst, y, sigma); err != nil {
				return nil, err
			}
		}
		acc.finish()
		return acc, nil
	}
	if p.NewRow == nil || p.Rows < 2*ParallelRows {
		acc, err := fold(p.Row, 0, p.Rows)
		if err != nil {
			return nil, err
		}
		return acc.finish(), nil
	}
	half := p.Rows / 2
	var second *tsqr
	var err2 error
	done := make(chan struct{})
	row2 := p.NewRow()
	go func() {
		defer close(done)
		second, err2 = fold(row2, half, p.Rows)
	}()
	first, err1 := fold(p.NewRow(), 0, half)
	<-done
	// Report the error of the lowest row, as the serial fold would.
	if err1 != nil {
		return nil, err1
	}
	if err2 != nil {
		return nil, err2
	}
	r2 := second.finish()
	m := n + 1
	for i := 0; i < m; i++ {
		copy(first.next(), r2[i*m:(i+1)*m])
	}
	return first.finish(), nil
}

// paramName returns the name of parameter j.
func paramName(names []string, j int) string {
	if names != nil {
		return names[j]
	}
	return fmt.Sprintf("x%d", j)
}

// finite reports whether v is neither NaN nor ±Inf: v−v is 0 for every
// finite v and NaN otherwise (one subtraction instead of two tests).
func finite(v float64) bool { return v-v == 0 }

// Solve minimises χ² = Σ_i ((y_i − Σ_j A_ij x_j)/σ_i)² for the Problem p.
//
// Method: the weighted augmented rows [A_i/σ_i | y_i/σ_i] are folded, BlockRows
// at a time, into an upper-triangular (Cols+1)×(Cols+1) factor R by Householder
// QR of [R; block]. At the end R[:p,:p] is the triangular factor of the
// weighted design A_w, R[:p,p] = Qᵀy_w and χ² = R[p,p]². The columns of R
// (whose norms equal those of A_w) are scaled to unit norm, S = diag(1/‖a_j‖);
// the singular values of R·S decide the rank. If full rank,
// x = S (RS)⁻¹ Qᵀy_w and Cov = S (RS)⁻¹ (RS)⁻ᵀ S = (A_wᵀA_w)⁻¹, from the
// triangular inverse.
//
// Errors: Rows < Cols; a σ_i that is not finite and > 0, or a non-finite y_i
// or A_ij (a *RowError naming the row and column); parameters the data cannot
// determine (a *RankError naming them).
func Solve(p Problem, s Settings) (*Result, error) {
	if err := checkProblem(p); err != nil {
		return nil, err
	}
	tol := s.RankTolerance
	if tol == 0 {
		tol = DefaultRankTolerance
	}
	if !(tol > 0 && tol < 1) {
		return nil, fmt.Errorf("lsq: rank tolerance must be in (0, 1), got %g", s.RankTolerance)
	}
	block := s.BlockRows
	if block == 0 {
		block = DefaultBlockRows
	}
	if block < 0 {
		return nil, fmt.Errorf("lsq: block rows must be >= 0, got %d", s.BlockRows)
	}

	n := p.Cols
	R, err := factor(p, block)
	if err != nil {
		return nil, err
	}

	res := &Result{
		Chi2: R[n*(n+1)+n] * R[n*(n+1)+n],
		DOF:  p.Rows - p.Cols,
	}

	// Column norms of A_w equal those of R[:n,:n]; scale them to unit norm.
	ld := n + 1
	scale := make([]float64, n) // S_jj = 1/‖a_j‖ (1 for a zero column)
	rs := mat.NewDense(n, n, nil)
	for j := 0; j < n; j++ {
		nrm := blas64.Nrm2(blas64.Vector{N: j + 1, Inc: ld, Data: R[j:]})
		scale[j] = 1
		if nrm > 0 {
			scale[j] = 1 / nrm
		}
		for i := 0; i <= j; i++ {
			rs.Set(i, j, R[i*ld+j]*scale[j])
		}
	}

	var svd mat.SVD
	if !svd.Factorize(rs, mat.SVDFull) {
		return nil, errors.New("lsq: singular value decomposition of the scaled triangular factor did not converge")
	}
	sv := svd.Values(nil)
	sMax, sMin := sv[0], sv[n-1]
	ratio := 0.0
	if sMax > 0 {
		ratio = sMin / sMax
	}
	if !(ratio >= tol) {
		var v mat.Dense
		svd.VTo(&v)
		return nil, rankError(p, &v, sv, scale, ratio, tol)
	}
	res.Condition = sMax / sMin

	// x = S (RS)⁻¹ Qᵀy: back substitution with the upper-triangular RS.
	tri := blas64.Triangular{Uplo: blas.Upper, Diag: blas.NonUnit, N: n, Stride: n, Data: rs.RawMatrix().Data}
	z := make([]float64, n)
	for i := range z {
		z[i] = R[i*ld+n]
	}
	blas64.Trsv(blas.NoTrans, tri, blas64.Vector{N: n, Inc: 1, Data: z})
	res.X = make([]float64, n)
	for j := range z {
		res.X[j] = z[j] * scale[j]
	}

	// Cov = S (RS)⁻¹ (RS)⁻ᵀ S.
	if ok := lapack64.Trtri(tri); !ok {
		return nil, errors.New("lsq: scaled triangular factor is singular although its singular values passed the rank test")
	}
	var inv mat.TriDense
	inv.SetRawTriangular(tri)
	cov := mat.NewSymDense(n, nil)
	cov.SymOuterK(1, &inv)
	for j := 0; j < n; j++ {
		for k := j; k < n; k++ {
			cov.SetSym(j, k, cov.At(j, k)*scale[j]*scale[k])
		}
	}
	res.Cov = cov
	return res, nil
}

// checkProblem validates the shape of p.
func checkProblem(p Problem) error {
	switch {
	case p.Cols <= 0:
		return fmt.Errorf("lsq: number of parameters must be > 0, got %d", p.Cols)
	case p.Rows < p.Cols:
		return fmt.Errorf("lsq: %d rows cannot determine %d parameters: need at least as many rows as parameters", p.Rows, p.Cols)
	case p.Row == nil:
		return errors.New("lsq: problem has no Row function")
	case p.Names != nil && len(p.Names) != p.Cols:
		return fmt.Errorf("lsq: %d parameter names given for %d parameters", len(p.Names), p.Cols)
	}
	return nil
}

// weightRow checks row i (dst[:Cols] holding A_i, y and sigma as returned
// by Row) and turns dst into the weighted augmented row [A_i/σ_i, y_i/σ_i].
func weightRow(p Problem, i int, dst []float64, y, sigma float64) error {
	n := p.Cols
	if !finite(sigma) || sigma <= 0 {
		return &RowError{Row: i, Field: "sigma", Value: sigma, Err: ErrBadSigma}
	}
	if !finite(y) {
		return &RowError{Row: i, Field: "y", Value: y, Err: ErrNonFinite}
	}
	for j, a := range dst[:n] {
		if !finite(a) {
			return &RowError{Row: i, Field: paramName(p.Names, j), Value: a, Err: ErrNonFinite}
		}
	}
	dst[n] = y
	if sigma != 1 {
		w := 1 / sigma
		for j := range dst {
			dst[j] *= w
		}
		if math.IsInf(w, 0) || !finite(dst[n]) {
			return &RowError{Row: i, Field: "sigma", Value: sigma, Err: fmt.Errorf("%w: weighted row overflows", ErrBadSigma)}
		}
		for j, a := range dst[:n] {
			if !finite(a) {
				return &RowError{Row: i, Field: "sigma", Value: sigma, Err: fmt.Errorf("%w: weighted value of column %s overflows", ErrBadSigma, paramName(p.Names, j))}
			}
		}
	}
	return nil
}

// rankError builds the *RankError from the SVD of R·S.
func rankError(p Problem, v *mat.Dense, sv, scale []float64, ratio, tol float64) *RankError {
	n := len(sv)
	e := &RankError{Ratio: ratio, Tolerance: tol}
	sMax := sv[0]
	// Weakest direction first.
	for k := n - 1; k >= 0; k-- {
		if sMax > 0 && sv[k] >= tol*sMax {
			break
		}
		type comp struct {
			j int
			w float64
		}
		var cs []comp
		best := comp{j: -1}
		for j := 0; j < n; j++ {
			w := math.Abs(v.At(j, k))
			if w >= nameWeight {
				cs = append(cs, comp{j, w})
			}
			if w > best.w {
				best = comp{j, w}
			}
		}
		if len(cs) == 0 && best.j >= 0 {
			cs = append(cs, best)
		}
		sort.SliceStable(cs, func(a, b int) bool { return cs[a].w > cs[b].w })
		names := make([]string, len(cs))
		for m, c := range cs {
			names[m] = paramName(p.Names, c.j)
		}
		// Back to unscaled parameter space: A_w S v ≈ 0 ⇒ A_w (S v) ≈ 0.
		d := make([]float64, n)
		var big float64
		for j := range d {
			d[j] = v.At(j, k) * scale[j]
			if math.Abs(d[j]) > math.Abs(big) {
				big = d[j]
			}
		}
		nrm := blas64.Nrm2(blas64.Vector{N: n, Inc: 1, Data: d})
		if nrm > 0 {
			f := 1 / nrm
			if big < 0 {
				f = -f
			}
			for j := range d {
				d[j] *= f
			}
		}
		e.Names = append(e.Names, names)
		e.Vectors = append(e.Vectors, d)
	}
	return e
}

// Residuals returns r_i = y_i − Σ_j A_ij x_j for every row of p, in the unit
// of y (not divided by σ_i), computed in one pass over the rows. dst is
// reused if it has capacity for p.Rows values. Residuals panics if
// len(x) != p.Cols (a programming error, not a data error).
func Residuals(p Problem, x []float64, dst []float64) []float64 {
	if len(x) != p.Cols {
		panic(fmt.Sprintf("lsq: Residuals: %d parameter values for %d columns", len(x), p.Cols))
	}
	if cap(dst) >= p.Rows {
		dst = dst[:p.Rows]
	} else {
		dst = make([]float64, p.Rows)
	}
	row := make([]float64, p.Cols)
	for i := range dst {
		clear(row)
		y, _ := p.Row(i, row)
		var ax float64
		for j, a := range row {
			ax += a * x[j]
		}
		dst[i] = y - ax
	}
	return dst
}

// DenseProblem wraps a dense design matrix A (Rows×Cols), observations y
// (len Rows) and standard uncertainties sigma (len Rows; nil means σ_i = 1
// for every row) as a Problem. names may be nil. The slices and A are used
// in place, not copied. DenseProblem panics if the lengths do not match A
// (a programming error).
func DenseProblem(A *mat.Dense, y, sigma []float64, names []string) Problem {
	r, c := A.Dims()
	if len(y) != r || (sigma != nil && len(sigma) != r) || (names != nil && len(names) != c) {
		panic(fmt.Sprintf("lsq: DenseProblem: A is %d×%d but len(y)=%d, len(sigma)=%d, len(names)=%d",
			r, c, len(y), len(sigma), len(names)))
	}
	return Problem{
		Rows:  r,
		Cols:  c,
		Names: names,
		Row: func(i int, dst []float64) (float64, float64) {
			mat.Row(dst, i, A)
			if sigma == nil {
				return y[i], 1
			}
			return y[i], sigma[i]
		},
	}
}
