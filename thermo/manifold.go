package thermo

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/constants"
)

// manifold is the enumerated levels of one (constants record, isotopologue)
// before electronic and nuclear-spin weights are applied.
type manifold struct {
	block   int
	sp      int
	src     *levelSource
	v, J    []int32
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
	// The fitted data: highest J observed in each v, highest v, highest J
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
		if err := m.rotationalLevels(v, v == vs[0], lim, grad, count); err != nil {
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
		gv := src.energy(v, 0, vals, nil)
		if math.IsNaN(gv) || math.IsInf(gv, 0) {
			return nil, cannot("%s: G(v=%d) is not finite", label, v)
		}
		if !(gv > gPrev) {
			m.vReason = fmt.Sprintf("G(v) stops rising after v=%d", v-1)
			break
		}
		if e1 := src.energy(v, 1, vals, nil); !(e1 > gv) {
			// E(v, 1) ≤ E(v, 0): B_v is not positive here, so from this v on
			// the constants describe no rotational structure at all.
			if v == v0 {
				return nil, cannot("%s: the rotational spacing E(v=%d, J=1) − E(v=%d, J=0) = %.6g cm-1 of the lowest level is not positive (B_%d ≤ 0): the constants describe no rotational levels", label, v, v, e1-gv, v)
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
func (m *manifold) rotationalLevels(v int, lowest bool, lim *energyLimits, grad []float64, count *int) error {
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
// observed in any v when v itself was not observed).
func (m *manifold) flagExtrapolated(obs []constants.LevelRange, label string) {
	m.ext = make([]bool, len(m.e))
	jmax := map[int]int{}
	vmax, jall := -1, -1
	for _, o := range obs {
		if o.Species != label {
			continue
		}
		jmax[o.V] = max(jmax[o.V], o.JMax)
		vmax = max(vmax, o.V)
		jall = max(jall, o.JMax)
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
		v, J := int(m.v[i]), int(m.J[i])
		jm, ok := jmax[v]
		if !ok {
			jm = jall
		}
		m.ext[i] = v > vmax || J > jm
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

// jObserved returns the highest J the data reach in level v (the highest in
// any level when v was not observed; -1 when nothing was).
func (m *manifold) jObserved(v int) int {
	if j, ok := m.jObs[v]; ok {
		return j
	}
	return m.jAll
}
