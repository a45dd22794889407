package thermo

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
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

// enumerate builds the level sum for the temperatures up to tMax. The steps,
// in order, are the methods of levelSum: check the species, the dissociation
// energy and the states; combine the fitted parameters of every constants
// record into one vector with its covariance; weigh each state (electronic
// degeneracy and nuclear-spin weights); make the level source of every record
// (its levels and the extrapolation of the levels it lacks); fix a
// provisional energy zero and the population limit; settle the dissociation
// limit (given, or estimated from the ground state's vibrational structure);
// enumerate the levels of every record up to the highest limit any
// alternative of the budget needs (enumerateManifold); collect the weighted
// levels of every state, sorted by energy, split at each state's nominal
// limit; store them with their gradients relative to the lowest level;
// summarise each state; describe the zero.
func enumerate(p Problem, s Settings, tMax float64, o buildOptions) (*System, error) {
	b, err := newLevelSum(p, s, tMax)
	if err != nil {
		return nil, err
	}
	b.opts = o
	sys := b.sys
	sys.pressure = s.pressure()
	sys.molarMass = sys.iso.MolarMass()
	if s.composition() == CompositionNatural {
		sys.molarMass = sys.iso.NaturalMolarMass()
	}
	if err := b.combineParameters(); err != nil {
		return nil, err
	}
	if err := b.weighStates(); err != nil {
		return nil, err
	}
	if err := b.makeSources(); err != nil {
		return nil, err
	}
	b.provisionalZero()
	b.settleDissociation()
	if err := b.enumerateManifolds(); err != nil {
		return nil, err
	}
	if err := b.collectLevels(); err != nil {
		return nil, err
	}
	b.storeLevels()
	b.symmetryFactors()
	b.summarise()
	b.describeZero()
	return b.sys, nil
}

// buildOptions are the choices a level sum is built with: the nominal ones
// for the table, the alternatives' for the budget.
type buildOptions struct {
	// choice of the extrapolation (x_e, α factor); ω_e and ω_e x_e come
	// from each state, shifted by omegaShift and omegaXShift of their σ.
	xe, alphaScale, omegaShift, omegaXShift float64
	// alternative: a level sum of the budget (no extra levels above the
	// nominal dissociation limit).
	alternative bool
	// fineAlternative: see extChoice.
	fineAlternative bool
}

func nominalBuild() buildOptions { return buildOptions{xe: xePriorCentre, alphaScale: 1} }

// levelSum builds a System in the steps of enumerate; each step reads what
// the earlier ones left in it.
type levelSum struct {
	p    Problem
	tMax float64
	sys  *System
	opts buildOptions
	// ground is the index of the ground state (term energy 0) in sys.states.
	ground int
	// stateBlock is the parameter block (index in sys.blocks) of each state,
	// stateSrc its level source and manifold (index in sys.sources and
	// sys.manifolds), stateRst the index of its state in a record that
	// resolves its fine structure (-1: none).
	stateBlock, stateSrc, stateRst []int
	// weights of each state.
	weights []stateWeights
	// gsp is the isotopologue's index in the ground-state record, vLow the
	// ground source's lowest vibrational level.
	gsp, vLow int
	// eRef is the provisional zero: the model energy of the lowest weighted
	// level of the ground state, cm⁻¹. Levels more than eNeg above it are left
	// out (population below e⁻⁵⁰ at tMax), cm⁻¹.
	eRef, eNeg float64
	// d0 is the nominal dissociation energy above eRef, d0Max the highest of
	// the budget's alternatives (cm⁻¹; +Inf: no limit).
	d0, d0Max float64
	// levels are the weighted levels of every state below its nominal limit,
	// extra those between it and the highest alternative's, sorted by energy.
	levels, extra []sumLevel
}

// stateWeights are the electronic degeneracy g_e and the nuclear-spin weights
// of the even-N and odd-N levels of one state, and of its levels of total
// parity + and − (the levels of a fine-structure source).
type stateWeights struct {
	ge          float64
	even, odd   float64
	plus, minus float64
}

// sumLevel is one level of the sum before it is stored: absolute energy e
// (state term + model energy, cm⁻¹), weight w, state st and index idx in the
// state's manifold.
type sumLevel struct {
	e   float64
	w   float64
	st  int
	idx int
}

// newLevelSum checks the problem's species, dissociation energy and states
// (nil: the default ¹Σ⁺ state) and finds the ground state.
func newLevelSum(p Problem, s Settings, tMax float64) (*levelSum, error) {
	iso, err := problemSpecies(p)
	if err != nil {
		return nil, err
	}
	if p.DissociationEnergy < 0 || math.IsNaN(p.DissociationEnergy) || math.IsInf(p.DissociationEnergy, 0) {
		return nil, fmt.Errorf("thermo: dissociation energy %v must be finite and > 0 (0: not given)", p.DissociationEnergy)
	}
	states := p.States
	if len(states) == 0 {
		states = recordStates(p.Constants, iso)
	}
	if len(states) == 0 {
		states = defaultStates(iso)
	}
	ground, err := groundState(iso, states)
	if err != nil {
		return nil, err
	}
	if err := checkClosedShell(p, iso); err != nil {
		return nil, err
	}
	if p.DissociationSigma < 0 || math.IsNaN(p.DissociationSigma) || math.IsInf(p.DissociationSigma, 0) || (p.DissociationSigma > 0 && p.DissociationEnergy == 0) {
		return nil, fmt.Errorf("thermo: dissociation energy σ %v must be finite and ≥ 0, and given with the dissociation energy", p.DissociationSigma)
	}
	sys := &System{iso: iso, states: states, spin: s.nuclearSpin(), tMax: tMax}
	return &levelSum{p: p, tMax: tMax, sys: sys, ground: ground}, nil
}

// problemSpecies returns the isotopologue of the sum: Problem.Species, or the
// first species of the record; it must be in the record.
func problemSpecies(p Problem) (species.Isotopologue, error) {
	if p.Constants == nil {
		return species.Isotopologue{}, errors.New("thermo: no constants")
	}
	label := p.Species
	if label == "" {
		label = p.Constants.Model.Species()[0]
	}
	iso, err := species.Parse(label)
	if err != nil {
		return species.Isotopologue{}, fmt.Errorf("thermo: %w", err)
	}
	if model.SpeciesIndex(p.Constants.Model, iso.Label) < 0 {
		return species.Isotopologue{}, fmt.Errorf("thermo: %s: species %s is not in the record (it has %s)", nameOr(p.Source, "constants"), iso.Label, strings.Join(p.Constants.Model.Species(), ", "))
	}
	return iso, nil
}

// groundState checks the states (energies, quantum numbers, symmetry) and
// returns the index of the one ground state, the state with term energy 0,
// which takes the constants of the problem.
func groundState(iso species.Isotopologue, states []State) (int, error) {
	ground := -1
	for i, st := range states {
		if st.TermEnergy == 0 {
			if ground >= 0 {
				return 0, fmt.Errorf("thermo: states %s and %s both have term energy 0; exactly one is the ground state", states[ground].Label, st.Label)
			}
			ground = i
			if st.Constants != nil {
				return 0, fmt.Errorf("thermo: state %s: the ground state takes the constants of the record given to thermo", st.Label)
			}
		}
		if !(st.TermEnergy >= 0) || math.IsInf(st.TermEnergy, 0) {
			return 0, fmt.Errorf("thermo: state %s: term energy %v must be finite and ≥ 0", st.Label, st.TermEnergy)
		}
		if st.Multiplicity < 1 || st.Lambda < 0 {
			return 0, fmt.Errorf("thermo: state %s: spin multiplicity must be ≥ 1 and Λ ≥ 0", st.Label)
		}
		if err := iso.CheckStateSymmetry(st.Lambda, st.Symmetry); err != nil {
			return 0, fmt.Errorf("thermo: state %s: symmetry: %w", st.Label, err)
		}
	}
	if ground < 0 {
		return 0, errors.New("thermo: no state has term energy 0 (the ground state)")
	}
	return ground, nil
}

// combineParameters makes the parameter blocks (the ground record, then each
// state with its own record) and the combined fitted-parameter vector x̂, its
// names and its block-diagonal covariance, which must be positive
// semi-definite.
func (b *levelSum) combineParameters() error {
	sys := b.sys
	sys.blocks = []block{{c: b.p.Constants}}
	b.stateBlock = make([]int, len(sys.states))
	off := len(b.p.Constants.Free)
	for i, st := range sys.states {
		if st.Constants == nil {
			continue
		}
		if model.SpeciesIndex(st.Constants.Model, sys.iso.Label) < 0 {
			return fmt.Errorf("thermo: state %s: %s: species %s is not in that record (it has %s)", st.Label, nameOr(st.Source, "constants"), sys.iso.Label, strings.Join(st.Constants.Model.Species(), ", "))
		}
		sys.blocks = append(sys.blocks, block{c: st.Constants, offset: off, label: st.Label})
		b.stateBlock[i] = len(sys.blocks) - 1
		off += len(st.Constants.Free)
	}
	for _, bl := range sys.blocks {
		sys.p += len(bl.c.Free)
		for _, j := range bl.c.Free {
			n := bl.c.Params[j].ID()
			if bl.label != "" {
				n += "@" + bl.label
			}
			sys.names = append(sys.names, n)
		}
		sys.x0 = append(sys.x0, bl.c.FreeValues()...)
	}
	sys.cov = mat.NewSymDense(max(sys.p, 1), nil)
	for _, bl := range sys.blocks {
		n := len(bl.c.Free)
		for i := 0; i < n; i++ {
			for j := i; j < n; j++ {
				sys.cov.SetSym(bl.offset+i, bl.offset+j, bl.c.Cov.At(i, j))
			}
		}
	}
	return checkPSD(sys.cov, sys.names)
}

// weighStates computes g_e and the nuclear-spin weights of every state in the
// settings' convention.
func (b *levelSum) weighStates() error {
	b.weights = make([]stateWeights, len(b.sys.states))
	for i, st := range b.sys.states {
		ev, od, err := NuclearSpinWeights(b.sys.iso, st.Lambda, st.Symmetry, b.sys.spin)
		if err != nil {
			return fmt.Errorf("thermo: state %s: %w", st.Label, err)
		}
		pl, mi, err := nuclearSpinWeightsByParity(b.sys.iso, st.Symmetry, b.sys.spin)
		if err != nil {
			return fmt.Errorf("thermo: state %s: %w", st.Label, err)
		}
		b.weights[i] = stateWeights{ElectronicDegeneracy(st.Multiplicity, st.Lambda), ev, od, pl, mi}
	}
	return nil
}

// levelWeight returns the weight of level k of manifold m in state i: for a
// fine-structure level (2J+1)·g_ns(parity), the level being one component
// of its own; otherwise weight(i, J).
func (b *levelSum) levelWeight(i int, m *manifold, k int) float64 {
	if m.ef[k] == 0 {
		return b.weight(i, int(m.J[k]))
	}
	w := b.weights[i]
	gns := w.plus
	if totalParity(int(m.j2[k]), states.Parity(m.ef[k])) < 0 {
		gns = w.minus
	}
	return gns * float64(m.j2[k]+1)
}

// weight returns g_e·g_ns(J)·(2J+1) of level J of state i; 0 below J = Λ.
func (b *levelSum) weight(i, J int) float64 {
	if J < b.sys.states[i].Lambda {
		return 0
	}
	w := b.weights[i]
	gns := w.even
	if J%2 == 1 {
		gns = w.odd
	}
	return w.ge * gns * float64(2*J+1)
}

// makeSources makes the level source of every state, the ground state's
// first (sys.sources[0]): the state's record (its own, or the ground
// state's) for the isotopologue, with the extrapolation of the levels it
// lacks made with the build's choices (ω_e and ω_e x_e of the source's
// first state shifted by omegaShift and omegaXShift of their σ; its ω_e x_e
// replaces the prior's x_e). A state whose record resolves its fine
// structure (recordFineState) gets a fine-structure source of its own; the
// other states of one record share the record's ¹Σ source (the model's
// Energy; J read as N). States share a source where they share both. It also
// sets the term energy each source's energies are shifted by: 0 for a state
// of the ground record that the record describes (its energies include the
// state's term value), the state's term energy otherwise.
func (b *levelSum) makeSources() error {
	sys := b.sys
	type key struct{ blk, rst int }
	idx := map[key]int{}
	b.stateSrc = make([]int, len(sys.states))
	b.stateRst = make([]int, len(sys.states))
	sys.stateTerm = make([]float64, len(sys.states))
	for _, i := range append([]int{b.ground}, otherStates(len(sys.states), b.ground)...) {
		st := sys.states[i]
		blk := b.stateBlock[i]
		c := sys.blocks[blk].c
		rst, fine, err := recordFineState(c, st, i == b.ground || blk != 0)
		if err != nil {
			return err
		}
		if !fine {
			rst = -1
		}
		b.stateRst[i] = rst
		sys.stateTerm[i] = st.TermEnergy
		if fine && blk == 0 {
			sys.stateTerm[i] = 0
		}
		k := key{blk, rst}
		if j, ok := idx[k]; ok {
			b.stateSrc[i] = j
			continue
		}
		obs := b.p.Observed
		if blk != 0 {
			obs = st.Observed
		}
		ch := extChoice{xe: b.opts.xe, alphaScale: b.opts.alphaScale, fineAlternative: b.opts.fineAlternative}
		om := st
		if st.OmegaE == 0 && blk == 0 {
			// States shifted from the ground record take its ω_e.
			om = sys.states[b.ground]
		}
		if om.OmegaE > 0 {
			ch.omega = om.OmegaE + b.opts.omegaShift*om.OmegaESigma
		}
		if om.OmegaE > 0 && om.OmegaEXE > 0 {
			ch.omegaX = om.OmegaEXE + b.opts.omegaXShift*om.OmegaEXESigma
			ch.omegaXExact = om.OmegaEXESigma == 0
		}
		sp := model.SpeciesIndex(c.Model, sys.iso.Label)
		var src *levelSource
		if fine {
			src = newFineSource(c, sp, rst, observedStateLevels(obs, sys.iso.Label, rstLabel(c, rst)), ch)
		} else {
			src = newLevelSource(c, sp, observedLevels(obs, sys.iso.Label), ch)
		}
		src.blk = blk
		idx[k] = len(sys.sources)
		b.stateSrc[i] = len(sys.sources)
		sys.sources = append(sys.sources, src)
	}
	return nil
}

// rstLabel returns the label under which the record's levels_observed name
// state rst of the record c: "" for its ground state.
func rstLabel(c *constants.Set, rst int) string {
	if rst <= 0 {
		return ""
	}
	return c.States()[rst].Label
}

// provisionalZero sets eRef, the model energy of the lowest weighted level of
// the ground state (lowest v of its source, the lowest J with weight), and
// the population limit eNeg = 50·T_max/c₂.
func (b *levelSum) provisionalZero() {
	src := b.sys.sources[0]
	gc := b.p.Constants
	b.gsp = src.sp
	b.vLow = 0
	for b.vLow < maxV && !src.has(b.vLow) {
		b.vLow++
	}
	b.eNeg = cutExponent * b.tMax / units.SecondRadiation
	if src.fine != nil {
		b.eRef = b.lowestFineLevel(src, b.vLow)
		return
	}
	jLow := b.sys.states[b.ground].Lambda
	if b.weight(b.ground, jLow) == 0 {
		jLow++
	}
	b.eRef = src.energy(b.vLow, jLow, gc.Values, nil)
}

// lowestFineLevel returns the energy of the lowest component with non-zero
// weight of level v of the ground state's fine-structure source (J up to
// 2Λ + 2S + 4, where the lowest level of every state lies), NaN when the
// source has no constants for v.
func (b *levelSum) lowestFineLevel(src *levelSource, v int) float64 {
	f := src.fine
	f.ensure(src, v)
	c, ok := f.constantsAt(v, src.c.Values)
	if !ok {
		return math.NaN()
	}
	w := b.weights[b.ground]
	low := math.Inf(1)
	for j2 := 0; j2 <= 2*f.state.Lambda+f.state.TwiceS()+8; j2++ {
		model.EffectiveComponents(f.state, &c, v, j2, func(l model.Sublevel, _ *model.Effective) {
			g := w.plus
			if totalParity(l.J2, l.Parity) < 0 {
				g = w.minus
			}
			if g > 0 {
				low = math.Min(low, l.E)
			}
		})
	}
	return low
}

// enumerateManifolds enumerates one manifold per level source, the ground
// state's first, up to the highest dissociation limit of the states that use
// it (the budget's alternatives included), and flags its levels outside the
// fitted data.
func (b *levelSum) enumerateManifolds() error {
	sys, p := b.sys, b.p
	sys.stateMan = b.stateSrc
	count := 0
	for si, src := range sys.sources {
		first := -1
		for i := range sys.states {
			if b.stateSrc[i] == si && (first < 0 || i == b.ground) {
				first = i
			}
		}
		st := sys.states[first]
		obs := p.Observed
		if src.blk != 0 {
			obs = st.Observed
		}
		lim := &energyLimits{term: sys.stateTerm[first], eRef: b.eRef, eNeg: b.eNeg, ceiling: b.manifoldCeiling(si),
			ceilingReason: sys.dissociation.reason()}
		m, err := enumerateManifold(src, src.blk, lim, b.tMax, &count)
		if err != nil {
			return err
		}
		m.flagExtrapolated(obs, sys.iso.Label)
		sys.warnings = append(sys.warnings, m.warn...)
		if d := sys.dissociation; si == 0 && d.Given && d.D0 > 0 && !math.IsInf(d.D0, 1) {
			sys.warnings = append(sys.warnings, lowDissociationWarning(m, d.D0)...)
		}
		sys.manifolds = append(sys.manifolds, m)
	}
	return nil
}

// manifoldCeiling returns the model-energy ceiling of the manifold of source
// si: the highest dissociation asymptote, eRef + d0Max + products energy −
// term shift, of the states that use it (+Inf without a limit).
func (b *levelSum) manifoldCeiling(si int) float64 {
	c := math.Inf(-1)
	for i, st := range b.sys.states {
		if b.stateSrc[i] == si {
			c = math.Max(c, b.eRef+b.d0Max+st.ProductsEnergy-b.sys.stateTerm[i])
		}
	}
	return c
}

// collectLevels lists the levels of every state with non-zero weight below
// the population limit, marks the nominal ones used in their manifold, and
// sorts them by energy: those up to the state's nominal dissociation
// asymptote (eRef + d0 + products energy) in levels, those above it (up to
// the highest alternative's) in extra. An empty sum and one above MaxLevels
// cannot be computed.
func (b *levelSum) collectLevels() error {
	sys := b.sys
	var all, extra []sumLevel
	for _, m := range sys.manifolds {
		m.used = make([]bool, len(m.e))
	}
	for i, st := range sys.states {
		m := sys.manifolds[sys.stateMan[i]]
		capNom := b.eRef + b.d0 + st.ProductsEnergy
		for k := range m.e {
			w := b.levelWeight(i, m, k)
			if w == 0 {
				continue
			}
			e := sys.stateTerm[i] + m.e[k]
			if e-b.eRef > b.eNeg {
				continue
			}
			if e > capNom {
				extra = append(extra, sumLevel{e, w, i, k})
				continue
			}
			all = append(all, sumLevel{e, w, i, k})
			m.used[k] = true
		}
	}
	if len(all) == 0 {
		return cannot("no bound level with non-zero weight below the energy limits (check the constants and the electronic-states file)")
	}
	if len(all)+len(extra) > MaxLevels {
		return cannot("the level sum has %d levels, more than %d; give dissociation_energy in an electronic-states file or lower the highest temperature", len(all)+len(extra), MaxLevels)
	}
	// slices.SortStableFunc: the reflection-based sort.SliceStable took a
	// tenth of a nightly chain's time on 11 000 levels.
	byEnergy := func(a, b sumLevel) int { return cmp.Compare(a.e, b.e) }
	slices.SortStableFunc(all, byEnergy)
	slices.SortStableFunc(extra, byEnergy)
	b.levels, b.extra = all, extra
	return nil
}

// storeLevels makes the lowest level the energy zero and stores every level's
// energy above it, weight, state, manifold index, extrapolation flag and
// gradient ∂(E − E_zero)/∂x (column-major over the combined parameters), and
// the extra levels (energy, weight, state) of the budget's higher
// dissociation limits.
func (b *levelSum) storeLevels() {
	sys, all := b.sys, b.levels
	z := all[0]
	sys.zero = levelRef{z.st, z.idx}
	sys.e0 = z.e
	zg := sys.levelGrad(z.st, z.idx, nil)
	n := len(all)
	sys.e = make([]float64, n)
	sys.w = make([]float64, n)
	if !b.opts.alternative {
		// The budget's alternatives are evaluated without gradients.
		sys.g = make([]float64, n*sys.p)
	}
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
		if sys.g == nil {
			continue
		}
		g := sys.levelGrad(l.st, l.idx, lg)
		for k := range g {
			sys.g[k*n+i] = g[k] - zg[k]
		}
	}
	for _, l := range b.extra {
		sys.extraE = append(sys.extraE, l.e-sys.e0)
		sys.extraW = append(sys.extraW, l.w)
		sys.extraSt = append(sys.extraSt, int16(l.st))
	}
	// The dissociation limit of each state relative to the zero: a level of
	// state s is in the sum with D0 = d when E ≤ d + capShift[s].
	sys.capShift = make([]float64, len(sys.states))
	for i, st := range sys.states {
		sys.capShift[i] = b.eRef - sys.e0 + st.ProductsEnergy
	}
}

// symmetryFactors sets the factors of the closed form: the symmetry number
// and the nuclear-spin factor.
func (b *levelSum) symmetryFactors() {
	sys := b.sys
	sys.sigmaNumber = sys.iso.SymmetryNumber()
	sys.spinFactor = 1
	if sys.spin == SpinLineIntensity {
		sys.spinFactor = float64(sys.iso.NuclearSpinStates())
	}
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

// lowDissociationWarning warns when the dissociation energy d0 (cm⁻¹) leaves
// no vibrationally excited level below it in the ground manifold m: the sum
// then holds the rotational levels of v = 0 alone (at D0 = 1e-9 cm⁻¹ a single
// level, Q = 1 at every temperature), which no bound diatomic molecule has; a
// D0 given in eV or kJ/mol instead of cm⁻¹ does that.
func lowDissociationWarning(m *manifold, d0 float64) []string {
	n := 0
	for _, v := range m.v {
		if v > 0 {
			return nil
		}
		n++
	}
	return []string{fmt.Sprintf("the dissociation energy D0 = %g cm-1 lies below the first vibrationally excited level: the level sum holds %d rotational level(s) of v = 0 only, which no bound diatomic molecule has; is D0 in cm-1 (1 eV = 8065.54 cm-1, 1 kJ/mol = 83.5935 cm-1)?", d0, n)}
}
