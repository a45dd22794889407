package assign

import (
	"math"
	"sort"
)

// madToSigma turns a median absolute deviation into the σ of a normal
// distribution with the same spread: 1/Φ⁻¹(3/4) = 1.4826 (common practice).
// The robust scatters of the lock refinement, of the internal fit and of the
// intensity scales all use it, so that a minority of wrong lines cannot
// inflate them.
const madToSigma = 1.4826

// sq returns x².
func sq(x float64) float64 { return x * x }

// abs returns |i|.
func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// median returns the median of xs (NaN when empty); xs is reordered.
func median(xs []float64) float64 {
	n := len(xs)
	if n == 0 {
		return math.NaN()
	}
	sort.Float64s(xs)
	if n%2 == 1 {
		return xs[n/2]
	}
	return (xs[n/2-1] + xs[n/2]) / 2
}
