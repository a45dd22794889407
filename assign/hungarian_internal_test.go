package assign

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The sparse Hungarian solution must equal the brute-force optimum of
// Σ matched cost + Σ unmatched penalty on small random candidate graphs.
func TestSolveSparseAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for trial := 0; trial < 300; trial++ {
		n, m := 1+rng.IntN(5), 1+rng.IntN(5)
		var edges []edge
		edgesOf := make([][]int, n)
		for i := 0; i < n; i++ {
			for k := 0; k < m; k++ {
				if rng.Float64() < 0.5 {
					edgesOf[i] = append(edgesOf[i], len(edges))
					edges = append(edges, edge{p: i, k: k, cost: 20 * rng.Float64()})
				}
			}
		}
		un := func(i int) float64 { return 10 + float64(i) }
		got := solveSparse(n, edges, edgesOf, un)
		total := func(match []int) float64 {
			c := 0.0
			for i, e := range match {
				if e < 0 {
					c += un(i)
				} else {
					c += edges[e].cost
				}
			}
			return c
		}
		used := map[int]bool{}
		for _, e := range got {
			if e >= 0 {
				if used[edges[e].k] {
					t.Fatalf("trial %d: peak used twice", trial)
				}
				used[edges[e].k] = true
			}
		}
		best := math.Inf(1)
		var rec func(i int, match []int, taken map[int]bool)
		rec = func(i int, match []int, taken map[int]bool) {
			if i == n {
				best = math.Min(best, total(match))
				return
			}
			match[i] = -1
			rec(i+1, match, taken)
			for _, e := range edgesOf[i] {
				if !taken[edges[e].k] {
					taken[edges[e].k] = true
					match[i] = e
					rec(i+1, match, taken)
					taken[edges[e].k] = false
				}
			}
			match[i] = -1
		}
		rec(0, make([]int, n), map[int]bool{})
		if math.Abs(total(got)-best) > 1e-9 {
			t.Fatalf("trial %d: cost %v, optimum %v", trial, total(got), best)
		}
	}
}
