package lsq

import (
	"errors"
	"math"
	"testing"
)

// polyRow is a weighted polynomial design (Chebyshev-like powers of t in
// [−1, 1]) with a smooth observation; it allocates nothing and keeps no state,
// so one function serves as Row and as every NewRow result.
func polyRow(rows int, badRow int) func(i int, dst []float64) (float64, float64) {
	return func(i int, dst []float64) (float64, float64) {
		t := 2*float64(i)/float64(rows-1) - 1
		p := 1.0
		for j := range dst {
			dst[j] = p
			p *= t
		}
		sigma := 0.5 + 0.25*math.Sin(float64(i))
		if i == badRow {
			sigma = -1
		}
		return math.Exp(t) + 1e-3*math.Cos(37*float64(i)), sigma
	}
}

// TestParallelHalvesMatchSerial: folding the two halves concurrently and
// merging their factors gives the serial solution (the factor of the same
// rows in another order: equal up to rounding).
func TestParallelHalvesMatchSerial(t *testing.T) {
	const rows, cols = 2*ParallelRows + 1001, 7
	serial := Problem{Rows: rows, Cols: cols, Row: polyRow(rows, -1)}
	par := serial
	par.NewRow = func() func(int, []float64) (float64, float64) { return polyRow(rows, -1) }
	a, err := Solve(serial, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Solve(par, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for j := range a.X {
		if d := math.Abs(a.X[j]-b.X[j]) / math.Max(math.Abs(a.X[j]), 1e-300); d > 1e-10 {
			t.Errorf("x%d: serial %v, halves %v (rel %g)", j, a.X[j], b.X[j], d)
		}
		if d := math.Abs(a.Cov.At(j, j)-b.Cov.At(j, j)) / a.Cov.At(j, j); d > 1e-10 {
			t.Errorf("var x%d: serial %v, halves %v", j, a.Cov.At(j, j), b.Cov.At(j, j))
		}
	}
	if d := math.Abs(a.Chi2-b.Chi2) / a.Chi2; d > 1e-9 {
		t.Errorf("chi2: serial %v, halves %v", a.Chi2, b.Chi2)
	}
	// The result does not depend on how often it is run (fixed split).
	c, _ := Solve(par, Settings{})
	for j := range b.X {
		if b.X[j] != c.X[j] {
			t.Fatalf("two parallel solves differ at x%d", j)
		}
	}
}

// TestParallelReportsRowErrors: a bad σ in either half is reported with its
// row number, as in the serial fold.
func TestParallelReportsRowErrors(t *testing.T) {
	const rows, cols = 2*ParallelRows + 10, 3
	for _, bad := range []int{17, ParallelRows + 500} {
		p := Problem{Rows: rows, Cols: cols, Row: polyRow(rows, bad)}
		p.NewRow = func() func(int, []float64) (float64, float64) { return polyRow(rows, bad) }
		_, err := Solve(p, Settings{})
		var re *RowError
		if !errors.As(err, &re) || re.Row != bad || re.Field != "sigma" {
			t.Errorf("bad row %d: got %v", bad, err)
		}
	}
}
