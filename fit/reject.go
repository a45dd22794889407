package fit

import (
	"fmt"
	"math"
	"sort"
)

// Iterative rejection of outlying lines around the solve.

// run fits with iterative rejection.
func (w *work) run() error {
	n := len(w.p.Lines)
	maxRej := int(math.Floor(w.s.maxRejectFraction() * float64(n)))
	if len(w.kfree) > 0 {
		// Gauss–Newton needs a starting point where ∂ν/∂κ = ν is not zero:
		// solve the linear problem with every κ at 0 first.
		kf := w.kfree
		w.kfree = nil
		err := w.solve()
		w.kfree = kf
		if err != nil {
			return err
		}
	}
	if err := w.start(); err != nil {
		return err
	}
	for round := 1; ; round++ {
		if err := w.solve(); err != nil {
			return err
		}
		if !(w.s.Reject > 0) {
			return nil
		}
		sd := w.sigma()
		if !(sd > 0) {
			return nil
		}
		thr := w.s.Reject * sd
		rejected := n - w.countUsed()
		type cand struct {
			i int
			z float64
		}
		var cs []cand
		for i := range w.p.Lines {
			if !w.used[i] {
				continue
			}
			res := math.Abs(w.omc[i])
			if res <= w.floor[i] {
				// Within the rounding error of the calculation: on data the
				// model reproduces exactly, s itself is rounding noise and
				// Reject·s no measure of an outlier.
				continue
			}
			z := res / w.unc[i]
			if z > thr {
				cs = append(cs, cand{i, z})
			}
		}
		if len(cs) == 0 {
			return nil
		}
		sort.Slice(cs, func(a, b int) bool { return cs[a].z > cs[b].z })
		room := maxRej - rejected
		capped := false
		if len(cs) > room {
			cs = cs[:max(room, 0)]
			capped = true
		}
		for _, c := range cs {
			w.used[c.i] = false
			w.reason[c.i] = fmt.Sprintf("rejected in rejection round %d: |o−c|/unc was %.2f > %.2f (%.1f × s of that round; the residual shown is that of the final fit)", round, c.z, thr, w.s.Reject)
		}
		if capped {
			w.status = RejectionCapped
			w.warn = append(w.warn, fmt.Sprintf("more lines exceed the rejection threshold (%.1f × s) than the cap of %.0f %% allows; the worst %d were rejected and the rest kept — check the assignment", w.s.Reject, 100*w.s.maxRejectFraction(), maxRej))
			if len(cs) > 0 {
				if err := w.solve(); err != nil {
					return err
				}
			}
			return nil
		}
	}
}

func (w *work) countUsed() int {
	c := 0
	for _, u := range w.used {
		if u {
			c++
		}
	}
	return c
}
