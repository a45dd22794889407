package nightly

import (
	"fmt"
	"math"
	"strings"
)

// A result's constants name some quantities twice: ω_e is Y10 of the
// reference isotopologue, B_e is Y01, D_e is −Y02, ν₀(1-0) of a term-values
// fit is T_v1 when T_v0 is held at 0. Each is recorded under every name (the
// history compares like with like), but a drift is one drift of the quantity,
// however many names it has.

// aliasTolerance is the relative difference below which two constants of
// one result with the same unit and σ are one quantity (|value| compared, so
// that D_e = −Y02 is found).
const aliasTolerance = 1e-9

// sameQuantity reports whether constants a and b of one result are one
// quantity under two names.
func sameQuantity(a, b Constant) bool {
	near := func(x, y float64) bool {
		return math.Abs(x-y) <= aliasTolerance*math.Max(math.Abs(x), math.Abs(y))
	}
	return a.Unit == b.Unit && a.Sigma > 0 && near(a.Sigma, b.Sigma) && near(math.Abs(a.Value), math.Abs(b.Value))
}

// aliasGroups groups the constants of one result into quantities: the index
// of the group of each constant, and the groups (indices into cs, in order).
func aliasGroups(cs []Constant) [][]int {
	var groups [][]int
	for i, c := range cs {
		placed := false
		for g, members := range groups {
			if sameQuantity(cs[members[0]], c) {
				groups[g] = append(groups[g], i)
				placed = true
				break
			}
		}
		if !placed {
			groups = append(groups, []int{i})
		}
	}
	return groups
}

// DistinctDrifted returns the drifted quantities of one result's drift tests,
// each once with all its names ("omega_e[12C16O] = Y10: z = 7.3"), and how
// many quantities were tested.
func DistinctDrifted(ds []Drift) (flagged []string, tested int) {
	cs := make([]Constant, len(ds))
	for i, d := range ds {
		cs[i] = d.Constant
	}
	for _, g := range aliasGroups(cs) {
		var names []string
		z, hit, seen := 0.0, false, false
		for _, i := range g {
			names = append(names, ds[i].Name)
			if !math.IsNaN(ds[i].Z) {
				seen = true
			}
			if ds[i].Flagged {
				hit = true
				z = ds[i].Z
			}
		}
		if seen {
			tested++
		}
		if hit {
			flagged = append(flagged, fmt.Sprintf("%s: z = %.1f", strings.Join(names, " = "), z))
		}
	}
	return flagged, tested
}
