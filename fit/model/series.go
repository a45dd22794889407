package model

import "math"

// NextTerm returns the expected size of the term after the last non-zero
// coefficient of a power series c (powers 0, 1, …, looked at from index
// from on), and its power K+1 (K the last non-zero coefficient's). Each pair
// of neighbouring non-zero coefficients c_i, c_j (i < j) continues the series
// geometrically to power K+1,
//
//	|c_(K+1)| ≈ |c_j|·(|c_j|/|c_i|)^((K+1−j)/(j−i)),
//
// and the largest of these is the size: for the last pair it is the familiar
// c_K²/|c_(K−1)| (common practice for the order of magnitude of Dunham
// coefficients and of the v-expansions of molecular constants: ω_e y_e ≈
// (ω_e x_e)²/ω_e, γ_e ≈ α_e²/B_e, H ≈ D²/B). The earlier pairs guard against
// a last coefficient that is small by accident or that a fit determined
// exactly, having absorbed the terms it omits (HCl from three bands: the
// fitted Y30 is 0.127 for a true 0.224, and c_3²/c_2 puts Y40 at 0.0003
// against the molecule's −0.0122, where Y10, Y20 give 0.0165). ok is false
// without two non-zero coefficients. It is the one rule by which both the fit
// (the series truncation of derived constants) and thermo (the uncertainty
// budget) size an omitted term.
func NextTerm(c []float64, from int) (size float64, power int, ok bool) {
	var nz []int
	for i := from; i < len(c); i++ {
		if c[i] != 0 && !math.IsNaN(c[i]) {
			nz = append(nz, i)
		}
	}
	if len(nz) < 2 {
		return 0, 0, false
	}
	next := nz[len(nz)-1] + 1
	for p := 1; p < len(nz); p++ {
		i, j := nz[p-1], nz[p]
		ci, cj := math.Abs(c[i]), math.Abs(c[j])
		size = math.Max(size, cj*math.Pow(cj/ci, float64(next-j)/float64(j-i)))
	}
	return size, next, true
}
