package model

import "math"

// NextTerm returns the expected size of the term after the last non-zero
// coefficient of a power series c (powers 0, 1, …, looked at from index
// from on):
//
//	|c_(K+1)| ≈ c_K² / |c_K'|,
//
// with K the last and K' the one before it among the non-zero coefficients
// (the series continued geometrically; common practice for the order of
// magnitude of Dunham coefficients and of the v-expansions of molecular
// constants: ω_e y_e ≈ (ω_e x_e)²/ω_e, γ_e ≈ α_e²/B_e, H ≈ D²/B), and the
// power K+1 of that term. ok is false without two non-zero coefficients.
// It is the one rule by which both the fit (the series truncation of derived
// constants) and thermo (the uncertainty budget) size an omitted term.
func NextTerm(c []float64, from int) (size float64, power int, ok bool) {
	k, kp := -1, -1
	for i := len(c) - 1; i >= from; i-- {
		if c[i] != 0 && !math.IsNaN(c[i]) {
			if k < 0 {
				k = i
			} else {
				kp = i
				break
			}
		}
	}
	if k < 0 || kp < 0 {
		return 0, 0, false
	}
	return c[k] * c[k] / math.Abs(c[kp]), k + 1, true
}
