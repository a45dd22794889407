package thermo

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/internal/failure"
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

// State is one electronic state of the level sum.
type State struct {
	Label string
	// TermEnergy is the energy of the state's model zero above the ground
	// state's model zero, cm⁻¹ (T_e between potential minima for Dunham models).
	TermEnergy   float64
	Multiplicity int // 2S+1
	Lambda       int // |Λ|
	Symmetry     species.StateSymmetry
	// Constants of the state. Nil for the ground state (TermEnergy 0, which
	// takes Problem.Constants) and for a state that is the ground-state
	// manifold shifted by TermEnergy.
	Constants *constants.Set
	// Observed lists the levels of the state's fitted data (extrapolation check).
	Observed []constants.LevelRange
	// Source names the state's constants record in messages.
	Source string
}

// Problem is what the thermo stage works on: the fitted constants of the ground
// state, the electronic states and the dissociation energy. It holds no settings.
type Problem struct {
	// Species is the isotopologue label; empty: the first species of the record.
	Species string
	// Constants of the ground electronic state (a fit record turned back into a model).
	Constants *constants.Set
	// Observed lists the levels reached by the fitted data (constants.Record.Observed).
	Observed []constants.LevelRange
	// Source names the constants record in messages and outputs.
	Source string
	// States lists the electronic states; nil means one ¹Σ⁺ state (¹Σg⁺ for a
	// homonuclear molecule). Exactly one state has TermEnergy 0.
	States []State
	// DissociationEnergy is D0 in cm⁻¹ above the lowest level; 0 when unknown.
	DissociationEnergy float64
}

// block is one constants record in the combined parameter space: its fitted
// parameters are x[offset : offset+len(c.Free)].
type block struct {
	c      *constants.Set
	offset int
	label  string // "" for the ground state
}

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
	ceilingAbs float64 // model energy ceiling, +Inf when none
	warn       []string
}

type vibRot struct {
	v    int
	g, b float64
}

// System is the enumerated level sum, ready to be evaluated at any temperature.
// Levels are sorted by energy above the zero; each carries its weight
// g_e·g_ns·(2J+1) and ∂E/∂x over the combined fitted parameters x.
type System struct {
	iso         species.Isotopologue
	states      []State
	blocks      []block
	manifolds   []*manifold
	stateMan    []int     // manifold of each state
	stateTerm   []float64 // term energy added to the manifold energies
	p           int       // number of combined fitted parameters
	x0          []float64 // their values
	cov         *mat.SymDense
	names       []string
	spin        string
	sigmaNumber int
	spinFactor  float64 // nuclear-spin factor of the closed form

	// Levels (sorted by e).
	e    []float64
	w    []float64
	g    []float64 // ∂E/∂x, column-major: g[k·len(e)+i] for parameter k, level i
	ext  []bool
	st   []int16
	lv   []int32 // level index in its manifold
	zero levelRef
	e0   float64 // absolute energy of the zero (state term + model energy)

	// Estimated missing levels (term-values models), absolute energies above the zero.
	missE []float64
	missW []float64

	// Translation.
	molarMass float64 // g/mol used in the Sackur–Tetrode equation
	pressure  float64 // Pa

	summaries []StateLevels
	warnings  []string
	zp        *ZeroPoint
	tMax      float64
}

type levelRef struct {
	state int
	idx   int // index in the state's manifold
}

// StateLevels summarises the levels of one electronic state in the sum.
type StateLevels struct {
	State        string     `json:"state"`
	Term         string     `json:"term"`
	TermEnergy   float64    `json:"term_energy_cm-1"`
	Degeneracy   float64    `json:"electronic_degeneracy"`
	SpinWeights  [2]float64 `json:"nuclear_spin_weights_even_odd"`
	Source       string     `json:"levels_from"`
	Levels       int        `json:"levels"`
	VMin         int        `json:"v_min"`
	VMax         int        `json:"v_max"`
	JMax         int        `json:"J_max"`
	JMaxV0       int        `json:"J_max_lowest_v"`
	EMax         float64    `json:"highest_level_cm-1"`
	VTruncation  string     `json:"v_truncation"`
	JTruncation  string     `json:"J_truncation"`
	MissingV     string     `json:"missing_v,omitempty"`
	MissingNote  string     `json:"missing_estimate,omitempty"`
	Extrapolated int        `json:"levels_outside_fitted_data"`
}

// ZeroPoint states the energy zero of the sum.
type ZeroPoint struct {
	// Level is the lowest level: the energy zero of Q and of H°(0).
	State string `json:"state"`
	V     int    `json:"v"`
	J     int    `json:"J"`
	// ZPE is E(v=0, J=0) of the ground state above the potential minimum (Dunham
	// models only) with its 1σ, cm⁻¹; nil for a term-values model, whose zero is the
	// lowest vibrational level of the record.
	ZPE      *float64 `json:"zero_point_energy_cm-1,omitempty"`
	ZPESigma *float64 `json:"zero_point_energy_sigma_cm-1,omitempty"`
	// LevelAboveV0J0 is the energy of the zero level above (v=0, J=0) of the
	// ground state, cm⁻¹ (non-zero when J=0 has no nuclear-spin weight, as in 16O2).
	LevelAboveV0J0 float64 `json:"zero_level_above_v0_J0_cm-1"`
	Note           string  `json:"note"`
}

// ErrCannotCompute marks a level sum or table that cannot be computed honestly
// (no bound levels, too many levels, non-finite results). Its kind is
// failure.CannotCompute, which the command line maps to exit code 2.
var ErrCannotCompute = cannotCompute{}

type cannotCompute struct{}

func (cannotCompute) Error() string { return "thermo: the level sum cannot be computed honestly" }

// FailureKind returns failure.CannotCompute.
func (cannotCompute) FailureKind() failure.Kind { return failure.CannotCompute }

type computeError struct{ msg string }

func (e *computeError) Error() string             { return e.msg }
func (e *computeError) Is(target error) bool      { return target == ErrCannotCompute }
func (e *computeError) FailureKind() failure.Kind { return failure.CannotCompute }

func cannot(format string, a ...any) error {
	return &computeError{msg: "thermo: " + fmt.Sprintf(format, a...)}
}

// defaultStates returns the state list used without a card.
func defaultStates(iso species.Isotopologue) []State {
	s := State{Label: "X", Multiplicity: 1, Symmetry: species.StateSymmetry{Reflection: '+'}}
	if iso.Homonuclear() {
		s.Symmetry.Parity = 'g'
	}
	return []State{s}
}

func termSymbol(s State) string {
	letters := []string{"Σ", "Π", "Δ", "Φ", "Γ", "H", "I", "K", "L", "M", "N"}
	l := "Λ=" + strconv.Itoa(s.Lambda)
	if s.Lambda < len(letters) {
		l = letters[s.Lambda]
	}
	return fmt.Sprintf("%s %d%s%s", s.Label, s.Multiplicity, l, s.Symmetry.String())
}

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

// levelGrad writes ∂E/∂x (combined fitted parameters) of level idx of the
// manifold of state st into dst (allocated when nil).
func (sys *System) levelGrad(st, idx int, dst []float64) []float64 {
	if dst == nil {
		dst = make([]float64, sys.p)
	}
	clear(dst)
	m := sys.manifolds[sys.stateMan[st]]
	off := sys.blocks[m.block].offset
	copy(dst[off:off+m.nfree], m.grad[idx*m.nfree:(idx+1)*m.nfree])
	return dst
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
	np := len(c.Values)
	grad := make([]float64, np)
	negl := fmt.Sprintf("population below e^-%g of the lowest level at T_max = %g K", cutExponent, tMax)
	d0Reason := fmt.Sprintf("dissociation energy D0 = %g cm-1", d0)

	var vs []int
	lm, isTermValues := c.Model.(*model.TermValues)
	if isTermValues {
		m.levels = true
		vs = lm.LevelsOf(sp)
		m.vReason = fmt.Sprintf("term-values model: the vibrational levels of the record (v = %s)", compressInts(vs))
	} else {
		// Dunham: the top of G(v).
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
		if math.IsInf(ceiling, 1) && vTop < maxV {
			m.ceilingAbs = gTop
			ceiling = gTop
			d0Reason = fmt.Sprintf("top of the model's G(v) at v=%d, %.6g cm-1 above the lowest level (no dissociation energy given)", vTop, gTop-eRef)
		}
		m.vReason = topReason
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
			if gv > ceiling {
				m.vReason = fmt.Sprintf("%s reached after v=%d", d0Reason, v-1)
				break
			}
			if term+gv-eRef > eNeg {
				m.vReason = fmt.Sprintf("%s beyond v=%d", negl, v-1)
				break
			}
			vs = append(vs, v)
		}
	}
	for _, v := range vs {
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
				return nil, cannot("E(v=%d, J=%d) is not finite", v, J)
			}
			if !(e > ePrev) {
				reason = "centrifugal turnover"
				if J == 1 {
					// Only a term-values model gets here (a Dunham sum stops at the
					// first v with B_v ≤ 0): a fitted B_v that is not positive.
					if v == vs[0] {
						return nil, cannot("%s: the rotational spacing E(v=%d, J=1) − E(v=%d, J=0) = %.6g cm-1 of the lowest level is not positive (B_v ≤ 0): the constants describe no rotational levels", c.Model.Species()[sp], v, v, e-ePrev)
					}
					reason = "B_v not positive (J = 0 only)"
					m.warn = append(m.warn, fmt.Sprintf("%s: the rotational constant of v=%d is not positive (E(v,1) ≤ E(v,0)); only its J = 0 level enters the sum", c.Model.Species()[sp], v))
				}
				break
			}
			if e > ceiling {
				reason = d0Reason
				break
			}
			if term+e-eRef > eNeg {
				reason = negl
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
				return nil, cannot("the level sum has more than %d levels; give dissociation_energy in a species card or lower the highest temperature", MaxLevels)
			}
		}
		m.jReason[reason]++
		if nv > 0 {
			m.rot = append(m.rot, vibRot{v: v, g: c.Model.Energy(sp, v, 0, c.Values, nil), b: rotConstant(c, sp, v)})
		}
	}
	if isTermValues {
		m.estimateMissing(c, lm, sp, term, eRef, eNeg, d0, tMax)
	}
	return m, nil
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

// estimateMissing estimates the vibrational levels a term-values model lacks, between
// and above the levels of the record: G(v) from the band origins T_v fitted to
// ω(v+½) − ωx(v+½)² + const (ωx only with three or more levels), B_v linear in
// (v+½), D_v the mean of the fitted D_v. A record with a single vibrational
// level gives no estimate. Levels run up to the top of the estimated G(v), the dissociation energy
// when given, and the population limit at tMax.
func (m *manifold) estimateMissing(c *constants.Set, lm *model.TermValues, sp int, term, eRef, eNeg, d0, tMax float64) {
	vs := lm.LevelsOf(sp)
	if len(vs) < 2 {
		m.missNote = "only one vibrational level in the record: the missing levels cannot be estimated (their share of Q is not known)"
		// Still name the levels above as missing.
		m.missingV = nil
		return
	}
	tv := make([]float64, len(vs))
	bv := make([]float64, len(vs))
	dSum := 0.0
	for i, v := range vs {
		tv[i] = c.Model.Energy(sp, v, 0, c.Values, nil)
		if k := lm.Index(sp, v, "B"); k >= 0 {
			bv[i] = c.Values[k]
		}
		if k := lm.Index(sp, v, "D"); k >= 0 {
			dSum += c.Values[k]
		}
	}
	dMean := dSum / float64(len(vs))
	// G(v): least squares in (v+½).
	var omega, omegaX, g0 float64
	if len(vs) == 2 {
		omega = (tv[1] - tv[0]) / float64(vs[1]-vs[0])
		g0 = tv[0] - omega*(float64(vs[0])+0.5)
	} else {
		a := mat.NewDense(len(vs), 3, nil)
		y := mat.NewVecDense(len(vs), tv)
		for i, v := range vs {
			h := float64(v) + 0.5
			a.Set(i, 0, 1)
			a.Set(i, 1, h)
			a.Set(i, 2, -h*h)
		}
		var sol mat.VecDense
		if err := sol.SolveVec(a, y); err == nil {
			g0, omega, omegaX = sol.AtVec(0), sol.AtVec(1), sol.AtVec(2)
		} else {
			omega = (tv[len(vs)-1] - tv[0]) / float64(vs[len(vs)-1]-vs[0])
			g0 = tv[0] - omega*(float64(vs[0])+0.5)
		}
	}
	// B_v = Be − α(v+½) by least squares.
	var be, alpha float64
	{
		var sx, sy, sxx, sxy float64
		for i, v := range vs {
			h := float64(v) + 0.5
			sx += h
			sy += bv[i]
			sxx += h * h
			sxy += h * bv[i]
		}
		n := float64(len(vs))
		den := n*sxx - sx*sx
		alpha = -(n*sxy - sx*sy) / den
		be = (sy + alpha*sx) / n
	}
	if !(omega > 0) {
		m.missNote = "the band origins of the record do not rise with v: the missing levels cannot be estimated"
		return
	}
	G := func(v int) float64 { h := float64(v) + 0.5; return g0 + omega*h - omegaX*h*h }
	present := map[int]bool{}
	for _, v := range vs {
		present[v] = true
	}
	ceiling := math.Inf(1)
	what := "population limit at T_max"
	if d0 > 0 {
		ceiling = eRef + d0
		what = "the dissociation energy"
	} else if omegaX > 0 {
		vt := int(math.Floor(omega/(2*omegaX) - 0.5))
		ceiling = G(vt)
		what = "the top of the estimated G(v)"
	}
	prev := math.Inf(-1)
	for v := 0; v <= maxV; v++ {
		gv := G(v)
		if !(gv > prev) || gv > ceiling || term+gv-eRef > eNeg {
			break
		}
		prev = gv
		if present[v] {
			continue
		}
		m.missingV = append(m.missingV, v)
		b := be - alpha*(float64(v)+0.5)
		if !(b > 0) {
			continue
		}
		ePrev := math.Inf(-1)
		for J := 0; J <= maxJ; J++ {
			x := float64(J) * float64(J+1)
			e := gv + b*x - dMean*x*x
			if !(e > ePrev) || e > ceiling || term+e-eRef > eNeg {
				break
			}
			ePrev = e
			m.missE = append(m.missE, e)
			m.missJ = append(m.missJ, int32(J))
		}
	}
	form := "ω(v+½) − ωx(v+½)²"
	if len(vs) == 2 {
		form = "ω(v+½) (harmonic, two levels in the record)"
	}
	m.missNote = fmt.Sprintf("estimated from the record's levels: G(v) = const + %s with ω = %.6g, ωx = %.4g cm-1; B_v = %.6g − %.4g(v+½) cm-1; D = %.4g cm-1; up to %s", form, omega, omegaX, be, alpha, dMean, what)
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

// checkPSD refuses a covariance that no multivariate normal has: a negative or
// non-finite variance, or a correlation matrix with an eigenvalue below −1e-8
// (rounding aside, a combination of the parameters with negative variance).
// Linear propagation would take the square root of a negative number and the
// Monte Carlo draws would quietly use another covariance.
func checkPSD(cov *mat.SymDense, names []string) error {
	n := len(names)
	sd := make([]float64, n)
	var idx []int
	for i := 0; i < n; i++ {
		v := cov.At(i, i)
		if !(v >= 0) || math.IsInf(v, 0) {
			return fmt.Errorf("thermo: the variance of %s is %v: a covariance needs finite variances ≥ 0", names[i], v)
		}
		sd[i] = math.Sqrt(v)
		if v > 0 {
			idx = append(idx, i)
			continue
		}
		for j := 0; j < n; j++ {
			if cov.At(i, j) != 0 {
				return fmt.Errorf("thermo: %s has zero variance but covariance %g with %s: the covariance is not positive semi-definite", names[i], cov.At(i, j), names[j])
			}
		}
	}
	if len(idx) == 0 {
		return nil
	}
	rho := mat.NewSymDense(len(idx), nil)
	for a, i := range idx {
		for b := a; b < len(idx); b++ {
			j := idx[b]
			r := cov.At(i, j) / (sd[i] * sd[j])
			if math.IsNaN(r) || math.IsInf(r, 0) {
				return fmt.Errorf("thermo: the covariance of %s and %s is not finite", names[i], names[j])
			}
			rho.SetSym(a, b, r)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(rho, false) {
		return errors.New("thermo: the eigenvalues of the covariance cannot be computed")
	}
	lmin := math.Inf(1)
	for _, l := range eig.Values(nil) {
		lmin = math.Min(lmin, l)
	}
	if !(lmin >= -1e-8) {
		return fmt.Errorf("thermo: the covariance of the constants is not positive semi-definite (its correlation matrix has the eigenvalue %.3g): some combination of the parameters would have a negative variance", lmin)
	}
	return nil
}
