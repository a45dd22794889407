package thermo

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// manifold is the enumerated levels of one (constants record, isotopologue)
// before electronic and nuclear-spin weights are applied.
type manifold struct {
	block int
	sp    int
	src   *levelSource
	// v and J of each level; J is N (the rotational quantum number without
	// electron spin, whose N(N+1) the rotational series is in) for the levels
	// of a fine-structure source, and the model's J otherwise (read as N for
	// a state with spin).
	v, J []int32
	// j2 is 2J; f the spin component (0: none) and ef the rotationless
	// parity (+1 e, −1 f) of a fine-structure level, 0 otherwise.
	j2      []int32
	f, ef   []int8
	e       []float64 // model energy, cm⁻¹ (model's own zero)
	grad    []float64 // ∂e/∂x over the block's fitted parameters, len(e)·nfree
	nfree   int
	ext     []bool
	used    []bool // the level enters the nominal sum of at least one state
	vReason string
	jReason map[string]int
	// rot gives G_v = E(v, 0) and B_v of each enumerated v, for the closed form.
	rot []vibRot
	// extrapolatedV lists the enumerated vibrational levels the record lacks.
	extrapolatedV []int
	warn          []string
	// The fitted data: highest 2J observed in each v, highest v, highest 2J
	// in any v (-1: nothing observed).
	jObs       map[int]int
	vObs, jAll int
}

type vibRot struct {
	v    int
	g, b float64
}

// enumerateManifold lists the levels (v, J) of the level source src (the
// record of constants block blk and its extrapolation):
//
//   - v from the source's lowest level while G(v) = E(v, 0) still rises, B_v > 0
//     and G(v) stays below the ceiling;
//   - J from 0 while E(v, J) still rises with J (centrifugal turnover);
//   - every level below the ceiling: the highest dissociation asymptote any
//     state of this manifold can have (the budget's alternatives included;
//     the nominal limit is applied per state in collectLevels);
//   - every level whose population can matter at tMax: term + E − eRef ≤ 50 kT_max/hc.
func enumerateManifold(src *levelSource, blk int, lim *energyLimits, tMax float64, count *int) (*manifold, error) {
	c := src.c
	m := &manifold{block: blk, sp: src.sp, src: src, nfree: len(c.Free), jReason: map[string]int{}}
	m.warn = append(m.warn, src.warn...)
	lim.neglReason = fmt.Sprintf("population below e^-%g of the lowest level at T_max = %g K", cutExponent, tMax)
	vs, err := m.vibrationalLevels(lim)
	if err != nil {
		return nil, err
	}
	grad := make([]float64, len(c.Values))
	for _, v := range vs {
		var err error
		if src.fine != nil {
			err = m.fineLevels(v, lim, count)
		} else {
			err = m.rotationalLevels(v, lim, grad, count)
		}
		if err != nil {
			return nil, err
		}
		if src.extrapolated(v) {
			m.extrapolatedV = append(m.extrapolatedV, v)
		}
	}
	return m, nil
}

// energyLimits bound the levels of a manifold: a level of model energy E
// enters when E ≤ ceiling and term + E − eRef ≤ eNeg (cm⁻¹); the reasons name
// the two limits in the truncation notes.
type energyLimits struct {
	term, eRef, eNeg, ceiling float64
	neglReason, ceilingReason string
}

// vibrationalLevels returns the vibrational levels of the manifold: from the
// source's lowest level up (at most maxV) while the source has the level,
// G(v) = E(v, 0) still rises, B_v > 0 (E(v, 1) > E(v, 0)), G(v) ≤ ceiling and
// the population limit holds; it records why the ladder stopped.
func (m *manifold) vibrationalLevels(lim *energyLimits) ([]int, error) {
	src, vals := m.src, m.src.c.Values
	label := src.c.Model.Species()[m.sp]
	v0 := 0
	for v0 <= maxV && !src.has(v0) {
		v0++
	}
	if v0 > maxV {
		return nil, cannot("%s: the constants describe no vibrational level", label)
	}
	gPrev := math.Inf(-1)
	var vs []int
	m.vReason = fmt.Sprintf("v cap %d", maxV)
	for v := v0; v <= maxV; v++ {
		if !src.has(v) {
			m.vReason = fmt.Sprintf("the record has no level v=%d and nothing to extrapolate it from", v)
			break
		}
		gv := src.origin(v, vals)
		if math.IsNaN(gv) || math.IsInf(gv, 0) {
			return nil, cannot("%s: G(v=%d) is not finite", label, v)
		}
		if !(gv > gPrev) {
			m.vReason = fmt.Sprintf("G(v) stops rising after v=%d", v-1)
			break
		}
		if !src.rotationPositive(v, vals) {
			// E(v, 1) ≤ E(v, 0): B_v is not positive here, so from this v on
			// the constants describe no rotational structure at all.
			if v == v0 {
				return nil, cannot("%s: the rotational spacing E(v=%d, J=1) − E(v=%d, J=0) of the lowest level is not positive (B_%d ≤ 0; B_%d = %.6g cm-1): the constants describe no rotational levels", label, v, v, v, v, src.rotConstant(v))
			}
			m.vReason = fmt.Sprintf("B_v turns negative at v=%d (E(v, J=1) ≤ E(v, J=0)): the sum stops at v=%d", v, v-1)
			m.warn = append(m.warn, fmt.Sprintf("%s: the rotational constant B_v turns negative at v=%d (E(v, J=1) ≤ E(v, J=0): the expansion is extrapolated beyond its range); levels from v=%d on are left out of the sum", label, v, v))
			break
		}
		if gv > lim.ceiling {
			m.vReason = fmt.Sprintf("%s reached after v=%d", lim.ceilingReason, v-1)
			break
		}
		if lim.term+gv-lim.eRef > lim.eNeg {
			m.vReason = fmt.Sprintf("%s beyond v=%d", lim.neglReason, v-1)
			break
		}
		gPrev = gv
		vs = append(vs, v)
	}
	return vs, nil
}

// rotationalLevels appends the levels J = 0, 1, … of vibrational level v
// while E(v, J) still rises with J, stays below the ceiling and within the
// population limit (at most maxJ), with their gradients (grad is scratch of
// len(c.Values)); count counts the levels of the whole sum against MaxLevels.
// It records why the ladder stopped and, when levels entered, G_v and B_v for
// the closed form.
func (m *manifold) rotationalLevels(v int, lim *energyLimits, grad []float64, count *int) error {
	src := m.src
	c := src.c
	ePrev := math.Inf(-1)
	reason := ""
	nv := 0
	for J := 0; ; J++ {
		if J > maxJ {
			reason = fmt.Sprintf("J cap %d", maxJ)
			break
		}
		e := src.energy(v, J, c.Values, grad)
		if math.IsNaN(e) || math.IsInf(e, 0) {
			return cannot("E(v=%d, J=%d) is not finite", v, J)
		}
		if !(e > ePrev) {
			reason = "centrifugal turnover"
			break
		}
		if e > lim.ceiling {
			reason = lim.ceilingReason
			break
		}
		if lim.term+e-lim.eRef > lim.eNeg {
			reason = lim.neglReason
			break
		}
		ePrev = e
		m.v = append(m.v, int32(v))
		m.J = append(m.J, int32(J))
		m.j2 = append(m.j2, int32(2*J))
		m.f = append(m.f, 0)
		m.ef = append(m.ef, 0)
		m.e = append(m.e, e)
		for _, j := range c.Free {
			m.grad = append(m.grad, grad[j])
		}
		nv++
		*count++
		if *count > MaxLevels {
			return cannot("the level sum has more than %d levels; give dissociation_energy in an electronic-states file or lower the highest temperature", MaxLevels)
		}
	}
	m.jReason[reason]++
	if nv > 0 {
		m.rot = append(m.rot, vibRot{v: v, g: src.energy(v, 0, c.Values, nil), b: src.rotConstant(v)})
	}
	return nil
}

// fineLevels appends the fine-structure and Λ-doubling components of
// vibrational level v of a fine-structure source, J from the state's lowest
// up, with their gradients ∂E/∂x = Σ_q ∂E/∂c_q·∂c_q/∂x over the record's
// fitted parameters. A component enters when its energy is within the
// ceiling and the population limit; the ladder stops at the first J none of
// whose components enters, or where a component's energy no longer rises
// with J (centrifugal turnover), at most maxJ.
func (m *manifold) fineLevels(v int, lim *energyLimits, count *int) error {
	src := m.src
	f := src.fine
	f.ensure(src, v)
	c, ok := f.constantsAt(v, src.c.Values)
	if !ok {
		return cannot("%s: state %s: no constants for v=%d", src.c.Model.Species()[m.sp], f.state.Label, v)
	}
	dc := f.freeGradients(src.c.Free, v)
	n := m.nfree
	type comp struct {
		sl model.Sublevel
		dE model.Effective
	}
	var prev [8]float64 // energy of each component (F, parity) at the previous J
	for i := range prev {
		prev[i] = math.Inf(-1)
	}
	j2 := 0
	if f.state.HalfIntegerJ() {
		j2 = 1
	}
	// The lowest J of every state is below 2Λ + 2S + 2.
	jFirst := 2*f.state.Lambda + f.state.TwiceS() + 2
	reason, nv := "", 0
	var buf []comp
	for ; ; j2 += 2 {
		if j2 > 2*maxJ {
			reason = fmt.Sprintf("J cap %d", maxJ)
			break
		}
		buf = buf[:0]
		model.EffectiveComponents(f.state, &c, v, j2, func(l model.Sublevel, dE *model.Effective) {
			buf = append(buf, comp{l, *dE})
		})
		if len(buf) == 0 && j2 < jFirst {
			continue
		}
		kept, turned, minE := 0, false, math.Inf(1)
		for _, x := range buf {
			e := x.sl.E
			minE = math.Min(minE, e)
			if math.IsNaN(e) || math.IsInf(e, 0) {
				return cannot("E(v=%d, J=%s, F%d %s) is not finite", v, states.FormatJ(j2), x.sl.F, x.sl.Parity)
			}
			k := compIndex(x.sl)
			if !(e > prev[k]) {
				turned = true
			}
			prev[k] = e
		}
		if turned {
			reason = "centrifugal turnover"
			break
		}
		for _, x := range buf {
			e := x.sl.E
			if e > lim.ceiling || lim.term+e-lim.eRef > lim.eNeg {
				continue
			}
			kept++
			m.v = append(m.v, int32(v))
			m.J = append(m.J, int32(x.sl.N))
			m.j2 = append(m.j2, int32(j2))
			m.f = append(m.f, int8(x.sl.F))
			m.ef = append(m.ef, int8(x.sl.Parity))
			m.e = append(m.e, e)
			for k := 0; k < n; k++ {
				g := 0.0
				for q := 0; q < model.NumQuantities; q++ {
					if d := x.dE[q]; d != 0 {
						g += d * dc[q*n+k]
					}
				}
				m.grad = append(m.grad, g)
			}
			nv++
			*count++
			if *count > MaxLevels {
				return cannot("the level sum has more than %d levels; give dissociation_energy in an electronic-states file or lower the highest temperature", MaxLevels)
			}
		}
		if kept == 0 {
			reason = lim.neglReason
			if minE > lim.ceiling {
				reason = lim.ceilingReason
			}
			break
		}
	}
	m.jReason[reason]++
	if nv > 0 {
		m.rot = append(m.rot, vibRot{v: v, g: c[qT], b: c[qB]})
	}
	return nil
}

// compIndex numbers the components of one J: 2(F−1) + (0 for e, 1 for f),
// F 0 counted as 1.
func compIndex(l model.Sublevel) int {
	k := 2 * max(l.F-1, 0)
	if l.Parity == states.ParityF {
		k++
	}
	return k
}

// rotConstant returns B_v of level v: the coefficient a_1(v) of x in E(v, J)
// (see levelForms), or (E(v, 1) − E(v, 0))/2 = B − 2D + … for other models.
func (s *levelSource) rotConstant(v int) float64 {
	if f := s.forms(v); len(f) > 1 {
		return f[1].eval(s.c.Values)
	}
	return (s.energy(v, 1, s.c.Values, nil) - s.energy(v, 0, s.c.Values, nil)) / 2
}

// flagExtrapolated marks the levels outside the fitted data: v above the highest
// observed v, or J above the highest J observed in that v (in the highest J
// observed in any v when v itself was not observed). The levels of a
// fine-structure source count the data of its state only.
func (m *manifold) flagExtrapolated(obs []constants.LevelRange, label string) {
	m.ext = make([]bool, len(m.e))
	jmax := map[int]int{} // 2J
	vmax, jall := -1, -1
	for _, o := range obs {
		if o.Species != label || (m.src.fine != nil && o.State != m.src.fine.label) {
			continue
		}
		j2 := 2 * o.JMax
		if o.HalfJ {
			j2++
		}
		if cur, ok := jmax[o.V]; !ok || j2 > cur {
			jmax[o.V] = j2
		}
		vmax = max(vmax, o.V)
		jall = max(jall, j2)
	}
	m.jObs, m.vObs, m.jAll = jmax, vmax, jall
	if vmax < 0 {
		// Nothing observed is known: every level is counted as outside the data.
		for i := range m.ext {
			m.ext[i] = true
		}
		return
	}
	for i := range m.e {
		v := int(m.v[i])
		jm, ok := jmax[v]
		if !ok {
			jm = jall
		}
		m.ext[i] = v > vmax || int(m.j2[i]) > jm
	}
}

func (m *manifold) jSummary() string {
	total := 0
	var keys []string
	for k, n := range m.jReason {
		keys = append(keys, k)
		total += n
	}
	sort.Slice(keys, func(a, b int) bool {
		na, nb := m.jReason[keys[a]], m.jReason[keys[b]]
		return na > nb || (na == nb && keys[a] < keys[b])
	})
	var parts []string
	for _, k := range keys {
		parts = append(parts, fmt.Sprintf("%s (%d of %d vibrational levels)", k, m.jReason[k], total))
	}
	return strings.Join(parts, "; ")
}

// j2Observed returns twice the highest J the data reach in level v (the
// highest in any level when v was not observed; -1 when nothing was).
func (m *manifold) j2Observed(v int) int {
	if j, ok := m.jObs[v]; ok {
		return j
	}
	return m.jAll
}

// energiesAt stores in out the model energies of the levels of the manifold
// used in the sum, at the record's values vals (the models evaluated
// afresh): E(v, J) of a ¹Σ source, the component (J, F, e/f) of a
// fine-structure source from the effective constants of its vibrational
// level (formed once per v: the levels are stored by v).
func (m *manifold) energiesAt(vals, out []float64) {
	src := m.src
	f := src.fine
	var c model.Effective
	cv := int32(-1)
	for k := range m.e {
		if !m.used[k] {
			continue
		}
		if f == nil {
			out[k] = src.energy(int(m.v[k]), int(m.J[k]), vals, nil)
			continue
		}
		if m.v[k] != cv {
			cv = m.v[k]
			c, _ = f.constantsAt(int(cv), vals)
		}
		e, ok := model.EffectiveLevel(f.state, &c, model.Level{V: int(cv), J2: int(m.j2[k]), F: int(m.f[k]), Parity: states.Parity(m.ef[k])})
		if !ok {
			e = math.NaN()
		}
		out[k] = e
	}
}
