package assign

import (
	"fmt"
	"math"

	"bandwright/fit/linelist"
)

// Limits of the unit hint: a peak list is taken to be in another unit when,
// read as it was, at most unitHintNow of its peaks fall where the bands are
// predicted, and, read in the other unit, at least unitHintThen do and more
// than twice as many.
const (
	unitHintNow  = 0.5
	unitHintThen = 0.5
	// unitHintWeak: predicted lines weaker than this share of the strongest
	// do not widen the range where peaks are expected.
	unitHintWeak = 1e-4
	// unitHintFactor widens that range by this factor each way: the units
	// differ by factors of 29.98 and more, so a peak list read in the wrong
	// one lies far outside it.
	unitHintFactor = 2.0
)

// unitHint says, when no band could be locked, whether the peaks would fall
// where the bands are predicted if their positions were in another unit
// (cm⁻¹, MHz, GHz): the mistake of a peak list in MHz or GHz read as cm⁻¹.
// It returns "" when the unit as read is as plausible as any other.
func (r *run) unitHint() string {
	lo, hi := math.Inf(1), math.Inf(-1)
	top := 0.0
	for _, b := range r.bands {
		for _, br := range b.branches {
			for _, x := range br.inten {
				top = math.Max(top, x)
			}
		}
	}
	for _, b := range r.bands {
		for _, br := range b.branches {
			for j := br.jmin; j <= br.jmax && j < len(br.start); j++ {
				if br.inten[j] >= unitHintWeak*top && br.start[j] > 0 {
					lo, hi = math.Min(lo, br.start[j]), math.Max(hi, br.start[j])
				}
			}
		}
	}
	if !(hi >= lo) {
		return ""
	}
	inRange := func(u linelist.Unit, asRead bool) int {
		n := 0
		for _, p := range r.p.Peaks.Peaks {
			x := p.Wavenumber()
			if !asRead {
				x = u.ToWavenumber(p.Position)
			}
			if x >= lo/unitHintFactor && x <= hi*unitHintFactor {
				n++
			}
		}
		return n
	}
	total := len(r.p.Peaks.Peaks)
	now := inRange(0, true)
	if float64(now) > unitHintNow*float64(total) {
		return ""
	}
	best, bestN := linelist.Unit(-1), now
	for _, u := range []linelist.Unit{linelist.Wavenumber, linelist.MHz, linelist.GHz} {
		if n := inRange(u, false); n > bestN {
			best, bestN = u, n
		}
	}
	if best < 0 || float64(bestN) < unitHintThen*float64(total) || bestN <= 2*now {
		return ""
	}
	return fmt.Sprintf("the peaks look like %s: read as %s, %d of %d fall where the bands are predicted (%.6g–%.6g cm-1), as read only %d; give --unit %s (or a unit column)",
		best, best, bestN, total, lo, hi, now, best)
}
