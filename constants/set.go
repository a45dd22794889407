package constants

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// Set is a record turned back into a model that can be evaluated, with the
// covariance of its fitted model parameters (calibration factors dropped: the
// marginal covariance of the model parameters is the sub-matrix).
type Set struct {
	Model  model.Model
	Params []model.Param
	Values []float64
	// Free indexes the fitted model parameters in Params; Cov follows it.
	Free []int
	Cov  *mat.SymDense
	// unconnected holds the levels (species index, v) whose term value the
	// fit held at 0 because no line connects them to the lowest level.
	unconnected map[[2]int]bool
}

// Unconnected reports whether the term value of level v of species s (an
// index of Model.Species()) was held at 0 by the fit because no line connects
// the level to the lowest level of its isotopologue (Param.Unconnected): its
// energies are then counted from its own zero, not from the isotopologue's.
func (s *Set) Unconnected(sp, v int) bool { return s.unconnected[[2]int{sp, v}] }

// kappa is the parameter name of a calibration factor in a record.
const kappa = "kappa"

// Constants rebuilds the model of a record with its values and the
// covariance of its fitted model parameters, after checking the record's
// parameters and covariance (sizes, finite values, symmetry, σ = √C_ii,
// positive semi-definiteness).
func (rec *Record) Constants() (*Set, error) {
	if len(rec.Species) == 0 {
		return nil, errors.New("species: empty")
	}
	modelParams, fittedModel, nFitted, err := rec.splitParams()
	if err != nil {
		return nil, err
	}
	if err := checkCovarianceShape(rec.Covariance, nFitted); err != nil {
		return nil, err
	}
	if err := checkCovariance(rec.Parameters, rec.Covariance); err != nil {
		return nil, err
	}
	sts, err := rec.modelStates()
	if err != nil {
		return nil, err
	}
	m, err := rebuildModel(rec.Model, rec.Species, sts, modelParams)
	if err != nil {
		return nil, err
	}
	set, err := newSet(m, rec.Model, modelParams, fittedModel, rec.Covariance)
	if err != nil {
		return nil, err
	}
	for _, p := range modelParams {
		if !p.Unconnected {
			continue
		}
		if p.Name != "T" || p.V == nil || !p.Fixed {
			return nil, fmt.Errorf("parameters: %s: unconnected applies to a fixed term value T_v only", p.ID())
		}
		if set.unconnected == nil {
			set.unconnected = map[[2]int]bool{}
		}
		set.unconnected[[2]int{model.SpeciesIndex(m, p.Species), *p.V}] = true
	}
	return set, nil
}

// splitParams returns the model parameters of the record (calibration factors
// left out), the index among the fitted parameters (the covariance rows) of
// each fitted model parameter, and the number of fitted parameters.
func (rec *Record) splitParams() (modelParams []Param, fittedModel []int, nFitted int, err error) {
	for _, p := range rec.Parameters {
		if !p.Fixed {
			if p.Name != kappa {
				fittedModel = append(fittedModel, nFitted)
			}
			nFitted++
		}
		if p.Name == kappa {
			continue
		}
		if math.IsNaN(p.Value) || math.IsInf(p.Value, 0) || math.IsNaN(p.Sigma) || p.Sigma < 0 {
			return nil, nil, 0, fmt.Errorf("parameters: %s: value and sigma must be finite (sigma ≥ 0)", p.Name)
		}
		modelParams = append(modelParams, p)
	}
	return modelParams, fittedModel, nFitted, nil
}

// checkCovarianceShape checks that cov is an n × n symmetric matrix of finite
// numbers.
func checkCovarianceShape(cov [][]float64, n int) error {
	if len(cov) != n {
		return fmt.Errorf("covariance: %d rows for %d fitted parameters", len(cov), n)
	}
	for i, row := range cov {
		if len(row) != n {
			return fmt.Errorf("covariance: row %d has %d entries, want %d", i+1, len(row), n)
		}
		for j, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("covariance: entry (%d,%d) is not finite", i+1, j+1)
			}
			if j < i && math.Abs(v-cov[j][i]) > 1e-9*math.Sqrt(math.Abs(cov[i][i]*cov[j][j]))+1e-300 {
				return fmt.Errorf("covariance: not symmetric at (%d,%d)", i+1, j+1)
			}
		}
	}
	return nil
}

// modelStates returns the record's electronic states as the models take
// them (nil when the record has none).
func (rec *Record) modelStates() ([]states.State, error) {
	var out []states.State
	for i, s := range rec.States {
		y, err := species.ParseStateSymmetry(s.Symmetry)
		if err != nil {
			return nil, fmt.Errorf("states: entry %d (%s): symmetry: %w", i+1, s.Label, err)
		}
		out = append(out, states.State{Label: s.Label, Multiplicity: s.Multiplicity, Lambda: s.Lambda, Symmetry: y})
	}
	return out, nil
}

// RecordStates returns the states of a model as a record writes them: nil for
// a model of a ¹Σ⁺ ground state alone with the default label.
func RecordStates(m model.Model) []State {
	lm, ok := m.(model.LevelModel)
	if !ok {
		return nil
	}
	sts := lm.States()
	if len(sts) == 1 && sts[0].SameTerm(states.Ground()) {
		return nil
	}
	out := make([]State, len(sts))
	for i, s := range sts {
		out[i] = State{Label: s.Label, Multiplicity: s.Multiplicity, Lambda: s.Lambda, Symmetry: s.Symmetry.String()}
	}
	return out
}

// rebuildModel builds the model of kind over the species and electronic
// states from the record's model parameters.
func rebuildModel(kind string, sp []string, sts []states.State, ps []Param) (model.Model, error) {
	for _, p := range ps {
		if p.State != "" && states.Index(sts, p.State) < 1 {
			return nil, fmt.Errorf("parameters: %s: state %q is not an excited state of the record's states", p.Name, p.State)
		}
	}
	switch kind {
	case model.KindTermValues:
		m, err := termValuesFromRecord(sp, sts, ps)
		if err != nil {
			return nil, err
		}
		return m, nil
	case model.KindDunham:
		m, err := dunhamFromRecord(sp, sts, ps)
		if err != nil {
			return nil, err
		}
		return m, nil
	}
	return nil, fmt.Errorf("model: %q is not a model bandwright knows (term-values, dunham)", kind)
}

// newSet sets the record's values on the rebuilt model m, after checking that
// the record lists its parameters in the model's order, and takes the
// covariance of the fitted model parameters out of cov.
func newSet(m model.Model, kind string, modelParams []Param, fittedModel []int, cov [][]float64) (*Set, error) {
	ps := m.Params()
	if len(ps) != len(modelParams) {
		return nil, fmt.Errorf("parameters: %d given, the %s model rebuilt from them has %d", len(modelParams), kind, len(ps))
	}
	c := &Set{Model: m}
	for i := range ps {
		rp := modelParams[i]
		if ps[i].Name != rp.Name || ps[i].State != rp.State || (rp.Species != "" && ps[i].Species != rp.Species && ps[i].Element == "") {
			return nil, fmt.Errorf("parameters: entry %d (%s) is out of the model's order", i+1, rp.Name)
		}
		ps[i].Value, ps[i].Sigma, ps[i].Fixed = rp.Value, rp.Sigma, rp.Fixed
		if !rp.Fixed {
			c.Free = append(c.Free, i)
		}
	}
	c.Params = ps
	c.Values = model.Values(ps)
	n := len(c.Free)
	if n == 0 {
		c.Cov = mat.NewSymDense(1, []float64{0})
		return c, nil
	}
	c.Cov = mat.NewSymDense(n, nil)
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			c.Cov.SetSym(a, b, cov[fittedModel[a]][fittedModel[b]])
		}
	}
	return c, nil
}

// termValuesFromRecord rebuilds a term-values model: the levels of each
// species and state from its T_v, the constants of each state from their
// names.
func termValuesFromRecord(sp []string, sts []states.State, ps []Param) (*model.TermValues, error) {
	nst := max(len(sts), 1)
	levels := make([]map[string][]int, nst)
	terms := make([][]string, nst)
	for i := range levels {
		levels[i] = map[string][]int{}
	}
	for _, p := range ps {
		if p.V == nil {
			return nil, fmt.Errorf("parameters: %s has no v (term-values model)", p.Name)
		}
		if *p.V < 0 || *p.V > linelist.MaxV {
			return nil, fmt.Errorf("parameters: %s: v = %d is outside 0…%d", p.Name, *p.V, linelist.MaxV)
		}
		st := max(states.Index(sts, p.State), 0)
		if p.Name == "T" {
			levels[st][p.Species] = append(levels[st][p.Species], *p.V)
		} else if !contains(terms[st], p.Name) {
			terms[st] = append(terms[st], p.Name)
		}
	}
	var specs []model.LevelSpec
	for _, s := range sp {
		if _, err := species.Parse(s); err != nil {
			return nil, err
		}
		if len(levels[0][s]) == 0 {
			return nil, fmt.Errorf("species: %s has no term values T in the record", s)
		}
		for st := range levels {
			if len(levels[st][s]) > 0 {
				specs = append(specs, model.LevelSpec{Species: s, State: st, V: levels[st][s]})
			}
		}
	}
	if len(sts) == 0 {
		var ts []string
		for _, t := range model.RotTerms() {
			if contains(terms[0], t) {
				ts = append(ts, t)
			}
		}
		return model.NewTermValues(specs, ts, nil)
	}
	return model.NewTermValuesStates(sts, specs, prefixed(sts, terms), nil)
}

// prefixed writes the term list of each state with the state's label in
// front ("A:B"), so that each state gets exactly its own terms; a state
// without terms gets "T" (accepted and ignored).
func prefixed(sts []states.State, terms [][]string) []string {
	var out []string
	for st, ts := range terms {
		if len(ts) == 0 {
			ts = []string{"T"}
		}
		for _, t := range ts {
			out = append(out, sts[st].Label+":"+t)
		}
	}
	return out
}

// dunhamFromRecord rebuilds a Dunham model: the Y_kl and fine-structure terms
// of each state and the breakdown terms of the ground state.
func dunhamFromRecord(sp []string, sts []states.State, ps []Param) (*model.Dunham, error) {
	var isos []species.Isotopologue
	for _, s := range sp {
		iso, err := species.Parse(s)
		if err != nil {
			return nil, err
		}
		isos = append(isos, iso)
	}
	nst := max(len(sts), 1)
	terms := make([][]string, nst)
	var bob []string
	for _, p := range ps {
		st := max(states.Index(sts, p.State), 0)
		switch {
		case p.Name == "T_e":
			continue
		case p.Element != "":
			if p.K == nil || p.L == nil || *p.K < 0 || *p.K > 9 || *p.L < 0 || *p.L > 9 {
				return nil, fmt.Errorf("parameters: %s: k and l must be single digits", p.Name)
			}
			if n := model.DunhamName(*p.K, *p.L); !contains(bob, n) {
				bob = append(bob, n)
			}
			continue
		case p.L != nil:
			if p.K == nil {
				return nil, fmt.Errorf("parameters: %s has no k, l (Dunham model)", p.Name)
			}
			if k, l, err := model.ParseDunhamTerm(p.Name); err != nil || k != *p.K || l != *p.L {
				return nil, fmt.Errorf("parameters: %s: k = %d, l = %d do not match the name", p.Name, *p.K, *p.L)
			}
		case p.K == nil:
			return nil, fmt.Errorf("parameters: %s has no k, l (Dunham model)", p.Name)
		}
		terms[st] = append(terms[st], p.Name)
	}
	o := model.DunhamOptions{Terms: terms[0], BOBTerms: bob}
	if len(sts) > 0 {
		o.States, o.Terms = sts, prefixed(sts, terms)
	}
	return model.NewDunham(isos, o)
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}

// Energy returns E(v, J) of species s in cm⁻¹ and, when gradFree is not nil,
// ∂E/∂p for each fitted parameter in covariance order.
func (c *Set) Energy(s, v, J int, gradFree []float64) float64 {
	if gradFree == nil {
		return c.Model.Energy(s, v, J, c.Values, nil)
	}
	g := make([]float64, len(c.Values))
	e := c.Model.Energy(s, v, J, c.Values, g)
	for k, j := range c.Free {
		gradFree[k] = g[j]
	}
	return e
}

// WithFree returns a copy whose fitted parameters are set to x (covariance
// order), for Monte Carlo draws and finite-difference checks.
func (c *Set) WithFree(x []float64) *Set {
	d := *c
	d.Values = append([]float64(nil), c.Values...)
	for k, j := range c.Free {
		d.Values[j] = x[k]
	}
	return &d
}

// FreeValues returns the values of the fitted parameters in covariance order.
func (c *Set) FreeValues() []float64 {
	x := make([]float64, len(c.Free))
	for k, j := range c.Free {
		x[k] = c.Values[j]
	}
	return x
}

// States returns the electronic states of the model, the ground state first
// (a ¹Σ⁺ ground state labelled X for a record without states).
func (c *Set) States() []states.State {
	if lm, ok := c.Model.(model.LevelModel); ok {
		return lm.States()
	}
	return []states.State{states.Ground()}
}

// freeGradient stores the entries of the full gradient g that belong to the
// fitted parameters, in covariance order, in gradFree.
func (c *Set) freeGradient(g, gradFree []float64) {
	for k, j := range c.Free {
		gradFree[k] = g[j]
	}
}

// LevelEnergy returns E of level lv of species s in cm⁻¹ (NaN for a level the
// model does not have) and, when gradFree is not nil, ∂E/∂p for each fitted
// parameter in covariance order.
func (c *Set) LevelEnergy(s int, lv model.Level, gradFree []float64) float64 {
	lm := c.Model.(model.LevelModel)
	if gradFree == nil {
		return lm.LevelEnergy(s, lv, c.Values, nil)
	}
	g := make([]float64, len(c.Values))
	e := lm.LevelEnergy(s, lv, c.Values, g)
	c.freeGradient(g, gradFree)
	return e
}

// LevelTransition returns ν = E(up) − E(lo) of species s in cm⁻¹ (NaN when
// the model lacks a level) and, when gradFree is not nil, ∂ν/∂p for each
// fitted parameter in covariance order.
func (c *Set) LevelTransition(s int, up, lo model.Level, gradFree []float64) float64 {
	lm := c.Model.(model.LevelModel)
	if gradFree == nil {
		nu, _ := lm.LevelTransition(s, up, lo, c.Values, nil)
		return nu
	}
	g := make([]float64, len(c.Values))
	nu, _ := lm.LevelTransition(s, up, lo, c.Values, g)
	c.freeGradient(g, gradFree)
	return nu
}

// Sublevels calls fn for every level of vibrational level v of electronic
// state st (index into States) of species s with J ≤ j2max/2, in increasing
// J: every fine-structure and Λ-doubling component, with its J (as 2J), the
// case-(b) N, F, parity and energy in cm⁻¹ from the model's zero. With
// withGrad, Sublevel.Grad holds ∂E/∂p for each fitted parameter in covariance
// order (a slice reused between calls: copy what must be kept); otherwise it
// is nil. A level the model has no parameters for gives no call.
//
// This is how the thermo stage sums over levels:
//
//	for st := range set.States() {
//		for v := 0; v <= vmax; v++ {
//			set.Sublevels(s, st, v, 2*jmax, true, func(l model.Sublevel) {
//				g := float64(l.J2 + 1) // 2J+1
//				… l.E, l.Grad …
//			})
//		}
//	}
func (c *Set) Sublevels(s, st, v, j2max int, withGrad bool, fn func(model.Sublevel)) {
	lm := c.Model.(model.LevelModel)
	if !withGrad {
		lm.Sublevels(s, st, v, j2max, c.Values, false, fn)
		return
	}
	free := make([]float64, len(c.Free))
	lm.Sublevels(s, st, v, j2max, c.Values, true, func(l model.Sublevel) {
		c.freeGradient(l.Grad, free)
		l.Grad = free
		fn(l)
	})
}
