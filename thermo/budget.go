package thermo

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"bandwright/units"
)

// Names of the contributions to the model part of the uncertainty budget.
const (
	// ContribVibrational: the vibrational levels beyond those the data
	// reach (the anharmonicity prior, or the next term of G(v)).
	ContribVibrational = "vibrational_levels"
	// ContribRotationVibration: B_v of the vibrational levels beyond the
	// data (the Pekeris estimate of α_e, or the next term of B_v).
	ContribRotationVibration = "rotation_vibration"
	// ContribRotational: J beyond the data and the truncation of the
	// centrifugal-distortion series (the next distortion term).
	ContribRotational = "rotational_levels"
	// ContribDissociation: the dissociation limit of the sum (D0 ± σ).
	ContribDissociation = "dissociation"
	// ContribOmega: ω_e of the electronic-states file (± its σ).
	ContribOmega = "omega_e"
	// ContribOmegaX: ω_e x_e of the electronic-states file (± its σ),
	// independent of ω_e.
	ContribOmegaX = "omega_e_x_e"
	// ContribFineStructure: the fine structure the models neglect.
	ContribFineStructure = "fine_structure"
	// ContribFineConstants: the fine-structure constants of the vibrational
	// levels a record that resolves the fine structure lacks.
	ContribFineConstants = "fine_structure_constants"
	// ContribElectronicStates: low-lying excited electronic states of the
	// embedded list that the problem does not include.
	ContribElectronicStates = "electronic_states"
)

// Contribution is one named entry of the model part of the uncertainty
// budget: what is uncertain, the alternatives that were recomputed, how, and
// the rule behind their sizes.
type Contribution struct {
	Name         string   `json:"name"`
	What         string   `json:"what"`
	Alternatives []string `json:"alternatives"`
	Method       string   `json:"method"`
	Rule         string   `json:"rule"`
}

// BudgetRule states how the contributions make σ_model and σ_total.
const BudgetRule = "each contribution = the largest |f_alternative − f_nominal| over its alternatives, per function and temperature; " +
	"σ_model = √(Σ contribution²) (contributions taken as independent); σ_total = √(σ² + σ_model²) with σ the statistical σ of the fit"

// Methods of evaluating an alternative.
const (
	methodRecomputed = "the level sum recomputed with the alternative (exact)"
	methodFirstOrder = "first order in the perturbation: Δf = Σ_i ∂f/∂E_i·δE_i over the levels of the sum, through the same analytic derivatives as the statistical σ"
	methodLimit      = "the level sum recomputed with the alternative limit (levels added above or removed below the nominal limit)"
	methodHarmonic   = "the harmonic-oscillator vibrational factor q_v = 1/(1 − e^(−x)), x = c₂ω/T, multiplied into every level of the sum (closed form: ΔCp = R x²eˣ/(eˣ−1)², Δ[H°−H°(0)] = RTx/(eˣ−1), ΔS = R[x/(eˣ−1) − ln(1 − e^(−x))], H°(298.15 K) with it)"
	methodFine       = "the levels of each open-shell state split into its spin components (one component W(n−1)/n below the level, n−1 components W/n above, n = 2S+1), energies measured from the new lowest level"
)

// budget holds the alternatives of a System's uncertainty budget.
type budget struct {
	contribs []Contribution
	// dirContrib[k] is the contribution of direction k (column p+k of g).
	dirContrib []int
	caps       []capAlternative
	sets       []setAlternative
	fine       *fineStructure
	fineIdx    int
	harmonic   *harmonicBound
	low        *lowStates
}

// harmonicBound is the alternative of a record without vibrational
// structure (a single level, no ω_e): harmonic vibrational levels at the
// lower bound omega (cm⁻¹) of ω_e, contribution contrib.
type harmonicBound struct {
	contrib int
	omega   float64
}

// delta returns the change of the functions f at T (K) when every level of
// the sum gains the harmonic vibrational factor q_v = 1/(1 − e^(−x)),
// x = c₂ω/T (common practice):
//
//	ΔQ = Q e^(−x)/(1 − e^(−x)),  ΔCp = R x² eˣ/(eˣ−1)²,
//	Δ[H°−H°(0)] = R T x/(eˣ−1),  ΔS = R [x/(eˣ−1) − ln(1 − e^(−x))],
//
// and, with the same term at 298.15 K, Δ[H°−H°(298.15 K)] and Δgef. Every
// one grows as ω falls, so the bound at the lowest ω_e the data allow is the
// largest change the unknown vibrational levels can make (J mol⁻¹ K⁻¹,
// kJ mol⁻¹).
func (hb *harmonicBound) delta(T float64, f Functions) Functions {
	r := units.GasConstant
	hvib := func(T float64) float64 {
		x := units.SecondRadiation * hb.omega / T
		return r * T * x / math.Expm1(x) / 1000
	}
	x := units.SecondRadiation * hb.omega / T
	em := math.Expm1(x)
	n := 1 / em // mean vibrational quantum number, e^(−x)/(1 − e^(−x))
	d := Functions{
		Q:    f.Q * n,
		Cp:   r * x * x * (em + 1) / (em * em),
		S:    r * (x*n - math.Log1p(-math.Exp(-x))),
		HmH0: hvib(T),
	}
	d.HmH298 = d.HmH0 - hvib(ReferenceTemperature)
	d.Gef = d.S - d.HmH298*1000/T
	return d
}

// capAlternative is a dissociation limit D0 = d0 (cm⁻¹) of contribution
// contrib; h298 is its H°(298.15 K) − H°(0), kJ mol⁻¹.
type capAlternative struct {
	contrib int
	d0      float64
	h298    float64
}

// setAlternative is a level sum built with other choices.
type setAlternative struct {
	contrib int
	sys     *System
	h298    float64
}

// addContribution appends c (or returns the index of the one of that name,
// with the alternatives, methods and rules of c it does not state yet).
func (bu *budget) addContribution(c Contribution) int {
	for i, x := range bu.contribs {
		if x.Name == c.Name {
			x.Alternatives = appendNew(x.Alternatives, c.Alternatives...)
			if !strings.Contains(x.Method, c.Method) {
				x.Method += "; " + c.Method
			}
			if !strings.Contains(x.Rule, c.Rule) {
				x.Rule += "; " + c.Rule
			}
			bu.contribs[i] = x
			return i
		}
	}
	bu.contribs = append(bu.contribs, c)
	return len(bu.contribs) - 1
}

// buildBudget sets up the alternatives of the nominal system sys for problem
// p: the recomputed level sums of the prior choices, the dissociation
// limits, the first-order directions, the fine structure and the excited
// electronic states the problem lacks.
func (sys *System) buildBudget(p Problem, s Settings, tMax float64) error {
	bu := &budget{fineIdx: -1}
	sys.budget = bu
	if err := sys.addSetAlternatives(p, s, tMax); err != nil {
		return err
	}
	if err := sys.addMissingStates(p, s, tMax); err != nil {
		return err
	}
	sys.addHarmonicBound()
	sys.addCapAlternatives()
	sys.addDirections()
	sys.addFineStructure()
	sys.prepareBudget()
	top := tMax
	if len(s.Temperatures) > 0 {
		top = slices.Max(s.Temperatures)
	}
	if w := sys.missingStatesWarning(top); w != "" {
		sys.warnings = append(sys.warnings, w)
	}
	return nil
}

// addSetAlternatives adds the level sums recomputed with the other choices
// of the extrapolation: x_e at the ends of its prior where a record takes it
// from the prior (not where ω_e x_e comes from the electronic-states file:
// there the prior's x_e changes nothing), α_e at half and 1.5 times the
// Pekeris value where it comes from that relation, ω_e ± σ and ω_e x_e ± σ
// where they come from the electronic-states file.
func (sys *System) addSetAlternatives(p Problem, s Settings, tMax float64) error {
	bu := sys.budget
	var usesPrior, usesPekeris, usesOmega, usesOmegaX, usesFine bool
	for _, src := range sys.sources {
		if src == nil || !src.vib.determined || src.record == nil {
			continue
		}
		usesFine = usesFine || (src.fine != nil && len(src.ext) > 0 && src.fine.hasFineConstants())
		usesPrior = usesPrior || (!src.vib.anharmonic && !src.vib.givenAnharmonic)
		usesOmegaX = usesOmegaX || src.vib.givenAnharmonic
		usesPekeris = usesPekeris || len(src.recV) == 1
		usesOmega = usesOmega || len(src.recV) == 1
	}
	type alt struct {
		c    Contribution
		opts []buildOptions
	}
	var alts []alt
	if usesPrior {
		var names []string
		var opts []buildOptions
		for _, xe := range xePriorAlternatives() {
			names = append(names, fmt.Sprintf("x_e = %.3g", xe))
			opts = append(opts, buildOptions{xe: xe, alphaScale: 1})
		}
		alts = append(alts, alt{Contribution{Name: ContribVibrational,
			What:         "the anharmonicity of the vibrational levels the data do not reach (the data do not determine it)",
			Alternatives: names,
			Method:       methodRecomputed,
			Rule: fmt.Sprintf("x_e = ω_e x_e/ω_e spans %g (heavy molecules) to %g (hydrides) over the ground states of diatomic molecules (Huber & Herzberg 1979, from memory); nominal %.4g, its geometric centre; alternatives at both ends and half-way (geometrically) to each, since the dissociation estimate follows each x_e and the two effects of x_e on the sum (lower levels, a lower limit) cancel at some temperatures at the ends alone",
				xePriorLow, xePriorHigh, xePriorCentre)},
			opts})
	}
	if usesPekeris {
		alts = append(alts, alt{Contribution{Name: ContribRotationVibration,
			What:         "α_e of the vibrational levels the data do not reach (a single level: no v-dependence of B_v measured)",
			Alternatives: []string{"α_e = 0.5 × Pekeris", "α_e = 1.5 × Pekeris"},
			Method:       methodRecomputed,
			Rule:         "Pekeris relation α_e = 6√(ω_e x_e B³)/ω_e − 6B²/ω_e (exact for the Morse oscillator; common practice), spread ±50 %"},
			[]buildOptions{{xe: xePriorCentre, alphaScale: 0.5}, {xe: xePriorCentre, alphaScale: 1.5}}})
	}
	if usesOmega && hasOmegaSigma(sys.states) {
		alts = append(alts, alt{Contribution{Name: ContribOmega,
			What:         "ω_e of the electronic-states file",
			Alternatives: []string{"ω_e − σ", "ω_e + σ"},
			Method:       methodRecomputed,
			Rule:         "omega_e ± omega_e_sigma of the electronic-states file"},
			[]buildOptions{{xe: xePriorCentre, alphaScale: 1, omegaShift: -1}, {xe: xePriorCentre, alphaScale: 1, omegaShift: 1}}})
	}
	if usesOmegaX && hasOmegaXSigma(sys.states) {
		alts = append(alts, alt{Contribution{Name: ContribOmegaX,
			What:         "ω_e x_e of the electronic-states file (the anharmonicity of the vibrational levels of a record with one level)",
			Alternatives: []string{"ω_e x_e − σ", "ω_e x_e + σ"},
			Method:       methodRecomputed,
			Rule:         "omega_e_x_e ± omega_e_x_e_sigma of the electronic-states file, ω_e held (the two are independent); the Pekeris α_e and the dissociation estimate follow each"},
			[]buildOptions{{xe: xePriorCentre, alphaScale: 1, omegaXShift: -1}, {xe: xePriorCentre, alphaScale: 1, omegaXShift: 1}}})
	}
	if usesFine {
		alts = append(alts, alt{Contribution{Name: ContribFineConstants,
			What:         "the fine-structure constants (A, γ, λ, p, q, …) of the vibrational levels the data do not reach",
			Alternatives: []string{"extrapolated in v instead of held at the nearest observed level"},
			Method:       methodRecomputed,
			Rule: fmt.Sprintf("nominal: the constants of the nearest vibrational level of the record; alternative: the least-squares line in v through the record's levels (two or more), else the nearest level's constants changed by max(%g %%, r·α_e/B_e) per vibrational quantum, r the constant's rotational order (0 for A and λ, 1 for γ and p, 2 for q; the constant taken to vary with v like B_v^r: our own estimate; the spin–orbit constants of NO and OH change by about 0.2 %% per quantum; Huber & Herzberg 1979, from memory)",
				100*fineDriftPerV)},
			[]buildOptions{{xe: xePriorCentre, alphaScale: 1, fineAlternative: true}}})
	}
	for _, a := range alts {
		ci := bu.addContribution(a.c)
		for _, o := range a.opts {
			o.alternative = true
			alt, err := enumerate(p, s, tMax, o)
			if err != nil {
				return fmt.Errorf("%w (alternative of the uncertainty budget: %s)", err, a.c.Name)
			}
			bu.sets = append(bu.sets, setAlternative{contrib: ci, sys: alt})
		}
	}
	return nil
}

// addHarmonicBound adds, for a record without vibrational structure (a single
// vibrational level and no ω_e), the harmonic vibrational levels at the lower
// bound of ω_e that sets the temperature limit of the table (see
// vibThresholdCp). Below that limit they add up to 0.01 J mol⁻¹ K⁻¹ to Cp°,
// and more to H°(298.15 K), the reference of H°(T) − H°(298.15 K) and gef at
// every temperature; the nominal sum (v = 0 alone) says nothing of them.
func (sys *System) addHarmonicBound() {
	th := sys.vibrationThreshold()
	if math.IsInf(th.T, 1) {
		return
	}
	bu := sys.budget
	ci := bu.addContribution(Contribution{Name: ContribVibrational,
		What:         "the vibrational levels of a record with a single vibrational level and no omega_e (the data say nothing of them)",
		Alternatives: []string{fmt.Sprintf("harmonic vibrational levels at ω_e = %.4g cm-1, the lower bound of ω_e", th.omega)},
		Method:       methodHarmonic,
		Rule:         fmt.Sprintf("every function changes the same way as ω_e falls, so the lowest ω_e the data allow bounds the change; the bound: %s (the lowest over the records without vibrational structure, applied to every level of the sum)", th.why)})
	bu.harmonic = &harmonicBound{contrib: ci, omega: th.omega}
}

// appendNew appends the strings of add that list does not hold.
func appendNew(list []string, add ...string) []string {
	for _, a := range add {
		if !slices.Contains(list, a) {
			list = append(list, a)
		}
	}
	return list
}

// xePriorAlternatives are the x_e of the prior's alternatives: its ends and
// the geometric midpoints between each end and the centre.
func xePriorAlternatives() []float64 {
	return []float64{xePriorLow, math.Sqrt(xePriorLow * xePriorCentre), math.Sqrt(xePriorCentre * xePriorHigh), xePriorHigh}
}

func hasOmegaSigma(states []State) bool {
	for _, st := range states {
		if st.OmegaE > 0 && st.OmegaESigma > 0 {
			return true
		}
	}
	return false
}

func hasOmegaXSigma(states []State) bool {
	for _, st := range states {
		if st.OmegaE > 0 && st.OmegaEXE > 0 && st.OmegaEXESigma > 0 {
			return true
		}
	}
	return false
}

// addCapAlternatives adds the dissociation limits D0 ± σ.
func (sys *System) addCapAlternatives() {
	alts := sys.dissociation.alternatives()
	if len(alts) == 0 {
		return
	}
	bu := sys.budget
	d := sys.dissociation
	c := Contribution{Name: ContribDissociation, What: "the dissociation limit that ends the sum of every electronic state",
		Method: methodLimit, Rule: d.Note}
	for _, a := range alts {
		c.Alternatives = append(c.Alternatives, fmt.Sprintf("D0 = %.6g cm-1", a))
	}
	ci := bu.addContribution(c)
	for _, a := range alts {
		bu.caps = append(bu.caps, capAlternative{contrib: ci, d0: a})
	}
}

// prepareBudget computes H°(298.15 K) − H°(0) of every alternative (for
// H°(T) − H°(298.15 K) and gef).
func (sys *System) prepareBudget() {
	bu := sys.budget
	beta := units.SecondRadiation / ReferenceTemperature
	nom := newMoments(sys.p + sys.pm)
	sys.accumulate(beta, nom, true)
	acc := newMoments(0)
	for i := range bu.caps {
		sys.capMoments(beta, bu.caps[i].d0, nom, acc)
		bu.caps[i].h298 = hmh0(ReferenceTemperature, acc.a1/acc.a0)
	}
	for i := range bu.sets {
		bu.sets[i].sys.accumulate(beta, acc, false)
		bu.sets[i].h298 = hmh0(ReferenceTemperature, acc.a1/acc.a0)
	}
	if bu.fine != nil {
		sys.fineMoments(beta, bu.fine, acc, make([]float64, 3*len(sys.states)))
		bu.fine.h298 = hmh0(ReferenceTemperature, acc.a1/acc.a0)
	}
}

// capMoments sets acc to the moments at β of the sum with dissociation
// energy d0 (above the zero level's limit): the nominal moments nom minus
// the nominal levels above the alternative limit, plus the extra levels
// below it (each state's limit is d0 + capShift[state]). The nominal
// levels' factors w e^(−βE) are taken from nom.t when the pass that made nom
// stored them (a pass with gradients), else recomputed.
func (sys *System) capMoments(beta, d0 float64, nom, acc *moments) {
	a0, a1, a2 := nom.a0, nom.a1, nom.a2
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range sys.capShift {
		lo, hi = math.Min(lo, d0+c), math.Max(hi, d0+c)
	}
	n := sys.cut(beta)
	limit := cutExponent / beta
	var t []float64
	if len(nom.t) >= n && sys.p+sys.pm > 0 {
		t = nom.t[:n]
	}
	for i := sort.SearchFloat64s(sys.e[:n], lo); i < n; i++ {
		e := sys.e[i]
		if e <= d0+sys.capShift[sys.st[i]] {
			continue
		}
		var ti float64
		if t != nil {
			ti = t[i]
		} else {
			ti = sys.w[i] * boltzmann(-beta*e)
		}
		a0 -= ti
		a1 -= ti * e
		a2 -= ti * e * e
	}
	for i, e := range sys.extraE {
		if e > hi || e > limit {
			break
		}
		if e > d0+sys.capShift[sys.extraSt[i]] {
			continue
		}
		// e^(−βE), reduced argument (see boltzmann); −βE ∈ [−50, 0].
		x := -beta * e
		k := int(x*expInvLn2 - 0.5)
		fk := float64(k)
		r := (x - fk*expLn2Hi) - fk*expLn2Lo
		pr := 1 + r*(1+r*(0.5+r*(1.0/6+r*(1.0/24+r*(1.0/120)))))
		ti := sys.extraW[i] * expTable[k&255] * pr * math.Float64frombits(uint64((k>>8)+1023)<<52)
		a0 += ti
		a1 += ti * e
		a2 += ti * e * e
	}
	acc.a0, acc.a1, acc.a2, acc.ext = a0, a1, a2, 0
}

// budgetScratch is the scratch space of one worker evaluating the budget.
type budgetScratch struct {
	acc   *moments
	state []float64
}

func (sys *System) newBudgetScratch() *budgetScratch {
	return &budgetScratch{acc: newMoments(0), state: make([]float64, 3*len(sys.states))}
}

// modelRow returns, at temperature T, the size of every contribution (the
// largest |Δf| over its alternatives) from the nominal moments m (with the
// direction columns), the nominal functions f and their gradients d (with the
// directions' derivatives after the p parameters).
func (sys *System) modelRow(T float64, m *moments, f Functions, d *Gradients, sc *budgetScratch) []Functions {
	bu := sys.budget
	if bu == nil || len(bu.contribs) == 0 {
		return nil
	}
	out := make([]Functions, len(bu.contribs))
	beta := units.SecondRadiation / T
	// The directions of one contribution are independent terms of unknown
	// sign: combined in quadrature.
	dirs := make([][]Functions, len(bu.contribs))
	for k, ci := range bu.dirContrib {
		j := sys.p + k
		dirs[ci] = append(dirs[ci], Functions{d.Q[j], d.Cp[j], d.S[j], d.HmH0[j], d.HmH298[j], d.Gef[j]})
	}
	for ci, fs := range dirs {
		if len(fs) > 0 {
			out[ci] = maxAbs(out[ci], rss(fs...))
		}
	}
	for _, c := range bu.caps {
		sys.capMoments(beta, c.d0, m, sc.acc)
		out[c.contrib] = maxAbs(out[c.contrib], diffFunctions(sys.functions(T, sc.acc, c.h298), f))
	}
	for _, a := range bu.sets {
		a.sys.accumulate(beta, sc.acc, false)
		out[a.contrib] = maxAbs(out[a.contrib], diffFunctions(a.sys.functions(T, sc.acc, a.h298), f))
	}
	if bu.fine != nil {
		sys.fineMoments(beta, bu.fine, sc.acc, sc.state)
		out[bu.fineIdx] = maxAbs(out[bu.fineIdx], diffFunctions(sys.functions(T, sc.acc, bu.fine.h298), f))
	}
	if bu.harmonic != nil {
		out[bu.harmonic.contrib] = maxAbs(out[bu.harmonic.contrib], bu.harmonic.delta(T, f))
	}
	return out
}

func diffFunctions(a, b Functions) Functions {
	return Functions{a.Q - b.Q, a.Cp - b.Cp, a.S - b.S, a.HmH0 - b.HmH0, a.HmH298 - b.HmH298, a.Gef - b.Gef}
}

// maxAbs returns the element-wise max(a, |b|).
func maxAbs(a, b Functions) Functions {
	m := func(x, y float64) float64 { return math.Max(x, math.Abs(y)) }
	return Functions{m(a.Q, b.Q), m(a.Cp, b.Cp), m(a.S, b.S), m(a.HmH0, b.HmH0), m(a.HmH298, b.HmH298), m(a.Gef, b.Gef)}
}

// rss returns the root-sum-square of the functions in fs, element-wise.
func rss(fs ...Functions) Functions {
	var q Functions
	for _, f := range fs {
		q.Q += f.Q * f.Q
		q.Cp += f.Cp * f.Cp
		q.S += f.S * f.S
		q.HmH0 += f.HmH0 * f.HmH0
		q.HmH298 += f.HmH298 * f.HmH298
		q.Gef += f.Gef * f.Gef
	}
	return Functions{math.Sqrt(q.Q), math.Sqrt(q.Cp), math.Sqrt(q.S), math.Sqrt(q.HmH0), math.Sqrt(q.HmH298), math.Sqrt(q.Gef)}
}

// Contributions returns the contributions of the budget, in the order of
// Row.Model.
func (sys *System) Contributions() []Contribution {
	if sys.budget == nil {
		return nil
	}
	return append([]Contribution(nil), sys.budget.contribs...)
}

// FunctionNames are the names of the six functions as the outputs write them
// (thermo.csv columns), in the order of Functions.
var FunctionNames = [6]string{"Q", "Cp", "S", "H_minus_H0", "H_minus_H298", "gef"}

func (f Functions) at(i int) float64 {
	return [6]float64{f.Q, f.Cp, f.S, f.HmH0, f.HmH298, f.Gef}[i]
}

// Dominance names a function whose model σ exceeds its statistical σ, and the
// lowest temperature of the table where it does.
type Dominance struct {
	Function string  `json:"function"`
	From     float64 `json:"from_T_K"`
}

// modelDominance returns the functions whose σ_model exceeds their
// statistical σ somewhere in the rows, each with the lowest such temperature.
func modelDominance(rows []Row) []Dominance {
	sorted := append([]Row(nil), rows...)
	sort.Slice(sorted, func(a, b int) bool { return sorted[a].T < sorted[b].T })
	var out []Dominance
	for k, name := range FunctionNames {
		for _, r := range sorted {
			if r.SigmaModel.at(k) > r.Sigma.at(k) {
				out = append(out, Dominance{Function: name, From: r.T})
				break
			}
		}
	}
	return out
}

// dominanceWarnings states the model-dominated functions.
func dominanceWarnings(ds []Dominance) []string {
	if len(ds) == 0 {
		return nil
	}
	var parts []string
	for _, d := range ds {
		parts = append(parts, fmt.Sprintf("%s from %g K", d.Function, d.From))
	}
	return []string{"the model part of the uncertainty exceeds the statistical part (the σ of the fit) for " + strings.Join(parts, ", ") +
		": there the numbers rest more on the extrapolation than on the data (contributions per temperature in thermo.json)"}
}
