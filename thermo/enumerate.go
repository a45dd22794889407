package thermo

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/units"
)

// Limits of the level enumeration.
const (
	// cutExponent: levels with c₂·E/T above it (E above the lowest level) are
	// left out of a pass at temperature T; e⁻⁵⁰ ≈ 2·10⁻²² per unit weight.
	cutExponent = 50.0
	// MaxLevels bounds the number of levels of a sum (all states together).
	MaxLevels = 1_000_000
	maxV      = 1000
	maxJ      = 100_000
)

// enumerate builds the level sum for the temperatures up to tMax.
func enumerate(p Problem, s Settings, tMax float64) (*System, error) {
	if p.Constants == nil {
		return nil, errors.New("thermo: no constants")
	}
	label := p.Species
	if label == "" {
		label = p.Constants.Model.Species()[0]
	}
	iso, err := species.Parse(label)
	if err != nil {
		return nil, fmt.Errorf("thermo: %w", err)
	}
	if model.SpeciesIndex(p.Constants.Model, iso.Label) < 0 {
		return nil, fmt.Errorf("thermo: %s: species %s is not in the record (it has %s)", nameOr(p.Source, "constants"), iso.Label, strings.Join(p.Constants.Model.Species(), ", "))
	}
	if p.DissociationEnergy < 0 || math.IsNaN(p.DissociationEnergy) || math.IsInf(p.DissociationEnergy, 0) {
		return nil, fmt.Errorf("thermo: dissociation energy %v must be finite and > 0 (0: not given)", p.DissociationEnergy)
	}
	states := p.States
	if len(states) == 0 {
		states = defaultStates(iso)
	}
	sys := &System{iso: iso, states: states, spin: s.nuclearSpin(), tMax: tMax}
	ground := -1
	for i, st := range states {
		if st.TermEnergy == 0 {
			if ground >= 0 {
				return nil, fmt.Errorf("thermo: states %s and %s both have term energy 0; exactly one is the ground state", states[ground].Label, st.Label)
			}
			ground = i
			if st.Constants != nil {
				return nil, fmt.Errorf("thermo: state %s: the ground state takes the constants of the record given to thermo", st.Label)
			}
		}
		if !(st.TermEnergy >= 0) || math.IsInf(st.TermEnergy, 0) {
			return nil, fmt.Errorf("thermo: state %s: term energy %v must be finite and ≥ 0", st.Label, st.TermEnergy)
		}
		if st.Multiplicity < 1 || st.Lambda < 0 {
			return nil, fmt.Errorf("thermo: state %s: spin multiplicity must be ≥ 1 and Λ ≥ 0", st.Label)
		}
		if err := iso.CheckStateSymmetry(st.Lambda, st.Symmetry); err != nil {
			return nil, fmt.Errorf("thermo: state %s: symmetry: %w", st.Label, err)
		}
	}
	if ground < 0 {
		return nil, errors.New("thermo: no state has term energy 0 (the ground state)")
	}

	// Parameter blocks: the ground record, then each state with its own record.
	sys.blocks = []block{{c: p.Constants}}
	stateBlock := make([]int, len(states))
	for i, st := range states {
		stateBlock[i] = 0
		if st.Constants != nil {
			if model.SpeciesIndex(st.Constants.Model, iso.Label) < 0 {
				return nil, fmt.Errorf("thermo: state %s: %s: species %s is not in that record (it has %s)", st.Label, nameOr(st.Source, "constants"), iso.Label, strings.Join(st.Constants.Model.Species(), ", "))
			}
			off := 0
			for _, b := range sys.blocks {
				off += len(b.c.Free)
			}
			sys.blocks = append(sys.blocks, block{c: st.Constants, offset: off, label: st.Label})
			stateBlock[i] = len(sys.blocks) - 1
		}
	}
	for _, b := range sys.blocks {
		sys.p += len(b.c.Free)
		for _, j := range b.c.Free {
			n := b.c.Params[j].ID()
			if b.label != "" {
				n += "@" + b.label
			}
			sys.names = append(sys.names, n)
		}
		sys.x0 = append(sys.x0, b.c.FreeValues()...)
	}
	sys.cov = mat.NewSymDense(max(sys.p, 1), nil)
	for _, b := range sys.blocks {
		n := len(b.c.Free)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				sys.cov.SetSym(b.offset+i, b.offset+j, b.c.Cov.At(i, j))
			}
		}
	}
	if err := checkPSD(sys.cov, sys.names); err != nil {
		return nil, err
	}

	// Weights of each state.
	type weights struct {
		ge        float64
		even, odd float64
	}
	ws := make([]weights, len(states))
	for i, st := range states {
		ev, od, err := NuclearSpinWeights(iso, st.Lambda, st.Symmetry, sys.spin)
		if err != nil {
			return nil, fmt.Errorf("thermo: state %s: %w", st.Label, err)
		}
		ws[i] = weights{ElectronicDegeneracy(st.Multiplicity, st.Lambda), ev, od}
	}
	weightOf := func(i, J int) float64 {
		if J < states[i].Lambda {
			return 0
		}
		gns := ws[i].even
		if J%2 == 1 {
			gns = ws[i].odd
		}
		return ws[i].ge * gns * float64(2*J+1)
	}

	// Provisional zero: the lowest weighted level of the ground state.
	gc := p.Constants
	gsp := model.SpeciesIndex(gc.Model, iso.Label)
	vLow := 0
	if lm, ok := gc.Model.(*model.TermValues); ok {
		vLow = lm.LevelsOf(gsp)[0]
	}
	jLow := states[ground].Lambda
	if weightOf(ground, jLow) == 0 {
		jLow++
	}
	eRef := gc.Model.Energy(gsp, vLow, jLow, gc.Values, nil)
	eNeg := cutExponent * tMax / units.SecondRadiation

	// Manifolds: the ground record, and one per state with its own record.
	manOf := map[int]int{}
	sys.stateMan = make([]int, len(states))
	sys.stateTerm = make([]float64, len(states))
	count := 0
	for _, i := range append([]int{ground}, otherStates(len(states), ground)...) {
		st := states[i]
		b := stateBlock[i]
		sys.stateTerm[i] = st.TermEnergy
		if mi, ok := manOf[b]; ok {
			sys.stateMan[i] = mi
			continue
		}
		c := sys.blocks[b].c
		sp := model.SpeciesIndex(c.Model, iso.Label)
		obs := p.Observed
		ceiling := math.Inf(1)
		d0 := 0.0
		if b == 0 && p.DissociationEnergy > 0 {
			d0 = p.DissociationEnergy
			ceiling = eRef + d0
		}
		if b != 0 {
			obs = st.Observed
		}
		m, err := enumerateManifold(c, sp, b, st.TermEnergy, eRef, eNeg, ceiling, d0, tMax, &count)
		if err != nil {
			return nil, err
		}
		m.flagExtrapolated(obs, iso.Label)
		sys.warnings = append(sys.warnings, m.warn...)
		manOf[b] = len(sys.manifolds)
		sys.stateMan[i] = len(sys.manifolds)
		sys.manifolds = append(sys.manifolds, m)
	}

	// Levels of every state with their weights.
	type lvl struct {
		e   float64
		w   float64
		st  int
		idx int
	}
	var all []lvl
	for _, m := range sys.manifolds {
		m.used = make([]bool, len(m.e))
	}
	for i := range states {
		m := sys.manifolds[sys.stateMan[i]]
		for k := range m.e {
			J := int(m.J[k])
			w := weightOf(i, J)
			if w == 0 {
				continue
			}
			e := sys.stateTerm[i] + m.e[k]
			if e-eRef > eNeg {
				continue
			}
			all = append(all, lvl{e, w, i, k})
			m.used[k] = true
		}
	}
	if len(all) == 0 {
		return nil, cannot("no bound level with non-zero weight below the energy limits (check the constants and the card)")
	}
	if len(all) > MaxLevels {
		return nil, cannot("the level sum has %d levels, more than %d; give dissociation_energy in a species card or lower the highest temperature", len(all), MaxLevels)
	}
	// slices.SortStableFunc: the reflection-based sort.SliceStable took a
	// tenth of a nightly chain's time on 11 000 levels.
	slices.SortStableFunc(all, func(a, b lvl) int { return cmp.Compare(a.e, b.e) })
	z := all[0]
	sys.zero = levelRef{z.st, z.idx}
	sys.e0 = z.e
	zg := sys.levelGrad(z.st, z.idx, nil)
	n := len(all)
	sys.e = make([]float64, n)
	sys.w = make([]float64, n)
	sys.g = make([]float64, n*sys.p)
	lg := make([]float64, sys.p)
	sys.ext = make([]bool, n)
	sys.st = make([]int16, n)
	sys.lv = make([]int32, n)
	for i, l := range all {
		sys.e[i] = l.e - sys.e0
		sys.w[i] = l.w
		sys.st[i] = int16(l.st)
		sys.lv[i] = int32(l.idx)
		m := sys.manifolds[sys.stateMan[l.st]]
		sys.ext[i] = m.ext[l.idx]
		g := sys.levelGrad(l.st, l.idx, lg)
		for k := range g {
			sys.g[k*n+i] = g[k] - zg[k]
		}
	}

	// Missing vibrational levels of term-values models (estimates, no gradients).
	for i := range states {
		m := sys.manifolds[sys.stateMan[i]]
		for k := range m.missE {
			w := weightOf(i, int(m.missJ[k]))
			if w == 0 {
				continue
			}
			sys.missE = append(sys.missE, sys.stateTerm[i]+m.missE[k]-sys.e0)
			sys.missW = append(sys.missW, w)
		}
	}

	// Closed-form factors.
	sys.sigmaNumber = iso.SymmetryNumber()
	sys.spinFactor = 1
	if sys.spin == SpinLineIntensity {
		sys.spinFactor = float64(iso.NuclearSpinStates())
	}

	// Summaries.
	for i, st := range states {
		m := sys.manifolds[sys.stateMan[i]]
		sl := StateLevels{
			State: st.Label, Term: termSymbol(st), TermEnergy: st.TermEnergy,
			Degeneracy: ws[i].ge, SpinWeights: [2]float64{ws[i].even, ws[i].odd},
			VMin: -1, VMax: -1, JMax: -1, JMaxV0: -1,
			VTruncation: m.vReason, JTruncation: m.jSummary(),
		}
		switch {
		case i == ground:
			sl.Source = "fitted constants (" + nameOr(p.Source, "constants record") + ")"
		case st.Constants != nil:
			sl.Source = "own constants (" + nameOr(st.Source, "constants record") + ")"
		default:
			sl.Source = fmt.Sprintf("ground-state levels shifted by %g cm-1 (no constants of its own)", st.TermEnergy)
		}
		if len(m.missingV) > 0 {
			sl.MissingV = compressInts(m.missingV)
		}
		sl.MissingNote = m.missNote
		minV := math.MaxInt
		for _, l := range all {
			if l.st != i {
				continue
			}
			v, J := int(m.v[l.idx]), int(m.J[l.idx])
			sl.Levels++
			minV = min(minV, v)
			sl.VMax = max(sl.VMax, v)
			sl.JMax = max(sl.JMax, J)
			sl.EMax = max(sl.EMax, l.e-sys.e0)
			if m.ext[l.idx] {
				sl.Extrapolated++
			}
		}
		if sl.Levels > 0 {
			sl.VMin = minV
			for _, l := range all {
				if l.st == i && int(m.v[l.idx]) == minV {
					sl.JMaxV0 = max(sl.JMaxV0, int(m.J[l.idx]))
				}
			}
		}
		sys.summaries = append(sys.summaries, sl)
	}

	// Zero point.
	zm := sys.manifolds[sys.stateMan[z.st]]
	sys.zp = &ZeroPoint{State: states[z.st].Label, V: int(zm.v[z.idx]), J: int(zm.J[z.idx])}
	e00 := gc.Model.Energy(gsp, vLow, 0, gc.Values, nil)
	sys.zp.LevelAboveV0J0 = sys.e0 - e00
	if _, ok := gc.Model.(*model.Dunham); ok {
		grad := make([]float64, len(gc.Values))
		zpe := gc.Model.Energy(gsp, 0, 0, gc.Values, grad)
		gf := make([]float64, len(gc.Free))
		for k, j := range gc.Free {
			gf[k] = grad[j]
		}
		sd := math.Sqrt(math.Max(0, quad(gc.Cov, gf)))
		sys.zp.ZPE, sys.zp.ZPESigma = &zpe, &sd
		sys.zp.Note = "zero-point energy E(v=0, J=0) of the ground state above the potential minimum (Dunham model); Q, H°(T)−H°(0) are measured from the lowest level"
	} else {
		sys.zp.Note = fmt.Sprintf("term-values model: energies are measured from the band origin of the lowest vibrational level in the record (v=%d); the zero-point energy above the potential minimum is not known from a term-values model", vLow)
	}
	if vLow > 0 {
		sys.warnings = append(sys.warnings, fmt.Sprintf("the record's lowest vibrational level of %s is v=%d: levels below it are missing, and the energy zero is not the lowest level of the molecule", iso.Label, vLow))
	}
	return sys, nil
}

func otherStates(n, ground int) []int {
	var out []int
	for i := 0; i < n; i++ {
		if i != ground {
			out = append(out, i)
		}
	}
	return out
}

func nameOr(s, def string) string {
	if s == "" {
		return def
	}
	return s
}
