package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestNextTerm checks the next-term rule on the vibrational series of 12C16O
// (Huber & Herzberg 1979, from memory): after ω_e, ω_e x_e the rule gives
// (ω_e x_e)²/ω_e = 0.0814 cm⁻¹ for the (v+½)³ term (the molecule's ω_e y_e is
// 0.0105: an order of magnitude, as the rule promises no more), and its edge
// cases.
func TestNextTerm(t *testing.T) {
	cases := []struct {
		name  string
		c     []float64
		from  int
		size  float64
		power int
		ok    bool
	}{
		{"CO G(v)", []float64{0, 2169.81358, -13.28831}, 1, 13.28831 * 13.28831 / 2169.81358, 3, true},
		{"CO B_v", []float64{1.93128087, -0.01750441}, 0, 0.01750441 * 0.01750441 / 1.93128087, 2, true},
		{"zero in the middle skipped", []float64{0, 2, 0, 0.5}, 1, 0.125, 4, true},
		{"NaN skipped", []float64{0, 4, 1, math.NaN()}, 1, 0.25, 3, true},
		{"one term", []float64{0, 2169.8}, 1, 0, 0, false},
		{"below from", []float64{5, 2169.8}, 1, 0, 0, false},
	}
	for _, c := range cases {
		size, power, ok := NextTerm(c.c, c.from)
		if ok != c.ok || power != c.power || !scalar.EqualWithinAbsOrRel(size, c.size, 0, 1e-14) {
			t.Errorf("%s: got %g, power %d, %v; want %g, %d, %v", c.name, size, power, ok, c.size, c.power, c.ok)
		}
	}
}
