package thermo

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/constants"
	"bandwright/fit/model"
)

// manifold is the enumerated levels of one (constants record, isotopologue)
// before electronic and nuclear-spin weights are applied.
type manifold struct {
	block   int
	sp      int
	levels  bool // a term-values model
	v, J    []int32
	e       []float64 // model energy, cm⁻¹ (model's own zero)
	grad    []float64 // ∂e/∂x over the block's fitted parameters, len(e)·nfree
	nfree   int
	ext     []bool
	used    []bool // the level enters the sum of at least one state
	vReason string
	jReason map[string]int
	// rot gives G_v = E(v, 0) and B_v of each enumerated v, for the closed form.
	rot []vibRot
	// missing: estimates of the vibrational levels a term-values model lacks.
	missingV   []int
	missE      []float64
	missJ      []int32
	missNote   string
	placed     []int   // term-values model: the levels whose energy is known (placedLevels)
	ceilingAbs float64 // model energy ceiling, +Inf when none
	warn       []string
}

type vibRot struct {
	v    int
	g, b float64
}

// enumerateManifold lists the levels (v, J) of species sp in constants c:
//
//   - Dunham model: v from 0 while G(v) = E(v, 0) still rises; term-values models:
//     the vibrational levels of the record;
//   - J from 0 while E(v, J) still rises with J (centrifugal turnover);
//   - every level below the ceiling: D0 above the lowest level when given (ground
//     state), otherwise, for a Dunham model, the top of its G(v);
//   - every level whose population can matter at tMax: term + E − eRef ≤ 50 kT_max/hc.
func enumerateManifold(c *constants.Set, sp, blk int, term, eRef, eNeg, ceiling, d0, tMax float64, count *int) (*manifold, error) {
	m := &manifold{block: blk, sp: sp, nfree: len(c.Free), jReason: map[string]int{}, ceilingAbs: ceiling}
	lim := &energyLimits{
		term: term, eRef: eRef, eNeg: eNeg, ceiling: ceiling,
		neglReason:    fmt.Sprintf("population below e^-%g of the lowest level at T_max = %g K", cutExponent, tMax),
		ceilingReason: fmt.Sprintf("dissociation energy D0 = %g cm-1", d0),
	}
	var vs []int
	lm, isTermValues := c.Model.(*model.TermValues)
	if isTermValues {
		m.levels = true
		vs = m.placedLevels(c, lm, sp)
		m.placed = vs
		m.vReason = fmt.Sprintf("term-values model: the vibrational levels of the record (v = %s)", compressInts(vs))
	} else {
		var err error
		if vs, err = m.dunhamVibrationalLevels(c, sp, lim); err != nil {
			return nil, err
		}
	}
	grad := make([]float64, len(c.Values))
	for _, v := range vs {
		if err := m.rotationalLevels(c, sp, v, v == vs[0], lim, grad, count); err != nil {
			return nil, err
		}
	}
	if isTermValues {
		m.estimateMissing(c, lm, sp, term, eRef, eNeg, d0, tMax)
	}
	return m, nil
}

// placedLevels returns the vibrational levels of a term-values record whose
// energy above the lowest level is known: all but those whose term value the
// fit held at 0 for want of a line connecting them (constants.Set.Unconnected),
// which are left out with a warning — they count as missing levels.
func (m *manifold) placedLevels(c *constants.Set, lm *model.TermValues, sp int) []int {
	var vs, left []int
	for _, v := range lm.LevelsOf(sp) {
		if c.Unconnected(sp, v) {
			left = append(left, v)
			continue
		}
		vs = append(vs, v)
	}
	if len(left) > 0 {
		m.warn = append(m.warn, fmt.Sprintf("%s: v=%s left out of the sum: no line connects it to the lowest level, so its energy above it is unknown (the fit held its term value at 0)", c.Model.Species()[sp], compressInts(left)))
	}
	return vs
}

// energyLimits bound the levels of a manifold: a level of model energy E
// enters when E ≤ ceiling and term + E − eRef ≤ eNeg (cm⁻¹); the reasons name
// the two limits in the truncation notes.
type energyLimits struct {
	term, eRef, eNeg, ceiling float64
	neglReason, ceilingReason string
}

// dunhamVibrationalLevels returns the vibrational levels of a Dunham model:
// v from 0 up to the top of G(v) = E(v, 0) (at most maxV), while B_v > 0
// (E(v, 1) > E(v, 0)), G(v) ≤ ceiling and the population limit holds. Without
// a ceiling the top of G(v) becomes the ceiling of the manifold.
func (m *manifold) dunhamVibrationalLevels(c *constants.Set, sp int, lim *energyLimits) ([]int, error) {
	gPrev := math.Inf(-1)
	vTop := -1
	for v := 0; v <= maxV; v++ {
		gv := c.Model.Energy(sp, v, 0, c.Values, nil)
		if !(gv > gPrev) {
			break
		}
		gPrev = gv
		vTop = v
	}
	if vTop < 0 {
		return nil, cannot("%s: G(v) is not finite at v=0", "model")
	}
	gTop := gPrev
	topReason := fmt.Sprintf("G(v) stops rising after v=%d", vTop)
	if vTop == maxV {
		topReason = fmt.Sprintf("G(v) still rises at v=%d", maxV)
	}
	if math.IsInf(lim.ceiling, 1) && vTop < maxV {
		m.ceilingAbs = gTop
		lim.ceiling = gTop
		lim.ceilingReason = fmt.Sprintf("top of the model's G(v) at v=%d, %.6g cm-1 above the lowest level (no dissociation energy given)", vTop, gTop-lim.eRef)
	}
	m.vReason = topReason
	var vs []int
	for v := 0; v <= vTop; v++ {
		gv := c.Model.Energy(sp, v, 0, c.Values, nil)
		if e1 := c.Model.Energy(sp, v, 1, c.Values, nil); !(e1 > gv) {
			// E(v, 1) ≤ E(v, 0): the model's rotational constant B_v is not
			// positive here, so from this v on it describes no rotational
			// structure at all.
			if v == 0 {
				return nil, cannot("%s: the model's rotational spacing E(v=0, J=1) − E(v=0, J=0) = %.6g cm-1 is not positive (B_0 ≤ 0): the constants describe no rotational levels", c.Model.Species()[sp], e1-gv)
			}
			m.vReason = fmt.Sprintf("the model's B_v turns negative at v=%d (E(v, J=1) ≤ E(v, J=0)): the sum stops at v=%d", v, v-1)
			m.warn = append(m.warn, fmt.Sprintf("%s: the model's rotational constant B_v turns negative at v=%d (E(v, J=1) ≤ E(v, J=0): the Dunham expansion is extrapolated beyond its range); levels from v=%d on are left out of the sum", c.Model.Species()[sp], v, v))
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
		vs = append(vs, v)
	}
	return vs, nil
}

// rotationalLevels appends the levels J = 0, 1, … of vibrational level v
// while E(v, J) still rises with J, stays below the ceiling and within the
// population limit (at most maxJ), with their gradients (grad is scratch of
// len(c.Values)); count counts the levels of the whole sum against MaxLevels.
// It records why the ladder stopped and, when levels entered, G_v and B_v for
// the closed form. lowest says whether v is the manifold's lowest level, whose
// B_v must be positive.
func (m *manifold) rotationalLevels(c *constants.Set, sp, v int, lowest bool, lim *energyLimits, grad []float64, count *int) error {
	ePrev := math.Inf(-1)
	reason := ""
	nv := 0
	for J := 0; ; J++ {
		if J > maxJ {
			reason = fmt.Sprintf("J cap %d", maxJ)
			break
		}
		e := c.Model.Energy(sp, v, J, c.Values, grad)
		if math.IsNaN(e) || math.IsInf(e, 0) {
			return cannot("E(v=%d, J=%d) is not finite", v, J)
		}
		if !(e > ePrev) {
			reason = "centrifugal turnover"
			if J == 1 {
				// Only a term-values model gets here (a Dunham sum stops at the
				// first v with B_v ≤ 0): a fitted B_v that is not positive.
				if lowest {
					return cannot("%s: the rotational spacing E(v=%d, J=1) − E(v=%d, J=0) = %.6g cm-1 of the lowest level is not positive (B_v ≤ 0): the constants describe no rotational levels", c.Model.Species()[sp], v, v, e-ePrev)
				}
				reason = "B_v not positive (J = 0 only)"
				m.warn = append(m.warn, fmt.Sprintf("%s: the rotational constant of v=%d is not positive (E(v,1) ≤ E(v,0)); only its J = 0 level enters the sum", c.Model.Species()[sp], v))
			}
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
		m.rot = append(m.rot, vibRot{v: v, g: c.Model.Energy(sp, v, 0, c.Values, nil), b: rotConstant(c, sp, v)})
	}
	return nil
}

// rotConstant returns B_v of level v: Σ_k Y_k1 (v+½)^k for a Dunham model, the
// fitted B_v of a term-values model.
func rotConstant(c *constants.Set, sp, v int) float64 {
	switch m := c.Model.(type) {
	case *model.Dunham:
		b := 0.0
		vh := 1.0
		for k := 0; k <= m.MaxK(); k++ {
			b += m.Y(sp, k, 1, c.Values, nil) * vh
			vh *= float64(v) + 0.5
		}
		return b
	case *model.TermValues:
		if i := m.Index(sp, v, "B"); i >= 0 {
			return c.Values[i]
		}
		return 0
	}
	// Any other model: B from the first two rotational levels, E(1)−E(0) = 2B − 4D + …
	return (c.Model.Energy(sp, v, 1, c.Values, nil) - c.Model.Energy(sp, v, 0, c.Values, nil)) / 2
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
