package thermo

import "math"

// expTable[j] = 2^(j/256), j = 0…255.
var expTable = func() (t [256]float64) {
	for j := range t {
		t[j] = math.Exp2(float64(j) / 256)
	}
	return t
}()

// Constants of the argument reduction x = k·ln2/256 + r: ln 2/256 split into a
// high part with trailing zero bits (k·expLn2Hi is exact for |k| < 2²⁰) and a
// low part (the fdlibm split of ln 2, divided by 256).
const (
	expInvLn2 = 256 / math.Ln2
	expLn2Hi  = 6.93147180369123816490e-01 / 256
	expLn2Lo  = 1.90821492927058770002e-10 / 256
)

// boltzmann returns e^x for the Boltzmann factors of the level sums (x = −βE).
// It reduces x = (256n + j)·ln2/256 + r (Cody–Waite, |r| ≤ ln2/512 for x ≤ 0)
// and returns 2ⁿ · 2^(j/256) · p(r), p the degree-5 Taylor polynomial of e^r
// (truncation error below 10⁻¹⁷), which agrees with math.Exp to 1e-15
// relative (see the test) at a fraction of its cost in the level loops, where
// it is written out inline; outside |x| ≤ 700 it calls math.Exp.
func boltzmann(x float64) float64 {
	if !(x >= -700 && x <= 700) {
		return math.Exp(x)
	}
	return expCore(x)
}

// expCore is boltzmann without the range check: |x| ≤ 700 (callers check it).
func expCore(x float64) float64 {
	// k = nearest integer to x·256/ln2 for x ≤ 0 (truncation of t − ½ toward
	// zero); for x > 0 it is one lower, |r| < 1.5·ln2/256, and the truncation
	// error of p stays below 10⁻¹⁷.
	k := int(x*expInvLn2 - 0.5)
	fk := float64(k)
	r := (x - fk*expLn2Hi) - fk*expLn2Lo
	p := 1 + r*(1+r*(0.5+r*(1.0/6+r*(1.0/24+r*(1.0/120)))))
	n := k >> 8
	return expTable[k&255] * p * math.Float64frombits(uint64(n+1023)<<52)
}
