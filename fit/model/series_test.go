package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestNextTerm checks the next-term rule on the vibrational series of 12C16O
// (Huber & Herzberg 1979, from memory): after ω_e, ω_e x_e the rule gives
// (ω_e x_e)²/ω_e = 0.0814 cm⁻¹ for the (v+½)³ term (the molecule's ω_e y_e is
// 0.0105: an order of magnitude, as the rule promises no more); HCl's fitted
// series whose last coefficient is too small (ω_e z_e = −0.0122, Huber &
// Herzberg 1979, from memory); and its edge cases.
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
		{"zero in the middle skipped: ratio 1/2 per power", []float64{0, 2, 0, 0.5}, 1, 0.25, 4, true},
		// HCl from the bands 1-0, 2-0, 3-0: the fitted Y30 (0.127 for the
		// molecule's 0.2243) has absorbed the omitted Y40, and the last pair
		// alone gives 3·10⁻⁴ against the molecule's |ω_e z_e| = 0.0122; the
		// pair ω_e, ω_e x_e gives 52.8186·(52.8186/2990.946)² = 0.0165.
		{"HCl G(v), last coefficient absorbed", []float64{0, 2990.946, -52.8186, 0.127}, 1, 52.8186 * math.Pow(52.8186/2990.946, 2), 4, true},
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
