package thermo

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"bandwright/fit/model"
	"bandwright/fit/states"
)

// StateLevels summarises the levels of one electronic state in the sum.
type StateLevels struct {
	State       string     `json:"state"`
	Term        string     `json:"term"`
	TermEnergy  float64    `json:"term_energy_cm-1"`
	Degeneracy  float64    `json:"electronic_degeneracy"`
	SpinWeights [2]float64 `json:"nuclear_spin_weights_even_odd"`
	Source      string     `json:"levels_from"`
	Levels      int        `json:"levels"`
	VMin        int        `json:"v_min"`
	VMax        int        `json:"v_max"`
	JMax        float64    `json:"J_max"`
	JMaxV0      float64    `json:"J_max_lowest_v"`
	// FineStructure says how the state's levels are counted: "resolved"
	// (every fine-structure and Λ-doubling component from the record's
	// effective Hamiltonian), or, for a state with spin or Λ > 0 whose
	// components the record does not describe, "neglected".
	FineStructure string  `json:"fine_structure,omitempty"`
	EMax          float64 `json:"highest_level_cm-1"`
	VTruncation   string  `json:"v_truncation"`
	JTruncation   string  `json:"J_truncation"`
	// ExtrapolatedV lists the vibrational levels the record lacks, and
	// ExtrapolationNote how they were extrapolated into the sum.
	ExtrapolatedV     string `json:"extrapolated_v,omitempty"`
	ExtrapolationNote string `json:"extrapolation,omitempty"`
	Extrapolated      int    `json:"levels_outside_fitted_data"`
}

// ZeroPoint states the energy zero of the sum.
type ZeroPoint struct {
	// Level is the lowest level: the energy zero of Q and of H°(0); J may
	// be a half-integer. N, F and Parity identify a fine-structure
	// component (0 and "" where the levels are not resolved).
	State  string  `json:"state"`
	V      int     `json:"v"`
	J      float64 `json:"J"`
	N      int     `json:"N"`
	F      int     `json:"F,omitempty"`
	Parity string  `json:"parity,omitempty"`
	// ZPE is E(v=0, J=0) of the ground state above the potential minimum (Dunham
	// models only) with its 1σ, cm⁻¹; nil for a term-values model, whose zero is the
	// lowest vibrational level of the record.
	ZPE      *float64 `json:"zero_point_energy_cm-1,omitempty"`
	ZPESigma *float64 `json:"zero_point_energy_sigma_cm-1,omitempty"`
	// LevelAboveV0J0 is the energy of the zero level above (v, J=0) of the
	// lowest vibrational level of the ground state, cm⁻¹ (non-zero when J=0
	// has no nuclear-spin weight, as in 16O2); where the fine structure is
	// resolved, above that level's vibronic term value T_v (the zero of its
	// effective Hamiltonian).
	LevelAboveV0J0 float64 `json:"zero_level_above_v0_J0_cm-1"`
	Note           string  `json:"note"`
}

func termSymbol(s State) string {
	letters := []string{"Σ", "Π", "Δ", "Φ", "Γ", "H", "I", "K", "L", "M", "N"}
	l := "Λ=" + strconv.Itoa(s.Lambda)
	if s.Lambda < len(letters) {
		l = letters[s.Lambda]
	}
	return fmt.Sprintf("%s %d%s%s", s.Label, s.Multiplicity, l, s.Symmetry.String())
}

// compressInts writes sorted integers as ranges: "0–2, 5, 7–40".
func compressInts(xs []int) string {
	if len(xs) == 0 {
		return ""
	}
	var parts []string
	start, prev := xs[0], xs[0]
	flush := func() {
		if start == prev {
			parts = append(parts, strconv.Itoa(start))
		} else {
			parts = append(parts, fmt.Sprintf("%d–%d", start, prev))
		}
	}
	for _, x := range xs[1:] {
		if x == prev+1 {
			prev = x
			continue
		}
		flush()
		start, prev = x, x
	}
	flush()
	return strings.Join(parts, ", ")
}

// summarise makes the StateLevels of every state from its manifold and the
// levels of the sum.
func (b *levelSum) summarise() {
	for i := range b.sys.states {
		b.sys.summaries = append(b.sys.summaries, b.stateSummary(i))
	}
}

// stateSummary summarises state i: term, weights, where its levels come from,
// the truncations, the missing levels, and the range of its levels in the sum.
func (b *levelSum) stateSummary(i int) StateLevels {
	sys := b.sys
	st := sys.states[i]
	m := sys.manifolds[sys.stateMan[i]]
	ws := b.weights[i]
	sl := StateLevels{
		State: st.Label, Term: termSymbol(st), TermEnergy: st.TermEnergy,
		Degeneracy: ws.ge, SpinWeights: [2]float64{ws.even, ws.odd},
		VMin: -1, VMax: -1, JMax: -1, JMaxV0: -1,
		VTruncation: m.vReason, JTruncation: m.jSummary(),
	}
	switch {
	case i == b.ground:
		sl.Source = "fitted constants (" + nameOr(b.p.Source, "constants record") + ")"
	case st.Constants != nil:
		sl.Source = "own constants (" + nameOr(st.Source, "constants record") + ")"
	default:
		sl.Source = fmt.Sprintf("ground-state levels shifted by %g cm-1 (no constants of its own)", st.TermEnergy)
	}
	switch {
	case m.src.fine != nil:
		sl.FineStructure = "resolved: every fine-structure and Λ-doubling component (J, F, e/f) from the effective Hamiltonian of the constants record"
	case st.Multiplicity > 1 || st.Lambda > 0:
		sl.FineStructure = "neglected: each rotational level's spin and Λ components at one energy (see the fine_structure entry of the uncertainty budget)"
	}
	if len(m.extrapolatedV) > 0 {
		sl.ExtrapolatedV = compressInts(m.extrapolatedV)
		sl.ExtrapolationNote = m.src.note
	}
	minV := math.MaxInt
	for _, l := range b.levels {
		if l.st != i {
			continue
		}
		v, J := int(m.v[l.idx]), float64(m.j2[l.idx])/2
		sl.Levels++
		minV = min(minV, v)
		sl.VMax = max(sl.VMax, v)
		sl.JMax = max(sl.JMax, J)
		sl.EMax = max(sl.EMax, l.e-sys.e0)
		if m.ext[l.idx] {
			sl.Extrapolated++
		}
	}
	if top := maxInt32(m.v); sl.Levels > 0 && int(top) > sl.VMax {
		// The enumeration reaches the highest limit of the uncertainty
		// budget's alternatives; the nominal sum ends lower, at its limit.
		sl.VTruncation = fmt.Sprintf("%s: no level of v ≥ %d lies below it (the uncertainty budget's alternatives reach v = %d: %s)",
			sys.dissociation.reason(), sl.VMax+1, top, m.vReason)
	}
	if sl.Levels > 0 {
		sl.VMin = minV
		for _, l := range b.levels {
			if l.st == i && int(m.v[l.idx]) == minV {
				sl.JMaxV0 = max(sl.JMaxV0, float64(m.j2[l.idx])/2)
			}
		}
	}
	return sl
}

// describeZero states the energy zero of the sum: the lowest level, its height
// above (v, J=0) of the lowest vibrational level of the ground record, and for
// a Dunham model the zero-point energy E(0, 0) above the potential minimum with
// its 1σ, √(gᵀCg), g = ∂E(0, 0)/∂x over the ground record's fitted parameters.
func (b *levelSum) describeZero() {
	sys := b.sys
	gc := b.p.Constants
	z := b.levels[0]
	zm := sys.manifolds[sys.stateMan[z.st]]
	sys.zp = &ZeroPoint{State: sys.states[z.st].Label, V: int(zm.v[z.idx]), J: float64(zm.j2[z.idx]) / 2, N: int(zm.J[z.idx])}
	if zm.ef[z.idx] != 0 {
		sys.zp.F, sys.zp.Parity = int(zm.f[z.idx]), states.Parity(zm.ef[z.idx]).String()
	}
	e00 := sys.sources[0].origin(b.vLow, gc.Values)
	sys.zp.LevelAboveV0J0 = sys.e0 - e00
	if _, ok := gc.Model.(*model.Dunham); ok {
		grad := make([]float64, len(gc.Values))
		zpe := gc.Model.Energy(b.gsp, 0, 0, gc.Values, grad)
		gf := make([]float64, len(gc.Free))
		for k, j := range gc.Free {
			gf[k] = grad[j]
		}
		sd := math.Sqrt(math.Max(0, quad(gc.Cov, gf)))
		sys.zp.ZPE, sys.zp.ZPESigma = &zpe, &sd
		sys.zp.Note = "zero-point energy E(v=0, J=0) of the ground state above the potential minimum (Dunham model); Q, H°(T)−H°(0) are measured from the lowest level"
	} else {
		sys.zp.Note = fmt.Sprintf("term-values model: energies are measured from the band origin of the lowest vibrational level (v=%d); the zero-point energy above the potential minimum is not known from a term-values model", b.vLow)
	}
	if b.vLow > 0 {
		sys.warnings = append(sys.warnings, fmt.Sprintf("the record's lowest vibrational level of %s is v=%d: levels below it are missing, and the energy zero is not the lowest level of the molecule", sys.iso.Label, b.vLow))
	}
}

// Describe writes the level as outputs name it: "v=0, J=0.5, F1e" (N added
// where the components are resolved: "v=0, N=1, J=0, F3").
func (z ZeroPoint) Describe() string {
	j := strconv.FormatFloat(z.J, 'f', -1, 64)
	if z.Parity == "" && z.F == 0 {
		return fmt.Sprintf("v=%d, J=%s", z.V, j)
	}
	f := ""
	if z.F > 0 {
		f = fmt.Sprintf(", F%d", z.F)
	}
	return fmt.Sprintf("v=%d, N=%d, J=%s%s%s", z.V, z.N, j, f, z.Parity)
}

// maxInt32 returns the largest element of xs (−1 when empty).
func maxInt32(xs []int32) int32 {
	m := int32(-1)
	for _, x := range xs {
		m = max(m, x)
	}
	return m
}
