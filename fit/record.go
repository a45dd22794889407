package fit

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/gonum/mat"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/internal/textcheck"
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

// maxRecordBytes bounds the size of a constants record read (a record of a large
// fit is well below a megabyte).
const maxRecordBytes = 64 << 20

// ReadRecord reads and checks a constants record. name is used in messages.
//
// The record must be one JSON object in UTF-8 (a byte-order mark is skipped);
// syntax errors name the line and column. Besides the structure, the checks
// refuse what a hand edit can break: a schema of another version, values or σ
// that are not finite, σ that disagree with the covariance, and a covariance
// that is not symmetric positive semi-definite (a negative variance, or a
// correlation outside −1…1, would make a propagated σ imaginary).
func ReadRecord(r io.Reader, name string) (*Record, error) {
	b, err := io.ReadAll(io.LimitReader(r, maxRecordBytes+1))
	if err != nil {
		return nil, fmt.Errorf("fit: %s: %w", name, err)
	}
	if len(b) > maxRecordBytes {
		return nil, fmt.Errorf("fit: %s: larger than %d MB; not a constants record", name, maxRecordBytes>>20)
	}
	b = textcheck.TrimBOM(b)
	if len(strings.TrimSpace(string(b))) == 0 {
		return nil, fmt.Errorf("fit: %s: not a constants record: the file is empty", name)
	}
	if !utf8.Valid(b) {
		off := 0
		for off < len(b) {
			r, size := utf8.DecodeRune(b[off:])
			if r == utf8.RuneError && size <= 1 {
				break
			}
			off += size
		}
		line, col := textcheck.LineCol(b, int64(off))
		return nil, fmt.Errorf("fit: %s:%d:%d: not UTF-8 text: byte 0x%02X (save the file as UTF-8)", name, line, col, b[off])
	}
	if key, off, dup := duplicateKey(b); dup {
		line, col := textcheck.LineCol(b, off)
		return nil, fmt.Errorf("fit: %s:%d:%d: %s: the key is given twice; which one holds is not clear (the record was edited?)", name, line, col, key)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	var rec Record
	if err := dec.Decode(&rec); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := textcheck.LineCol(b, se.Offset)
			return nil, fmt.Errorf("fit: %s:%d:%d: not a constants record: %w", name, line, col, err)
		case errors.As(err, &te):
			line, col := textcheck.LineCol(b, te.Offset)
			return nil, fmt.Errorf("fit: %s:%d:%d: %s: not a constants record: %w", name, line, col, te.Field, err)
		case errors.Is(err, io.ErrUnexpectedEOF):
			return nil, fmt.Errorf("fit: %s: not a constants record: the file ends in the middle of the JSON (cut short?)", name)
		}
		return nil, fmt.Errorf("fit: %s: not a constants record: %w", name, err)
	}
	if _, err := dec.Token(); err != io.EOF {
		line, col := textcheck.LineCol(b, dec.InputOffset())
		return nil, fmt.Errorf("fit: %s:%d:%d: not a constants record: more follows the record's closing brace", name, line, col)
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
	if rec.Unit != "cm-1" {
		return nil, fmt.Errorf("fit: %s: unit: %q; a constants record holds its constants in cm-1", name, rec.Unit)
	}
	if _, err := rec.Constants(); err != nil {
		return nil, fmt.Errorf("fit: %s: %w", name, err)
	}
	return &rec, nil
}

// duplicateKey finds the first key given twice in one JSON object of b (which
// encoding/json would read as the last one, silently): its path, such as
// "parameters[3].value", and the offset just after it. b that is not valid JSON
// reports no duplicate (the decoder reports the syntax error).
func duplicateKey(b []byte) (path string, off int64, found bool) {
	type frame struct {
		obj     bool
		keys    map[string]bool
		wantKey bool
		key     string // current key (objects)
		idx     int    // current index (arrays)
		name    string // path of this container
	}
	var st []*frame
	valueDone := func() {
		if n := len(st); n > 0 {
			if f := st[n-1]; f.obj {
				f.wantKey = true
			} else {
				f.idx++
			}
		}
	}
	childName := func() string {
		if len(st) == 0 {
			return ""
		}
		f := st[len(st)-1]
		if f.obj {
			if f.name == "" {
				return f.key
			}
			return f.name + "." + f.key
		}
		return fmt.Sprintf("%s[%d]", f.name, f.idx)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	for {
		tok, err := dec.Token()
		if err != nil {
			return "", 0, false
		}
		if n := len(st); n > 0 && st[n-1].obj && st[n-1].wantKey {
			f := st[n-1]
			if d, ok := tok.(json.Delim); ok && d == '}' {
				st = st[:n-1]
				valueDone()
				continue
			}
			k, _ := tok.(string)
			if f.keys[k] {
				f.key = k
				return childName(), dec.InputOffset(), true
			}
			f.keys[k], f.key, f.wantKey = true, k, false
			continue
		}
		switch d, _ := tok.(json.Delim); d {
		case '{':
			st = append(st, &frame{obj: true, keys: map[string]bool{}, wantKey: true, name: childName()})
		case '[':
			st = append(st, &frame{name: childName()})
		case ']':
			st = st[:len(st)-1]
			valueDone()
		default:
			valueDone()
		}
		if len(st) == 0 {
			return "", 0, false
		}
	}
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
	if err := checkCovariance(rec.Parameters, rec.Covariance); err != nil {
		return nil, err
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
		if *p.V < 0 || *p.V > linelist.MaxV {
			return nil, fmt.Errorf("parameters: %s: v = %d is outside 0…%d", p.Name, *p.V, linelist.MaxV)
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
		if p.Element == "" {
			if k, l, err := model.ParseDunhamTerm(p.Name); err != nil || k != *p.K || l != *p.L {
				return nil, fmt.Errorf("parameters: %s: k = %d, l = %d do not match the name", p.Name, *p.K, *p.L)
			}
		} else if *p.K < 0 || *p.K > 9 || *p.L < 0 || *p.L > 9 {
			return nil, fmt.Errorf("parameters: %s: k = %d, l = %d must be single digits", p.Name, *p.K, *p.L)
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

// covSigmaTolerance is the relative difference allowed between a fitted
// parameter's σ and √C_ii: NewRecord writes them equal, so more is an edit.
const covSigmaTolerance = 1e-6

// psdTolerance is how far below zero an eigenvalue of the correlation matrix may
// lie from rounding (its eigenvalues sum to the number of parameters).
const psdTolerance = 1e-8

// checkCovariance checks the covariance of a record against its fitted
// parameters (in record order, calibration factors included): σ_i = √C_ii, every
// correlation within −1…1, and the correlation matrix positive semi-definite.
// A parameter with zero variance must have a zero row.
func checkCovariance(ps []RecordParam, cov [][]float64) error {
	var names []string
	var sig []float64
	for _, p := range ps {
		if !p.Fixed {
			n := p.Name
			if p.V != nil {
				n = fmt.Sprintf("%s_v%d", p.Name, *p.V)
			}
			if p.Species != "" && p.K == nil && p.Element == "" {
				n += "[" + p.Species + "]"
			}
			if p.File != "" {
				n += "[" + p.File + "]"
			}
			names = append(names, n)
			sig = append(sig, p.Sigma)
		}
	}
	n := len(cov)
	if n != len(names) {
		return nil // the caller reports the size
	}
	const advice = "the record was edited or damaged; fit the lines again"
	var idx []int // parameters with positive variance
	for i := 0; i < n; i++ {
		v := cov[i][i]
		switch {
		case v < 0:
			return fmt.Errorf("covariance: the variance of %s is negative (%g); %s", names[i], v, advice)
		case math.Abs(sig[i]-math.Sqrt(v)) > covSigmaTolerance*math.Max(sig[i], math.Sqrt(v)):
			return fmt.Errorf("covariance: %s has sigma %g but the covariance gives %g; %s", names[i], sig[i], math.Sqrt(v), advice)
		case v == 0:
			for j := 0; j < n; j++ {
				if cov[i][j] != 0 {
					return fmt.Errorf("covariance: %s has zero variance but covariance %g with %s; %s", names[i], cov[i][j], names[j], advice)
				}
			}
			continue
		}
		idx = append(idx, i)
	}
	if len(idx) == 0 {
		return nil
	}
	rho := mat.NewSymDense(len(idx), nil)
	for a, i := range idx {
		for b, j := range idx[a:] {
			r := cov[i][j] / (math.Sqrt(cov[i][i]) * math.Sqrt(cov[j][j]))
			if i != j && !(math.Abs(r) <= 1+psdTolerance) {
				return fmt.Errorf("covariance: the correlation of %s and %s is %.6g, outside −1…1; %s", names[i], names[j], r, advice)
			}
			rho.SetSym(a, a+b, r)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(rho, false) {
		return fmt.Errorf("covariance: its eigenvalues cannot be computed; %s", advice)
	}
	if lmin := floatsMin(eig.Values(nil)); !(lmin >= -psdTolerance) {
		return fmt.Errorf("covariance: not positive semi-definite (the correlation matrix has the eigenvalue %.3g): some combination of the parameters would have a negative variance; %s", lmin, advice)
	}
	return nil
}

// floatsMin returns the smallest of xs, NaN if any is NaN.
func floatsMin(xs []float64) float64 {
	m := math.Inf(1)
	for _, x := range xs {
		m = math.Min(m, x)
	}
	return m
}
