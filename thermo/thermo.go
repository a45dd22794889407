package thermo

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"bandwright/constants"
	"bandwright/fit/states"
)

// Composition conventions of the translational part.
const (
	// CompositionIsotopologue: Sackur–Tetrode with the isotopologue's molar mass.
	CompositionIsotopologue = "isotopologue"
	// CompositionNatural: Sackur–Tetrode with the molar mass of the molecule of
	// natural isotopic composition (IUPAC 2005 standard atomic weights), internal
	// levels of the given isotopologue: the convention of the CODATA Key Values
	// and JANAF tables.
	CompositionNatural = "natural"
)

// Temperature limits (K).
const (
	MinTemperature = 1.0
	MaxTemperature = 100000.0
)

// DefaultSeed is the seed of the Monte Carlo draws of --seed and of the
// pipeline file's thermo.seed when none is given.
const DefaultSeed uint64 = 1

// Settings are the switches of the thermo stage. The zero value (with
// Temperatures given) is 1 bar, isotopologue molar mass, thermochemistry
// nuclear-spin convention, linear propagation only, NASA-7 over 200–1000–6000 K.
type Settings struct {
	// Temperatures of the table, K (MinTemperature…MaxTemperature).
	Temperatures []float64
	// Pressure is the standard pressure in Pa; 0 means PressureBar.
	Pressure float64
	// Composition is CompositionIsotopologue (default) or CompositionNatural.
	Composition string
	// NuclearSpin is SpinThermochemistry (default) or SpinLineIntensity.
	NuclearSpin string
	// MonteCarlo is the number of draws (0: no Monte Carlo); Seed seeds them
	// (every value, 0 included, is a seed of its own; the command line and
	// the pipeline file use DefaultSeed when none is given).
	MonteCarlo int
	Seed       uint64
	// Workers bounds the goroutines (0: GOMAXPROCS); results do not depend on it.
	Workers int
	// NASA chooses the ranges of the NASA-7 fit.
	NASA NASARanges
	// OmitRefused leaves out of the table, with a warning that names them,
	// the temperatures the sum refuses (a record without vibrational
	// structure: see the package doc) instead of failing; for a default
	// table that nobody asked for temperature by temperature. At least one
	// temperature must remain.
	OmitRefused bool
}

func (s Settings) nuclearSpin() string {
	if s.NuclearSpin == "" {
		return SpinThermochemistry
	}
	return s.NuclearSpin
}

func (s Settings) composition() string {
	if s.Composition == "" {
		return CompositionIsotopologue
	}
	return s.Composition
}

func (s Settings) pressure() float64 {
	if s.Pressure == 0 {
		return PressureBar
	}
	return s.Pressure
}

// Check reports the first bad setting.
func (s Settings) Check() error {
	if len(s.Temperatures) == 0 {
		return fmt.Errorf("thermo: no temperatures")
	}
	for i, t := range s.Temperatures {
		if math.IsNaN(t) || !(t >= MinTemperature && t <= MaxTemperature) {
			return fmt.Errorf("thermo: temperature %d: %v K is outside %g…%g K", i+1, t, MinTemperature, MaxTemperature)
		}
	}
	if p := s.pressure(); math.IsNaN(p) || !(p > 0) || math.IsInf(p, 0) {
		return fmt.Errorf("thermo: pressure %v Pa must be finite and > 0", p)
	}
	switch s.composition() {
	case CompositionIsotopologue, CompositionNatural:
	default:
		return fmt.Errorf("thermo: composition %q: choose %s or %s", s.Composition, CompositionIsotopologue, CompositionNatural)
	}
	switch s.nuclearSpin() {
	case SpinThermochemistry, SpinLineIntensity:
	default:
		return fmt.Errorf("thermo: nuclear-spin convention %q: choose %s or %s", s.NuclearSpin, SpinThermochemistry, SpinLineIntensity)
	}
	if s.MonteCarlo < 0 || s.MonteCarlo == 1 || s.MonteCarlo > 1_000_000 {
		return fmt.Errorf("thermo: Monte Carlo draws %d: give 0 (off) or 2…1000000", s.MonteCarlo)
	}
	return s.NASA.WithDefaults().check()
}

// Row is one temperature of the table. Sigma is the statistical 1σ (linear
// propagation of the fit's covariance); Model holds the size of each
// contribution of the budget (in the order of Result.Budget), SigmaModel
// their root-sum-square and SigmaTotal = √(Sigma² + SigmaModel²); MC holds the
// Monte Carlo spread when requested.
type Row struct {
	T            float64
	F            Functions
	Sigma        Functions
	Model        []Functions
	SigmaModel   Functions
	SigmaTotal   Functions
	MC           *MCStats
	QClosed      float64 // closed high-temperature form (see System.ClosedForm)
	QClosedError float64 // Q_closed/Q − 1
	// ExtrapolatedShare is the share of Q from levels outside the fitted
	// data (outside the observed v, or above the highest J observed in v).
	ExtrapolatedShare float64
}

// Conventions states how the numbers of a result are defined.
type Conventions struct {
	Species          string  `json:"species"`
	StandardPressure float64 `json:"standard_pressure_Pa"`
	PressureLabel    string  `json:"standard_pressure"`
	Composition      string  `json:"composition"`
	MolarMass        float64 `json:"translational_molar_mass_g_mol-1"`
	CompositionNote  string  `json:"composition_note"`
	NuclearSpin      string  `json:"nuclear_spin"`
	NuclearSpinNote  string  `json:"nuclear_spin_note"`
	SymmetryNumber   int     `json:"symmetry_number"`
	EnergyZero       string  `json:"energy_zero"`
	Units            string  `json:"units"`
	Uncertainty      string  `json:"uncertainty"`
	ClosedForm       string  `json:"closed_form"`
	ReferenceT       float64 `json:"reference_temperature_K"`
	IdealGas         string  `json:"ideal_gas"`
	Caution          string  `json:"caution"`
}

// Caution is printed in every output.
const Caution = "these numbers are only as good as the model behind them (σ_model states what the data leave open); for safety or process design use reviewed reference data and defer to local codes and licensed practice"

// Result is the outcome of the thermo stage.
type Result struct {
	Conventions Conventions
	States      []StateLevels
	Zero        ZeroPoint
	Params      []string // fitted parameters in the combined order
	Rows        []Row
	// Budget lists the contributions to σ_model (the order of Row.Model);
	// Dissociation is the limit of the sum; ModelDominated names the
	// functions whose σ_model exceeds their statistical σ.
	Budget         []Contribution
	Dissociation   Dissociation
	ModelDominated []Dominance
	MonteCarlo     *MCInfo
	NASA           *NASA7
	// NASAOmitted says why there is no NASA-7 fit (empty when there is one).
	NASAOmitted string
	// FineStructure states the size of the neglected fine structure over the
	// table ("" when no state has it).
	FineStructure string
	// Omitted lists the temperatures left out of the table (Settings.OmitRefused)
	// and OmittedNote why.
	Omitted     []float64
	OmittedNote string
	Warnings    []string
	System      *System
}

// MCInfo describes a Monte Carlo run.
type MCInfo struct {
	Draws int `json:"draws"`
	// Dropped counts the draws left out, Reenumerated those whose sum lost
	// the levels beyond a turnover of their own (see System.MonteCarlo).
	Dropped      int    `json:"dropped"`
	Reenumerated int    `json:"reenumerated"`
	Seed         uint64 `json:"seed"`
	Sampler      string `json:"sampler"`
}

// Compute enumerates the levels, computes the table with linearly propagated σ
// and the uncertainty budget (and Monte Carlo spread when asked), and fits
// the NASA-7 polynomials.
func Compute(p Problem, s Settings) (*Result, error) {
	if err := s.Check(); err != nil {
		return nil, err
	}
	nasa := s.NASA.WithDefaults()
	sys, err := NewSystem(p, s)
	if err != nil {
		return nil, err
	}
	th := sys.vibrationThreshold()
	temps, omitted := th.split(s.Temperatures)
	if len(omitted) > 0 && (!s.OmitRefused || len(temps) == 0) {
		return nil, th.refuseAbove(s.Temperatures)
	}
	s.Temperatures = temps
	res := &Result{System: sys, States: sys.summaries, Zero: *sys.zp, Params: append([]string(nil), sys.names...),
		Budget: sys.Contributions(), Dissociation: sys.dissociation}
	res.Warnings = append(res.Warnings, sys.warnings...)
	if len(omitted) > 0 {
		res.Omitted, res.OmittedNote = omitted, th.omittedWarning(omitted)
		res.Warnings = append(res.Warnings, res.OmittedNote)
	}
	res.Conventions = sys.conventions(s)

	res.Rows = sys.Table(s.Temperatures, s.Workers)
	if s.MonteCarlo > 0 {
		if err := res.monteCarlo(s); err != nil {
			return nil, err
		}
	}
	if nasa.High > th.T {
		res.NASAOmitted = fmt.Sprintf("no NASA-7 fit: its range %g–%g K goes above %.4g K, where the vibrational levels are unknown (%s)", nasa.Low, nasa.High, th.T, th.why)
		res.Warnings = append(res.Warnings, res.NASAOmitted)
	} else {
		lo, hi := nasa.grid()
		grid := append(append([]float64(nil), lo...), hi[1:]...)
		gridRows := sys.Table(grid, s.Workers)
		fs := make([]Functions, len(gridRows))
		for i, r := range gridRows {
			fs[i] = r.F
		}
		n7, err := FitNASA7(grid, fs, nasa)
		if err != nil {
			return nil, err
		}
		n7.addBudget(grid, gridRows)
		res.NASA = n7
		res.Warnings = append(res.Warnings, n7.budgetWarnings()...)
	}
	if w := fineSizeWarning(res.Budget, res.Rows); w != "" {
		res.FineStructure = w
		res.Warnings = append(res.Warnings, w)
	}
	res.ModelDominated = modelDominance(res.Rows)
	res.Warnings = append(res.Warnings, sys.shareWarnings(res.Rows)...)
	res.Warnings = append(res.Warnings, dominanceWarnings(res.ModelDominated)...)
	if err := res.checkFinite(); err != nil {
		return nil, err
	}
	return res, nil
}

// monteCarlo adds the Monte Carlo spread to the rows.
func (res *Result) monteCarlo(s Settings) error {
	sys := res.System
	mc, dropped, reenum, err := sys.MonteCarlo(s.Temperatures, s.MonteCarlo, s.Seed, s.Workers)
	if err != nil {
		return err
	}
	res.Warnings = append(res.Warnings, mcDrawWarnings(s.MonteCarlo, dropped, reenum)...)
	for i := range res.Rows {
		st := mc[i]
		res.Rows[i].MC = &st
	}
	smp := sys.newSampler()
	res.MonteCarlo = &MCInfo{Draws: s.MonteCarlo, Dropped: dropped, Reenumerated: reenum, Seed: s.Seed,
		Sampler: fmt.Sprintf("multivariate normal N(x̂, C) of the %d fitted parameters (pivoted Cholesky of the correlation matrix, rank %d); draw d seeded from (seed, d) with SplitMix64 into PCG; levels of the nominal sum re-evaluated for every draw; spread = sample standard deviation", sys.p, smp.rank)}
	if smp.rank < sys.p {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the covariance of the fit is singular (rank %d of %d): the Monte Carlo draws span its range only", smp.rank, sys.p))
	}
	return nil
}

// NewSystem checks the settings and enumerates the level sum of the problem for
// temperatures up to the highest of s.Temperatures and the NASA-7 upper limit,
// with the alternatives of its uncertainty budget; the System then evaluates
// the functions at any temperature in that range.
func NewSystem(p Problem, s Settings) (*System, error) {
	if err := s.Check(); err != nil {
		return nil, err
	}
	tMax := s.NASA.WithDefaults().High
	for _, t := range s.Temperatures {
		tMax = math.Max(tMax, t)
	}
	sys, err := enumerate(p, s, tMax, nominalBuild())
	if err != nil {
		return nil, err
	}
	if err := sys.buildBudget(p, s, tMax); err != nil {
		return nil, err
	}
	return sys, nil
}

// ParamNames returns the names of the fitted parameters in the combined order
// (ground-state record first, then "NAME@state" for excited-state records).
func (sys *System) ParamNames() []string { return append([]string(nil), sys.names...) }

// FreeValues returns the fitted parameter values in the combined order.
func (sys *System) FreeValues() []float64 { return append([]float64(nil), sys.x0...) }

// NumLevels returns the number of levels in the sum.
func (sys *System) NumLevels() int { return len(sys.e) }

func (sys *System) conventions(s Settings) Conventions {
	iso := sys.iso
	c := Conventions{
		Species: iso.Label, StandardPressure: sys.pressure, Composition: s.composition(),
		MolarMass: sys.molarMass, NuclearSpin: sys.spin, SymmetryNumber: sys.sigmaNumber,
		ReferenceT: ReferenceTemperature, Caution: Caution,
		IdealGas: "ideal gas, per mole, at the standard pressure; translation by the Sackur–Tetrode equation; internal levels by exact summation (Q, ⟨E⟩, ⟨E²⟩ analytic, no finite differences in T)",
		Units:    "T in K; Q dimensionless; Cp, S, gef in J mol-1 K-1; H_minus_H0 and H_minus_H298 in kJ mol-1; energies in cm-1; sigma = 1 standard uncertainty",
	}
	switch sys.pressure {
	case PressureBar:
		c.PressureLabel = "1 bar (100000 Pa)"
	case PressureAtm:
		c.PressureLabel = "1 atm (101325 Pa), the older standard"
	default:
		c.PressureLabel = fmt.Sprintf("%g Pa", sys.pressure)
	}
	if s.composition() == CompositionNatural {
		c.CompositionNote = fmt.Sprintf("natural-composition convention: translation with the molar mass of the natural molecule, %.4f g/mol (IUPAC 2005 standard atomic weights); internal levels of %s — the convention of the CODATA Key Values and JANAF tables", sys.molarMass, iso.Label)
	} else {
		c.CompositionNote = fmt.Sprintf("isotopologue convention: translation and internal levels of %s, molar mass %.6f g/mol (AME2020 atomic masses)", iso.Label, sys.molarMass)
	}
	if sys.spin == SpinThermochemistry {
		c.NuclearSpinNote = fmt.Sprintf("thermochemistry convention: nuclear-spin degeneracy (2I_A+1)(2I_B+1) = %d divided out; homonuclear even/odd-J weights from the spin statistics (equivalent to the symmetry number σ_sym = %d at high T); nuclear-spin entropy excluded", iso.NuclearSpinStates(), sys.sigmaNumber)
	} else {
		c.NuclearSpinNote = fmt.Sprintf("line-intensity convention: full nuclear-spin degeneracy included ((2I_A+1)(2I_B+1) = %d in total); Q for line intensities, S includes R ln of the spin states", iso.NuclearSpinStates())
	}
	z := sys.zp
	c.EnergyZero = fmt.Sprintf("lowest level (state %s, %s); H°(0) with every molecule in it", z.State, z.Describe())
	if z.ZPE != nil {
		c.EnergyZero += fmt.Sprintf("; zero-point energy E(0,0) = %s cm-1 above the potential minimum", constants.FormatParen(*z.ZPE, *z.ZPESigma))
	}
	c.Uncertainty = "<f>_sigma: statistical, linear propagation of the full covariance of the fitted parameters (analytic derivatives of every function); the covariance is " + constants.CovarianceConvention +
		". <f>_sigma_model: what the data do not constrain (levels beyond the data, the dissociation limit, truncated series, neglected fine structure), from named alternatives recomputed against the nominal table (contributions in thermo.json); " + BudgetRule
	c.Caution = Caution
	c.ClosedForm = "Q_closed_form = Σ_states Σ_v g_e f_ns exp(−c2 (T_s + G_v − E0)/T) · T/(σ_sym c2 B_v) · (1 + u/3 + u²/15 + 4u³/315), u = c2 B_v/T, σ_sym the symmetry number (rigid rotor with Mulholland's series, same v as the exact sum; where the fine structure is resolved, all g_e components of a level at the vibronic term value G_v = T_v, so the form fails where kT is not large against the spin–orbit or spin splitting); Q_closed_form_error = Q_closed_form/Q − 1"
	return c
}

// shareWarnings turns the extrapolated and missing shares into warnings.
func (sys *System) shareWarnings(rows []Row) []string {
	var out []string
	worst, worstT := 0.0, 0.0
	first1 := 0.0
	sorted := append([]Row(nil), rows...)
	sort.Slice(sorted, func(a, b int) bool { return sorted[a].T < sorted[b].T })
	for _, r := range sorted {
		if r.ExtrapolatedShare > worst {
			worst, worstT = r.ExtrapolatedShare, r.T
		}
		if first1 == 0 && r.ExtrapolatedShare > 0.01 {
			first1 = r.T
		}
	}
	if worst > 1e-3 {
		msg := fmt.Sprintf("extrapolation: levels outside the fitted data (%s) carry up to %.3g %% of Q (at %g K)", sys.observedRange(), 100*worst, worstT)
		if first1 > 0 {
			msg += fmt.Sprintf("; more than 1 %% from %g K on", first1)
		}
		out = append(out, msg)
	}
	for _, sl := range sys.summaries {
		if sl.ExtrapolatedV != "" {
			out = append(out, fmt.Sprintf("state %s: the record lacks v = %s; they enter the sum extrapolated (%s), and the uncertainty budget carries the spread of that extrapolation", sl.State, sl.ExtrapolatedV, sl.ExtrapolationNote))
		}
	}
	if d := sys.dissociation; !d.Given && !math.IsInf(d.D0, 1) {
		out = append(out, "dissociation: "+d.Note)
	}
	for i, st := range sys.states {
		// A state of the ground record that the record describes has its
		// term value in its energies (stateTerm 0): it is not shifted.
		if st.TermEnergy > 0 && st.Constants == nil && sys.stateTerm[i] != 0 {
			out = append(out, fmt.Sprintf("state %s has no constants of its own: its levels are the ground-state levels shifted by %g cm-1 (an approximation)", sys.states[i].Label, st.TermEnergy))
		}
	}
	return out
}

// observedRange describes the fitted data range of the ground state.
func (sys *System) observedRange() string {
	m := sys.manifolds[0]
	vmax, jmax := -1, -1
	for k := range m.e {
		if !m.ext[k] {
			vmax = max(vmax, int(m.v[k]))
			jmax = max(jmax, int(m.j2[k]))
		}
	}
	if vmax < 0 {
		return "the record lists no observed levels"
	}
	return fmt.Sprintf("the data reach v ≤ %d, J ≤ %s", vmax, states.FormatJ(jmax))
}

// checkFinite refuses a result with a NaN or Inf anywhere.
func (r *Result) checkFinite() error {
	bad := func(x float64) bool { return math.IsNaN(x) || math.IsInf(x, 0) }
	badF := func(f Functions) bool {
		return bad(f.Q) || bad(f.Cp) || bad(f.S) || bad(f.HmH0) || bad(f.HmH298) || bad(f.Gef)
	}
	for _, row := range r.Rows {
		if badF(row.F) || badF(row.Sigma) || badF(row.SigmaModel) || badF(row.SigmaTotal) || bad(row.QClosed) || bad(row.QClosedError) || bad(row.ExtrapolatedShare) ||
			(row.MC != nil && (badF(row.MC.Mean) || badF(row.MC.Sigma))) {
			return cannot("the table at %g K has a non-finite value", row.T)
		}
	}
	var parts []string
	for _, s := range r.States {
		if bad(s.EMax) {
			parts = append(parts, s.State)
		}
	}
	if len(parts) > 0 {
		return cannot("non-finite level energies in state %s", strings.Join(parts, ", "))
	}
	return nil
}
