package lsq

import (
	"math"
	"testing"
)

// chebProblem is a synthetic polynomial-like problem: row i has the Chebyshev
// polynomials T_0(t)…T_{cols−1}(t) at t ∈ [−1, 1], an observation made from
// known coefficients plus a deterministic wiggle, and a σ that varies with i.
// Everything is generated inside Row, so the problem itself holds no memory.
func chebProblem(rows, cols int) Problem {
	return Problem{
		Rows: rows,
		Cols: cols,
		Row: func(i int, dst []float64) (float64, float64) {
			t := -1 + 2*float64(i)/float64(rows-1)
			dst[0] = 1
			if cols > 1 {
				dst[1] = t
			}
			for j := 2; j < cols; j++ {
				dst[j] = 2*t*dst[j-1] - dst[j-2]
			}
			var y float64
			for j := range dst {
				y += dst[j] / float64(j+1)
			}
			y += 1e-3 * math.Sin(float64(i)*0.7)
			sigma := 1 + 0.5*float64(i%7)
			return y, sigma
		},
	}
}

func benchSolve(b *testing.B, rows, cols int) {
	p := chebProblem(rows, cols)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Solve(p, Settings{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSolve1e6x16 times a million-row, 16-parameter problem with the
// default block size. Target: well under 1 s per solve, B/op independent of
// the number of rows.
func BenchmarkSolve1e6x16(b *testing.B) { benchSolve(b, 1_000_000, 16) }

// BenchmarkSolve1e5x15 times a 100 000-row, 15-parameter problem.
func BenchmarkSolve1e5x15(b *testing.B) { benchSolve(b, 100_000, 15) }
