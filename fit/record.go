package fit

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"bandwright/fit/model"
	"bandwright/fit/species"
)

// Schema is the schema tag of constants records this version writes and reads.
const Schema = "bandwright.constants/1"

// CovarianceConvention states how σ and the covariance are scaled, written
// into every record.
const CovarianceConvention = "scaled by the square of the dimensionless standard deviation of the fit: C = s²(AᵀWA)⁻¹, W = diag(1/unc²), s = √(χ²/dof)"

// Record is the constants record (constants.json) written by fit and read by
// thermo, assign and predict.
type Record struct {
	Schema           string        `json:"schema"`
	Model            string        `json:"model"`
	Unit             string        `json:"unit"`
	Species          []string      `json:"species"`
	ReferenceSpecies string        `json:"reference_species,omitempty"`
	Parameters       []RecordParam `json:"parameters"`
	// Covariance and Correlation cover the fitted (not fixed) parameters in
	// their order in Parameters.
	Covariance           [][]float64  `json:"covariance"`
	Correlation          [][]float64  `json:"correlation"`
	CovarianceConvention string       `json:"covariance_convention"`
	Stats                Stats        `json:"stats"`
	Status               string       `json:"status"`
	Bands                []Band       `json:"bands"`
	Observed             []LevelRange `json:"levels_observed"`
	Derived              []Derived    `json:"derived"`
	Rounding             *Rounding    `json:"rounding,omitempty"`
	Warnings             []string     `json:"warnings"`
	Provenance           Provenance   `json:"provenance"`
}

// RecordParam is one parameter in a record.
type RecordParam struct {
	Name    string  `json:"name"`
	V       *int    `json:"v,omitempty"`
	K       *int    `json:"k,omitempty"`
	L       *int    `json:"l,omitempty"`
	Species string  `json:"species,omitempty"`
	Element string  `json:"element,omitempty"`
	File    string  `json:"file,omitempty"` // calibration factors
	Value   float64 `json:"value"`
	Sigma   float64 `json:"sigma"`
	Fixed   bool    `json:"fixed"`
}

// Provenance says where a record came from.
type Provenance struct {
	Inputs  []Input        `json:"inputs"`
	Version string         `json:"version"`
	Options map[string]any `json:"options"`
	Created string         `json:"created"`
}

// Input is one input file and its SHA-256.
type Input struct {
	Path   string `json:"path"`
	SHA256 string `json:"sha256"`
}

func intp(i int) *int { return &i }

// NewRecord turns a fit result into a record (provenance is the caller's).
func NewRecord(r *Result) *Record {
	rec := &Record{
		Schema: Schema, Model: r.Model.Kind(), Unit: "cm-1",
		Species: r.Model.Species(), Stats: r.Stats, Status: r.Status.String(),
		Bands: r.Bands, Observed: r.Observed, Derived: r.Derived, Rounding: r.Rounding,
		Warnings:             append([]string{}, r.Warnings...),
		CovarianceConvention: CovarianceConvention,
	}
	if rec.Model == model.KindDunham {
		rec.ReferenceSpecies = rec.Species[0]
	}
	for _, p := range r.Params {
		rp := RecordParam{Name: p.Name, Species: p.Species, Element: p.Element, Value: p.Value, Sigma: p.Sigma, Fixed: p.Fixed}
		if p.V >= 0 {
			rp.V = intp(p.V)
		}
		if p.K >= 0 {
			rp.K, rp.L = intp(p.K), intp(p.L)
		}
		rec.Parameters = append(rec.Parameters, rp)
	}
	// Covariance rows follow Free then κ; Parameters lists model parameters in
	// model order (Free is increasing), then κ — the same order.
	for _, c := range r.Calib {
		if !c.Fixed {
			rec.Parameters = append(rec.Parameters, RecordParam{Name: "kappa", File: c.File, Value: c.Kappa, Sigma: c.Sigma})
		} else {
			rec.Parameters = append(rec.Parameters, RecordParam{Name: "kappa", File: c.File, Value: 0, Fixed: true})
		}
	}
	rec.Covariance = toRows(r.Cov)
	rec.Correlation = toRows(r.Correlation())
	return rec
}

func toRows(s *mat.SymDense) [][]float64 {
	n := s.SymmetricDim()
	out := make([][]float64, n)
	for i := range out {
		out[i] = make([]float64, n)
		for j := range out[i] {
			out[i][j] = s.At(i, j)
		}
	}
	return out
}

// Write writes the record as indented JSON.
func (rec *Record) Write(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(rec)
}

// ReadRecord reads and checks a constants record. name is used in messages.
func ReadRecord(r io.Reader, name string) (*Record, error) {
	dec := json.NewDecoder(r)
	var rec Record
	if err := dec.Decode(&rec); err != nil {
		return nil, fmt.Errorf("fit: %s: not a constants record: %w", name, err)
	}
	if !strings.HasPrefix(rec.Schema, "bandwright.constants/") {
		return nil, fmt.Errorf("fit: %s: schema: %q is not a bandwright constants record (want %q)", name, rec.Schema, Schema)
	}
	if rec.Schema != Schema {
		got, err1 := strconv.Atoi(strings.TrimPrefix(rec.Schema, "bandwright.constants/"))
		own, err2 := strconv.Atoi(strings.TrimPrefix(Schema, "bandwright.constants/"))
		if err1 == nil && err2 == nil && got > own {
			return nil, fmt.Errorf("fit: %s: schema: %q was written by a newer bandwright; this version reads %q", name, rec.Schema, Schema)
		}
		return nil, fmt.Errorf("fit: %s: schema: %q is an older or unknown version of the constants record; this version reads %q (fit the lines again)", name, rec.Schema, Schema)
	}
	if _, err := rec.Constants(); err != nil {
		return nil, fmt.Errorf("fit: %s: %w", name, err)
	}
	return &rec, nil
}

// Constants is a record turned back into a model that can be evaluated, with
// the covariance of its fitted model parameters (calibration factors dropped:
// the marginal covariance of the model parameters is the sub-matrix).
type Constants struct {
	Model  model.Model
	Params []model.Param
	Values []float64
	// Free indexes the fitted model parameters in Params; Cov follows it.
	Free []int
	Cov  *mat.SymDense
}

// Constants rebuilds the model of a record.
func (rec *Record) Constants() (*Constants, error) {
	if len(rec.Species) == 0 {
		return nil, errors.New("species: empty")
	}
	var modelParams []RecordParam
	nFitted := 0
	var fittedModel []int // index among fitted of each fitted model parameter
	for _, p := range rec.Parameters {
		if !p.Fixed {
			if p.Name != "kappa" {
				fittedModel = append(fittedModel, nFitted)
			}
			nFitted++
		}
		if p.Name == "kappa" {
			continue
		}
		if math.IsNaN(p.Value) || math.IsInf(p.Value, 0) || math.IsNaN(p.Sigma) || p.Sigma < 0 {
			return nil, fmt.Errorf("parameters: %s: value and sigma must be finite (sigma ≥ 0)", p.Name)
		}
		modelParams = append(modelParams, p)
	}
	if len(rec.Covariance) != nFitted {
		return nil, fmt.Errorf("covariance: %d rows for %d fitted parameters", len(rec.Covariance), nFitted)
	}
	for i, row := range rec.Covariance {
		if len(row) != nFitted {
			return nil, fmt.Errorf("covariance: row %d has %d entries, want %d", i+1, len(row), nFitted)
		}
		for j, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("covariance: entry (%d,%d) is not finite", i+1, j+1)
			}
			if j < i && math.Abs(v-rec.Covariance[j][i]) > 1e-9*math.Sqrt(math.Abs(rec.Covariance[i][i]*rec.Covariance[j][j]))+1e-300 {
				return nil, fmt.Errorf("covariance: not symmetric at (%d,%d)", i+1, j+1)
			}
		}
	}
	var m model.Model
	switch rec.Model {
	case model.KindLevels:
		lm, err := levelsFromRecord(rec.Species, modelParams)
		if err != nil {
			return nil, err
		}
		m = lm
	case model.KindDunham:
		dm, err := dunhamFromRecord(rec.Species, modelParams)
		if err != nil {
			return nil, err
		}
		m = dm
	default:
		return nil, fmt.Errorf("model: %q is not a model bandwright knows (levels, dunham)", rec.Model)
	}
	ps := m.Params()
	if len(ps) != len(modelParams) {
		return nil, fmt.Errorf("parameters: %d given, the %s model rebuilt from them has %d", len(modelParams), rec.Model, len(ps))
	}
	c := &Constants{Model: m}
	for i := range ps {
		rp := modelParams[i]
		if ps[i].Name != rp.Name || (rp.Species != "" && ps[i].Species != rp.Species && ps[i].Element == "") {
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
	c.Cov = mat.NewSymDense(max(n, 1), nil)
	if n == 0 {
		c.Cov = mat.NewSymDense(1, []float64{0})
	}
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			c.Cov.SetSym(a, b, rec.Covariance[fittedModel[a]][fittedModel[b]])
		}
	}
	return c, nil
}

func levelsFromRecord(sp []string, ps []RecordParam) (*model.Levels, error) {
	levels := map[string][]int{}
	terms := map[string]bool{}
	for _, p := range ps {
		if p.V == nil {
			return nil, fmt.Errorf("parameters: %s has no v (levels model)", p.Name)
		}
		if p.Name == "T" {
			levels[p.Species] = append(levels[p.Species], *p.V)
		} else {
			terms[p.Name] = true
		}
	}
	var specs []model.LevelSpec
	for _, s := range sp {
		if _, err := species.Parse(s); err != nil {
			return nil, err
		}
		if len(levels[s]) == 0 {
			return nil, fmt.Errorf("species: %s has no term values T in the record", s)
		}
		specs = append(specs, model.LevelSpec{Species: s, V: levels[s]})
	}
	var ts []string
	for _, t := range model.RotTerms {
		if terms[t] {
			ts = append(ts, t)
		}
	}
	return model.NewLevels(specs, ts, nil)
}

func dunhamFromRecord(sp []string, ps []RecordParam) (*model.Dunham, error) {
	var isos []species.Isotopologue
	for _, s := range sp {
		iso, err := species.Parse(s)
		if err != nil {
			return nil, err
		}
		isos = append(isos, iso)
	}
	var terms, bob []string
	for _, p := range ps {
		if p.K == nil || p.L == nil {
			return nil, fmt.Errorf("parameters: %s has no k, l (Dunham model)", p.Name)
		}
		if p.Element != "" {
			n := model.DunhamName(*p.K, *p.L)
			if !contains(bob, n) {
				bob = append(bob, n)
			}
			continue
		}
		terms = append(terms, p.Name)
	}
	return model.NewDunham(isos, model.DunhamOptions{Terms: terms, BOBTerms: bob})
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
func (c *Constants) Energy(s, v, J int, gradFree []float64) float64 {
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
func (c *Constants) WithFree(x []float64) *Constants {
	d := *c
	d.Values = append([]float64(nil), c.Values...)
	for k, j := range c.Free {
		d.Values[j] = x[k]
	}
	return &d
}

// FreeValues returns the values of the fitted parameters in covariance order.
func (c *Constants) FreeValues() []float64 {
	x := make([]float64, len(c.Free))
	for k, j := range c.Free {
		x[k] = c.Values[j]
	}
	return x
}
