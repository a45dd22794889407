package thermo

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestBoltzmannExp checks the Boltzmann-factor exponential against math.Exp
// (the reference implementation) over the range the level sums use and beyond.
func TestBoltzmannExp(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 5))
	worst := 0.0
	check := func(x float64) {
		want := math.Exp(x)
		got := boltzmann(x)
		if want == 0 {
			if got != 0 {
				t.Fatalf("exp(%g) = %g, want 0", x, got)
			}
			return
		}
		rel := math.Abs(got-want) / want
		worst = math.Max(worst, rel)
		if rel > 1e-15 {
			t.Fatalf("exp(%.17g) = %.17g, math.Exp %.17g (rel %.3g)", x, got, want, rel)
		}
	}
	for i := 0; i < 2_000_000; i++ {
		check(-60 * rng.Float64())
	}
	for i := 0; i < 200_000; i++ {
		check(1400*rng.Float64() - 700)
	}
	for _, x := range []float64{0, math.Copysign(0, -1), 1e-300, -1e-300, -math.Ln2 / 512, math.Ln2 / 512, -50, -700, 700, -745, -800, 709, -1e10} {
		check(x)
	}
	if !math.IsInf(boltzmann(800), 1) || !math.IsNaN(boltzmann(math.NaN())) {
		t.Error("out-of-range arguments must follow math.Exp")
	}
	t.Logf("largest relative difference from math.Exp: %.3g", worst)
}

func BenchmarkBoltzmannExp(b *testing.B) {
	s := 0.0
	for i := 0; i < b.N; i++ {
		s += boltzmann(-0.001 * float64(i&65535))
	}
	sinkF = s
}

func BenchmarkMathExp(b *testing.B) {
	s := 0.0
	for i := 0; i < b.N; i++ {
		s += math.Exp(-0.001 * float64(i&65535))
	}
	sinkF = s
}

var sinkF float64

func BenchmarkBoltzmannArray(b *testing.B) {
	xs := make([]float64, 4096)
	for i := range xs {
		xs[i] = -0.01 * float64(i)
	}
	ys := make([]float64, 4096)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for j, x := range xs {
			ys[j] = boltzmann(x)
		}
	}
	sinkF = ys[5]
}

func BenchmarkMathExpArray(b *testing.B) {
	xs := make([]float64, 4096)
	for i := range xs {
		xs[i] = -0.01 * float64(i)
	}
	ys := make([]float64, 4096)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for j, x := range xs {
			ys[j] = math.Exp(x)
		}
	}
	sinkF = ys[5]
}
