package model

import (
	"fmt"
	"math"
	"strings"

	"bandwright/fit/states"
)

// vibSource is what a model tells the shared level code: the effective
// constants of a vibronic level (isotopologue s, electronic state st,
// vibrational level v) and their gradient with respect to the model's
// parameters. Both are linear in the parameters.
type vibSource interface {
	// vibConstants returns c_q of the vibronic level at parameters p and
	// whether the model has the level. (Arrays pass by value through the
	// interface: a pointer would make the caller's arrays escape to the heap.)
	vibConstants(s, st, v int, p []float64) ([nQ]float64, bool)
	// vibGradient adds w·Σ_q dE[q]·∂c_q/∂p_j to grad[j] for every j.
	vibGradient(s, st, v int, dE [nQ]float64, w float64, grad []float64)
}

// electronic holds a model's electronic states and evaluates levels through
// the model's vibSource.
type electronic struct {
	states []states.State
	cases  []states.Case
	linear bool
}

// newElectronic checks the states (the ground state first) and returns their
// description; no states means the ¹Σ⁺ ground state alone.
func newElectronic(sts []states.State) (electronic, error) {
	if len(sts) == 0 {
		sts = []states.State{states.Ground()}
	}
	e := electronic{states: append([]states.State(nil), sts...), linear: true}
	for i, st := range sts {
		if err := st.Supported(); err != nil {
			return e, fmt.Errorf("model: %w", err)
		}
		if st.Label == "" || strings.ContainsAny(st.Label, ":[]=, \t") {
			return e, fmt.Errorf("model: state %d: label %q must be non-empty without spaces or any of : [ ] = ,", i+1, st.Label)
		}
		if states.Index(sts[:i], st.Label) >= 0 {
			return e, fmt.Errorf("model: state label %q is given twice", st.Label)
		}
		c := st.Case()
		e.cases = append(e.cases, c)
		if c == states.TripletSigma || c == states.DoubletPi {
			e.linear = false
		}
	}
	return e, nil
}

// States returns the electronic states, the ground state first.
func (e *electronic) States() []states.State { return append([]states.State(nil), e.states...) }

// Linear reports whether every energy is linear in the parameters.
func (e *electronic) Linear() bool { return e.linear }

// closedShell reports whether the model has only a ¹Σ ground state, whose
// energies the fast closed-shell path (Energy, Transition) gives.
func (e *electronic) closedShell() bool {
	return len(e.states) == 1 && e.cases[0] == states.Singlet
}

// stateLabel returns the label that qualifies a parameter of state st: ""
// for the ground state.
func (e *electronic) stateLabel(st int) string {
	if st == 0 {
		return ""
	}
	return e.states[st].Label
}

// level evaluates level lv of species s (see LevelModel.LevelEnergy) and
// returns E without T, T, and mag.
func (e *electronic) level(src vibSource, s int, lv Level, p []float64, c, dE *[nQ]float64) (er, t, mag float64, ok bool) {
	if lv.State < 0 || lv.State >= len(e.states) {
		return 0, 0, 0, false
	}
	if *c, ok = src.vibConstants(s, lv.State, lv.V, p); !ok {
		return 0, 0, 0, false
	}
	var b block
	if !b.setBlock(e.states[lv.State], e.cases[lv.State], lv) {
		return 0, 0, 0, false
	}
	er, mag = b.solve(c, dE)
	return er, c[qT], mag, true
}

// levelEnergy implements LevelModel.LevelEnergy.
func (e *electronic) levelEnergy(src vibSource, s int, lv Level, p, grad []float64) float64 {
	if grad != nil {
		clear(grad)
	}
	var c, dE [nQ]float64
	er, t, _, ok := e.level(src, s, lv, p, &c, &dE)
	if !ok {
		return math.NaN()
	}
	if grad != nil {
		src.vibGradient(s, lv.State, lv.V, dE, 1, grad)
	}
	return t + er
}

// levelTransition implements LevelModel.LevelTransition:
// ν = (T′ − T″) + (E′ − E″) with the T difference left out when both levels
// lie in the same vibronic level, where it is exactly zero.
func (e *electronic) levelTransition(src vibSource, s int, up, lo Level, p, grad []float64) (nu, mag float64) {
	if grad != nil {
		clear(grad)
	}
	var cu, cl, du, dl [nQ]float64
	eu, tu, mu, ok1 := e.level(src, s, up, p, &cu, &du)
	el, tl, ml, ok2 := e.level(src, s, lo, p, &cl, &dl)
	if !ok1 || !ok2 {
		return math.NaN(), math.NaN()
	}
	nu, mag = eu-el, mu+ml
	same := up.State == lo.State && up.V == lo.V
	if !same {
		nu += tu - tl
		mag += math.Abs(tu) + math.Abs(tl)
	} else {
		du[qT], dl[qT] = 0, 0
	}
	if grad != nil {
		src.vibGradient(s, up.State, up.V, du, 1, grad)
		src.vibGradient(s, lo.State, lo.V, dl, -1, grad)
	}
	return nu, mag
}

// sublevels implements LevelModel.Sublevels.
func (e *electronic) sublevels(src vibSource, nParams, s, st, v, j2max int, p []float64, withGrad bool, fn func(Sublevel)) {
	if st < 0 || st >= len(e.states) {
		return
	}
	c, ok := src.vibConstants(s, st, v, p)
	if !ok {
		return
	}
	var dE [nQ]float64
	state := e.states[st]
	var grad []float64
	if withGrad {
		grad = make([]float64, nParams)
	}
	j2 := 0
	if state.HalfIntegerJ() {
		j2 = 1
	}
	var b block
	var buf [4]states.Label
	for ; j2 <= j2max; j2 += 2 {
		for _, lab := range state.AppendComponents(buf[:0], j2, c[qA] >= 0) {
			lv := Level{State: st, V: v, J2: j2, F: lab.F, Parity: lab.Parity}
			if !b.setBlock(state, e.cases[st], lv) {
				continue
			}
			er, _ := b.solve(&c, &dE)
			sl := Sublevel{Level: lv, N: lab.N, E: c[qT] + er}
			if withGrad {
				clear(grad)
				src.vibGradient(s, st, v, dE, 1, grad)
				sl.Grad = grad
			}
			fn(sl)
		}
	}
}

// termEntry is one term of a state's list: its name and whether the list
// named it for this state alone (a "STATE:NAME" term).
type termEntry struct {
	name string
	own  bool
}

// termLists splits terms, each "NAME" or "STATE:NAME", into the list of each
// state: a state named in some prefix gets exactly its prefixed terms, every
// other state the unprefixed ones. The ground state's label may prefix its
// terms too.
func (e *electronic) termLists(terms []string) ([][]termEntry, error) {
	out := make([][]termEntry, len(e.states))
	hasOwn := make([]bool, len(e.states))
	var shared []string
	for _, t := range terms {
		t = strings.TrimSpace(t)
		if t == "" {
			continue
		}
		label, name, ok := strings.Cut(t, ":")
		if !ok {
			shared = append(shared, t)
			continue
		}
		st := states.Index(e.states, label)
		if st < 0 {
			return nil, fmt.Errorf("model: term %q: no electronic state is labelled %q (states: %s)", t, label, e.labels())
		}
		hasOwn[st] = true
		out[st] = append(out[st], termEntry{name: strings.TrimSpace(name), own: true})
	}
	for st := range out {
		if hasOwn[st] {
			continue
		}
		for _, n := range shared {
			out[st] = append(out[st], termEntry{name: n})
		}
	}
	return out, nil
}

// labels lists the state labels for messages.
func (e *electronic) labels() string {
	var ls []string
	for _, s := range e.states {
		ls = append(ls, s.Label)
	}
	return strings.Join(ls, ", ")
}

// fixState returns the index of the state a fix names (its label, or the
// ground state when empty) or -1.
func (e *electronic) fixState(f Fix) int {
	if f.State == "" {
		return 0
	}
	return states.Index(e.states, f.State)
}
