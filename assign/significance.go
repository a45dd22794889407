package assign

import (
	"math"
	"math/rand/v2"
)

// Lock significance. The best hypothesis of the grid search is the best of
// many: over a peak list dense enough, some hypothesis always puts most lock
// lines near some peak, and 20 000 peaks spread at random locked bands. A
// lock therefore has to beat chance, measured on the peaks at hand: the raw
// score is evaluated at nullDraws hypotheses drawn at random (offsets over
// ±nullSpacings line spacings, each between a quarter and three quarters of
// a spacing off the band's own line positions, so that neither the band nor
// its whole-line shifts score; δ over its search range; none near the best
// pattern), whose mean μ₀ and standard deviation σ₀ say what a placement
// scores by chance at this peak density (other bands' lines included). The
// search took the best of about H independent hypotheses (its offset range
// and δ range in windows), whose chance maximum lies near μ₀ + σ₀·√(2 ln H)
// (the expected maximum of H normal deviates, common practice); a lock must
// exceed that by nullMarginSigmas σ₀ more.

const (
	// nullDraws is the number of random hypotheses of the chance score.
	// Reasoned: the mean and standard deviation of 64 draws are good to
	// about an eighth of σ₀.
	nullDraws = 64
	// nullSpacings is the half-range of the random offsets in line
	// spacings. Reasoned: far enough to sample the peaks around the band,
	// not so far as to leave the band's region of the spectrum.
	nullSpacings = 20
	// nullMarginSigmas is how far, in σ₀, a lock must exceed the chance
	// maximum of its search.
	nullMarginSigmas = 3
)

// chanceScore returns the mean and standard deviation of the raw score at
// nullDraws random hypotheses away from best, and the number of independent
// hypotheses the grid search tried.
func (s *lockSearch) chanceScore(best lockHyp) (mu, sd, h float64) {
	rng := rand.New(rand.NewPCG(uint64(s.b.id)+1, uint64(len(s.lines))))
	var sum, sum2 float64
	n := 0
	for tries := 0; n < nullDraws && tries < 20*nullDraws; tries++ {
		// A whole number of spacings plus a fraction within a quarter of
		// the half: the band's own lines (a pattern shifted by whole lines
		// is the wrong-J alternative, not chance) stay out of every window.
		k := rng.IntN(2*nullSpacings) - nullSpacings
		a := (float64(k) + 0.25 + 0.5*rng.Float64()) * s.spacing
		d := 0.0
		if s.nd > 0 {
			d = (2*rng.Float64() - 1) * s.dMax
		}
		if s.near(a, d, best) {
			continue
		}
		_, raw, _ := s.score(a, d, 0, 1, false)
		sum += raw
		sum2 += raw * raw
		n++
	}
	if n < 2 {
		return math.NaN(), math.NaN(), 1
	}
	mu = sum / float64(n)
	sd = math.Sqrt(math.Max(0, (sum2-float64(n)*mu*mu)/float64(n-1)))
	na := 1 + s.aMax/s.wBase
	nd := 1.0
	if s.nd > 0 {
		nd = 1 + s.dMax*s.dxMax/s.wBase
	}
	return mu, sd, na * nd
}

// near reports whether hypothesis (a, d) leaves most lock lines within a
// window of where best puts them (the best pattern itself, not chance).
func (s *lockSearch) near(a, d float64, best lockHyp) bool {
	in := 0
	for _, l := range s.lines {
		if math.Abs((a-best.a)+(d-best.d)*l.dx) < l.w {
			in++
		}
	}
	return 2*in > len(s.lines)
}
