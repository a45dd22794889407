package fit

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/fit/model"
	"bandwright/fit/states"
)

// Starting values of a nonlinear fit of open-shell levels.
//
// 1. The case-(b) limit: with every fine-structure constant held at its
// starting value (0 unless Problem.Start gives one) and B > 0, the levels
// are those of a rotor without spin, E = T + B·N(N+1) − D·[N(N+1)]² …, and
// the fit of T, B, D, … is linear; it gives their starting values.
//
// 2. The sign of A. Without Λ-doubling and distortion the levels of a ²Π
// state depend on A only through A(A − 4B) (the Hill–Van Vleck formula), so
// A and 4B − A describe the same F1 and F2 levels; only J = ½ (which exists
// in Ω = ½ alone), Λ-doubling and distortion tell them apart. A ²Π state
// whose A has no starting value is therefore fitted from two starts, one on
// each side of A = 2B (A = 2B ± 8B), and the better fit is kept; when the two
// fit equally well (Δχ² below s²) the fit refuses, naming both solutions.

// ambiguitySlack is the Δχ²/s² below which two solutions of the sign of A
// are taken to fit equally well.
const ambiguitySlack = 1.0

// start sets the starting values of a nonlinear fit.
func (w *work) start() error {
	if !w.nonlinear {
		return nil
	}
	if err := w.doubletPiPairs(); err != nil {
		return err
	}
	given := w.applyStarts()
	held := map[int]bool{}
	for _, j := range w.free {
		if _, _, fine := model.FineConstant(w.params[j]); fine && !w.fixedIdx[j] {
			held[j] = true
			w.fixedIdx[j] = true
		}
	}
	before := append([]float64(nil), w.values...)
	if len(w.freeNow())+len(w.kfree) > 0 {
		w.startLimit = true
		err := w.solve()
		w.startLimit = false
		if err != nil {
			// The lines do not fix the case-(b) limit (lines between spin
			// components of one N, which that limit puts at zero): start
			// from the values as they were.
			copy(w.values, before)
			w.omcOK, w.res, w.status, w.warn = false, nil, Converged, nil
		}
	}
	for j := range held {
		delete(w.fixedIdx, j)
	}
	return w.chooseSign(given)
}

// applyStarts sets the values of the free parameters from Problem.Start and,
// where none is given, B to 1 cm⁻¹ (any B > 0 orders the levels of the
// case-(b) limit); it returns the parameters that got a starting value.
func (w *work) applyStarts() map[int]bool {
	sts := w.lm.States()
	given := map[int]bool{}
	for _, j := range w.free {
		p := w.params[j]
		name, k, isFine := model.FineConstant(p)
		if !isFine {
			name, k, _ = model.RotationalConstant(p)
		}
		switch {
		case p.Name == "T_e" || (p.Name == "T" && p.State != ""):
			name, k = "T", 0
		case p.Name == "T":
			continue
		}
		if k != 0 || name == "" {
			continue
		}
		if v, ok := w.startOf(p.State, name, sts); ok {
			if p.V < 0 && name == "D" {
				v = -v // Y02 = −D_e
			}
			w.values[j] = v
			given[j] = true
			continue
		}
		if name == "B" && w.values[j] == 0 {
			w.values[j] = 1
		}
	}
	return given
}

// startOf returns the starting value of constant name of the state labelled
// label ("" the ground state): from Problem.Start, else the term energy of
// an excited state from the states.
func (w *work) startOf(label, name string, sts []states.State) (float64, bool) {
	for _, s := range w.p.Start {
		st := s.State
		if st == sts[0].Label {
			st = ""
		}
		if st == label && s.Name == name {
			return s.Value, true
		}
	}
	if name == "T" && label != "" {
		if i := states.Index(sts, label); i > 0 && sts[i].TermEnergy > 0 {
			return sts[i].TermEnergy, true
		}
	}
	return 0, false
}

// signGroup is the spin–orbit parameters (A_v or A_e) of one ²Π state
// whose sign is open, and the state's B for the starts.
type signGroup struct {
	state  string
	params []int
	b      float64
}

// signGroups returns the ²Π states whose A has no starting value.
func (w *work) signGroups(given map[int]bool) []signGroup {
	byState := map[string]*signGroup{}
	var order []string
	for _, j := range w.free {
		p := w.params[j]
		name, k, ok := model.FineConstant(p)
		if !ok || name != "A" || k != 0 || given[j] {
			continue
		}
		g := byState[p.State]
		if g == nil {
			g = &signGroup{state: p.State}
			byState[p.State] = g
			order = append(order, p.State)
		}
		g.params = append(g.params, j)
	}
	var out []signGroup
	for _, st := range order {
		g := byState[st]
		g.b = w.meanB(st)
		out = append(out, *g)
	}
	return out
}

// meanB returns the mean rotational constant B of the state labelled st at
// the current values (term values: B_v of its levels; Dunham: Y01).
func (w *work) meanB(st string) float64 {
	sum, n := 0.0, 0
	for j, p := range w.params {
		if name, k, ok := model.RotationalConstant(p); ok && name == "B" && k == 0 && p.State == st {
			sum += w.values[j]
			n++
		}
	}
	if n == 0 || !(sum > 0) {
		return 1
	}
	return sum / float64(n)
}

// solution is the outcome of one start.
type solution struct {
	values, kappa []float64
	chi2          float64
	signs         []float64
	err           error
}

// chooseSign fits from each combination of signs of A of the ²Π states
// without a starting value and keeps the best; see the file's comment.
func (w *work) chooseSign(given map[int]bool) error {
	groups := w.signGroups(given)
	w.conv.starts = 1
	if len(groups) == 0 {
		return nil
	}
	if len(groups) > 3 {
		return &CannotFitError{Msg: fmt.Sprintf("fit: %d 2Π states without a starting value of A: give A of each in the electronic-states file", len(groups))}
	}
	base := append([]float64(nil), w.values...)
	baseK := append([]float64(nil), w.kappa...)
	var sols []solution
	for mask := 0; mask < 1<<len(groups); mask++ {
		copy(w.values, base)
		copy(w.kappa, baseK)
		sol := solution{}
		for gi, g := range groups {
			sign := 1.0
			if mask&(1<<gi) != 0 {
				sign = -1
			}
			sol.signs = append(sol.signs, sign)
			for _, j := range g.params {
				w.values[j] = 2*g.b + sign*8*g.b
			}
		}
		w.omcOK = false
		sol.err = w.solve()
		sol.chi2 = w.chi2Used()
		sol.values = append([]float64(nil), w.values...)
		sol.kappa = append([]float64(nil), w.kappa...)
		sols = append(sols, sol)
	}
	w.conv.starts = len(sols)
	return w.pickSolution(groups, sols)
}

// pickSolution keeps the solution of lowest χ², refusing when another one
// with a different sign of some A fits as well.
func (w *work) pickSolution(groups []signGroup, sols []solution) error {
	sort.SliceStable(sols, func(a, b int) bool {
		if (sols[a].err == nil) != (sols[b].err == nil) {
			return sols[a].err == nil
		}
		return sols[a].chi2 < sols[b].chi2
	})
	best := sols[0]
	if best.err != nil {
		return best.err
	}
	copy(w.values, best.values)
	copy(w.kappa, best.kappa)
	w.omcOK = false
	_, dof := w.chi2()
	s2 := best.chi2 / float64(max(dof, 1))
	for _, other := range sols[1:] {
		if other.err != nil || other.chi2-best.chi2 >= ambiguitySlack*math.Max(s2, 1e-300) {
			continue
		}
		if differ := w.signsDiffer(groups, best.values, other.values); differ != "" {
			return &CannotFitError{Msg: fmt.Sprintf("fit: the lines cannot tell the sign of the spin–orbit constant A apart (%s; χ² %.6g and %.6g): both describe the same F1 and F2 levels; give A's starting value in the electronic-states file, or add lines from J = ½ or the Λ-doubling", differ, best.chi2, other.chi2)}
		}
	}
	return nil
}

// signsDiffer names the A parameters whose sign differs between two solutions.
func (w *work) signsDiffer(groups []signGroup, a, b []float64) string {
	var out []string
	for _, g := range groups {
		for _, j := range g.params {
			if (a[j] >= 0) != (b[j] >= 0) {
				out = append(out, fmt.Sprintf("%s = %.6g or %.6g", w.params[j].ID(), a[j], b[j]))
			}
		}
	}
	return strings.Join(out, ", ")
}
