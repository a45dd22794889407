package thermo

import (
	"fmt"
	"math"
	"sort"

	"bandwright/internal/parallel"
)

// Checking the Monte Carlo draws. Every draw is evaluated on the nominal level
// set: the levels enumerated at the fitted parameters x̂, each keeping its
// quantum numbers. A draw far out in a wide covariance can make that set
// wrong in two ways:
//
//   - Its rotational or vibrational structure turns over earlier: E(v, J) no
//     longer rises with J before the highest J of the set (the centrifugal
//     turnover moved down), or E(v, J_min) no longer rises with v. The sum of
//     that draw is enumerated again: the levels from the turnover on are left
//     out, as the enumeration at x̂ leaves out the levels beyond its own
//     turnover.
//   - A level falls below the zero level, or an energy or a function is not
//     finite: the draw describes no molecule (its Boltzmann factors blow up)
//     and is dropped.
//
// MonteCarlo counts both and Compute says so in a warning.

// levelChains lists, for every state and fine-structure component (F, e/f;
// one for a state whose components are not resolved), the levels of the sum
// of each v (by J ascending, consecutive J from the lowest, as long as the
// energy rises at x̂), the chains by v ascending (consecutive v, as long as
// the lowest level of each rises at x̂).
type levelChains [][]chain

type chain struct {
	v   int32
	idx []int32 // levels of the sum, by J
}

func (sys *System) levelChains() levelChains {
	// One chain per (state, v, fine-structure component), in steps of 2J.
	type key struct {
		st    int16
		v     int32
		f, ef int8
	}
	byV := map[key][]int32{}
	for i := range sys.e {
		m := sys.manifolds[sys.stateMan[sys.st[i]]]
		l := sys.lv[i]
		k := key{sys.st[i], m.v[l], m.f[l], m.ef[l]}
		byV[k] = append(byV[k], int32(i))
	}
	jOf := func(i int32) int32 { return sys.manifolds[sys.stateMan[sys.st[i]]].j2[sys.lv[i]] }
	// The vibrational chains of each state and component.
	type comp struct {
		st    int16
		f, ef int8
	}
	perState := map[comp][]chain{}
	for k, idx := range byV {
		sort.Slice(idx, func(a, b int) bool { return jOf(idx[a]) < jOf(idx[b]) })
		n := 1
		for n < len(idx) && jOf(idx[n]) == jOf(idx[n-1])+2 && sys.e[idx[n]] > sys.e[idx[n-1]] {
			n++
		}
		c := comp{k.st, k.f, k.ef}
		perState[c] = append(perState[c], chain{v: k.v, idx: idx[:n:n]})
	}
	var out levelChains
	for _, cs := range perState {
		sort.Slice(cs, func(a, b int) bool { return cs[a].v < cs[b].v })
		n := 1
		for n < len(cs) && cs[n].v == cs[n-1].v+1 && sys.e[cs[n].idx[0]] > sys.e[cs[n-1].idx[0]] {
			n++
		}
		out = append(out, cs[:n:n])
	}
	return out
}

// maskTurnovers leaves out of one draw (energies sys.e + delta) the levels
// from a rotational or vibrational turnover on, by setting their shift to
// +Inf (a Boltzmann factor of 0); it reports whether it left out any.
func (sys *System) maskTurnovers(delta []float64, lc levelChains) bool {
	e := func(i int32) float64 { return sys.e[i] + delta[i] }
	masked := false
	leaveOut := func(idx []int32) {
		for _, i := range idx {
			delta[i] = math.Inf(1)
		}
		masked = true
	}
	for _, cs := range lc {
		for vi, c := range cs {
			if vi > 0 && e(c.idx[0]) <= e(cs[vi-1].idx[0]) {
				for _, rest := range cs[vi:] {
					leaveOut(rest.idx)
				}
				break
			}
			for k := 1; k < len(c.idx); k++ {
				if e(c.idx[k]) <= e(c.idx[k-1]) {
					leaveOut(c.idx[k:])
					break
				}
			}
		}
	}
	return masked
}

// checkDraws reports for each draw (shifts x − x̂ in xs, p per draw) whether
// it is valid (no level below the zero level beyond rounding, every energy
// finite) and whether its turnovers left levels out.
func (sys *System) checkDraws(xs []float64, n int, linear bool, workers int, lc levelChains) (valid, masked []bool) {
	N, p := len(sys.e), sys.p
	valid, masked = make([]bool, n), make([]bool, n)
	newScratch := func() *mcScratch {
		return &mcScratch{delta: make([]float64, N), x: make([]float64, p)}
	}
	parallel.ForScratch(n, workers, newScratch, func(s *mcScratch, d int) {
		sys.drawShifts(s, xs[d*p:(d+1)*p], s.delta, linear)
		valid[d] = sys.drawValid(s.delta)
		masked[d] = sys.maskTurnovers(s.delta, lc)
	})
	return valid, masked
}

// drawValid checks the energies sys.e + delta of one draw.
func (sys *System) drawValid(delta []float64) bool {
	for i, e := range sys.e {
		// Below the zero level beyond rounding (the zero itself moves by
		// rounding only).
		if x := e + delta[i]; x < -1e-9*(1+e) || math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// finiteFunctions reports whether every function of f is finite.
func finiteFunctions(f Functions) bool {
	for _, x := range []float64{f.Q, f.Cp, f.S, f.HmH0, f.HmH298, f.Gef} {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// mcDrawWarnings words the checks of n draws for the warnings of a result.
func mcDrawWarnings(n, dropped, reenumerated int) []string {
	var w []string
	if reenumerated > 0 {
		w = append(w, fmt.Sprintf("Monte Carlo: %d of %d draws turn over (rotationally or vibrationally) below the highest levels of the nominal sum; their sums were enumerated again without the levels from their turnover on", reenumerated, n))
	}
	if dropped > 0 {
		w = append(w, fmt.Sprintf("Monte Carlo: %d of %d draws were dropped: a level fell below the zero level or a value was not finite, so they describe no molecule; the spread describes the %d draws the model can stand, and the covariance reaches further than the model holds (the linear σ deserve caution too)", dropped, n, n-dropped))
	}
	return w
}
