package lsq

import (
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"
)

// tsqr accumulates the upper-triangular factor R of a tall matrix whose rows
// arrive one at a time (tall-skinny QR). The working matrix is
//
//	W = [ R     ]  n rows: the factor so far (zero below the diagonal)
//	    [ block ]  up to b new rows
//
// stored row-major with stride n. When the block is full, W is factorised by
// Householder QR (LAPACK Geqrf) and the upper triangle of its first n rows is
// the new R. Since W = Q·R' with Q orthonormal, R'ᵀR' = RᵀR + blockᵀblock:
// the factor of all rows seen so far. Memory is fixed at (n+b)·n values.
type tsqr struct {
	n, b int
	w    []float64 // (n+b)×n, row-major
	k    int       // rows in the current block
	tau  []float64
	work []float64
}

func newTSQR(n, b int) *tsqr {
	t := &tsqr{n: n, b: b, w: make([]float64, (n+b)*n), tau: make([]float64, n)}
	query := []float64{0}
	lapack64.Geqrf(blas64.General{Rows: n + b, Cols: n, Stride: n, Data: t.w}, t.tau, query, -1)
	t.work = make([]float64, max(int(query[0]), n+b))
	return t
}

// next returns the zeroed slot (len n) for the next row, folding the block
// into R first if it is full.
func (t *tsqr) next() []float64 {
	if t.k == t.b {
		t.fold()
	}
	off := (t.n + t.k) * t.n
	row := t.w[off : off+t.n]
	clear(row)
	t.k++
	return row
}

// fold factorises [R; block] and keeps the new R.
func (t *tsqr) fold() {
	if t.k == 0 {
		return
	}
	n := t.n
	m := n + t.k
	a := blas64.General{Rows: m, Cols: n, Stride: n, Data: t.w[:m*n]}
	lapack64.Geqrf(a, t.tau, t.work, len(t.work))
	// Geqrf leaves the reflectors below the diagonal; R is the upper
	// triangle of the first n rows.
	for i := 1; i < n; i++ {
		clear(t.w[i*n : i*n+i])
	}
	t.k = 0
}

// finish folds the last block and returns R (n×n, row-major, upper
// triangular). The slice aliases the accumulator.
func (t *tsqr) finish() []float64 {
	t.fold()
	return t.w[:t.n*t.n]
}
