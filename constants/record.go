// Package constants is the constants record (constants.json): the file
// format that the fit stage writes and every later stage reads (thermo,
// assign, predict, the reports and the nightly history), with its reader and
// writer, the model it rebuilds, the covariance convention, the parenthetical
// notation of value(σ), and the names of the files in an output folder.
//
// It depends on the energy-level models (package model) but not on the
// fitting engine (package fit), which turns a fit result into a Record
// (fit.NewRecord).
//
// Uncertainty convention (the same everywhere in bandwright): the covariance
// of the fitted parameters is s²·(AᵀWA)⁻¹, scaled by the square of the
// dimensionless standard deviation s = √(χ²/dof) of the fit, W = diag(1/u²);
// every record states it in covariance_convention.
package constants

import (
	"encoding/json"
	"io"
	"math"
	"strconv"
)

// Schema is the schema tag of constants records this version writes and reads.
const Schema = "bandwright.constants/2"

// CovarianceConvention states how σ and the covariance are scaled, written
// into every record.
const CovarianceConvention = "scaled by the square of the dimensionless standard deviation of the fit: C = s²(AᵀWA)⁻¹, W = diag(1/unc²), s = √(χ²/dof)"

// Record is the constants record (constants.json) written by fit and read by
// thermo, assign and predict.
type Record struct {
	Schema string `json:"schema"`
	Model  string `json:"model"`
	Unit   string `json:"unit"`
	// DisplayUnit is the unit the fit's outputs show constants and residuals
	// in (--unit: cm-1, MHz or GHz, see ShowEnergy); the values of the record
	// are always in Unit, cm⁻¹.
	DisplayUnit      string   `json:"display_unit,omitempty"`
	Species          []string `json:"species"`
	ReferenceSpecies string   `json:"reference_species,omitempty"`
	// States are the electronic states the model describes, the ground state
	// first; absent when the fit had no electronic-states file (a ¹Σ⁺ ground
	// state, labelled X).
	States     []State `json:"states,omitempty"`
	Parameters []Param `json:"parameters"`
	// Covariance and Correlation cover the fitted (not fixed) parameters in
	// their order in Parameters.
	Covariance           [][]float64 `json:"covariance"`
	Correlation          [][]float64 `json:"correlation"`
	CovarianceConvention string      `json:"covariance_convention"`
	Stats                Stats       `json:"stats"`
	Status               string      `json:"status"`
	// Convergence describes the iterations of a nonlinear fit (fine
	// structure, calibration factors); absent for a linear one.
	Convergence *Convergence `json:"convergence,omitempty"`
	Bands       []Band       `json:"bands"`
	Observed    []LevelRange `json:"levels_observed"`
	Derived     []Derived    `json:"derived"`
	Rounding    *Rounding    `json:"rounding,omitempty"`
	Warnings    []string     `json:"warnings"`
	Provenance  Provenance   `json:"provenance"`
}

// Param is one parameter in a record: a model parameter (term-values or Dunham
// indices, species or element) or a calibration factor (name "kappa", file).
type Param struct {
	Name    string  `json:"name"`
	V       *int    `json:"v,omitempty"`
	K       *int    `json:"k,omitempty"`
	L       *int    `json:"l,omitempty"`
	Species string  `json:"species,omitempty"`
	Element string  `json:"element,omitempty"`
	State   string  `json:"state,omitempty"` // electronic state; empty: the ground state
	File    string  `json:"file,omitempty"`  // calibration factors
	Value   float64 `json:"value"`
	Sigma   float64 `json:"sigma"`
	Fixed   bool    `json:"fixed"`
	// Unconnected marks a term value T_v held at 0 because no line connects
	// level v to the lowest level of its isotopologue: its energy above that
	// level is unknown, and the level's energies are counted from its own
	// J = 0 (Set.Unconnected).
	Unconnected bool `json:"unconnected,omitempty"`
}

// ID is the parameter's name as --fix takes it and as every output writes
// it: "B_v1[13C16O]" (term values), "Y01" (Dunham), "BOB01_C" (breakdown),
// "A:T_v0[14N16O]" (a parameter of electronic state A), "kappa[FILE]"
// (calibration factor). It equals model.Param.ID of the model parameter.
func (p Param) ID() string {
	id := p.Name
	switch {
	case p.Name == kappa:
		return kappa + "[" + p.File + "]"
	case p.V != nil:
		id = p.Name + "_v" + strconv.Itoa(*p.V) + "[" + p.Species + "]"
	}
	if p.State != "" {
		id = p.State + ":" + id
	}
	return id
}

// State is an electronic state in a record: its label, spin multiplicity
// 2S+1, |Λ| and symmetry ("g-", "+", "u", "").
type State struct {
	Label        string `json:"label"`
	Multiplicity int    `json:"multiplicity"`
	Lambda       int    `json:"lambda"`
	Symmetry     string `json:"symmetry,omitempty"`
}

// Convergence describes the iterations of a nonlinear fit.
type Convergence struct {
	// Method is "Gauss–Newton" or "Levenberg–Marquardt" (when a step had
	// to be damped).
	Method string `json:"method"`
	// Iterations counts the QR solves of the linearised problem, over every
	// starting point and rejection pass.
	Iterations int `json:"iterations"`
	// Starts is the number of starting points tried.
	Starts int `json:"starts"`
	// FinalStep is the largest |Δp_j|/σ_j of the last step.
	FinalStep float64 `json:"final_step_sigma"`
	Converged bool    `json:"converged"`
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

// Stats summarises a fit.
type Stats struct {
	Lines     int     `json:"lines"`
	Used      int     `json:"used"`
	Rejected  int     `json:"rejected"`
	Params    int     `json:"parameters_fitted"`
	DOF       int     `json:"dof"`
	Chi2      float64 `json:"chi2"`
	Sigma     float64 `json:"sigma_dimensionless"`
	RMSCm     float64 `json:"rms_cm-1"`
	RMSMHz    float64 `json:"rms_MHz,omitempty"`
	LinesMHz  int     `json:"lines_MHz,omitempty"`
	Condition float64 `json:"condition_number"`
	Iter      int     `json:"iterations"`
}

// MarshalJSON writes the statistics with sigma_dimensionless null when it is
// undefined (NaN: a fit without degrees of freedom), since JSON has no NaN.
func (s Stats) MarshalJSON() ([]byte, error) {
	type plain Stats
	aux := struct {
		plain
		Sigma *float64 `json:"sigma_dimensionless"`
	}{plain: plain(s)}
	if !math.IsNaN(s.Sigma) {
		aux.Sigma = &s.Sigma
	}
	return json.Marshal(aux)
}

// UnmarshalJSON reads what MarshalJSON writes: a null sigma_dimensionless is NaN.
func (s *Stats) UnmarshalJSON(b []byte) error {
	type plain Stats
	aux := struct {
		*plain
		Sigma *float64 `json:"sigma_dimensionless"`
	}{plain: (*plain)(s)}
	if err := json.Unmarshal(b, &aux); err != nil {
		return err
	}
	s.Sigma = math.NaN()
	if aux.Sigma != nil {
		s.Sigma = *aux.Sigma
	}
	return nil
}

// Band counts the used lines of one band of one isotopologue. StateUp and
// StateLo name the electronic states of a band of an electronic band system
// (empty: the ground state). With HalfJ the J are half-integers: JMin + ½ and
// JMax + ½.
type Band struct {
	Species string `json:"species"`
	VUp     int    `json:"v_up"`
	VLo     int    `json:"v_lo"`
	StateUp string `json:"state_up,omitempty"`
	StateLo string `json:"state_lo,omitempty"`
	Lines   int    `json:"lines"`
	JMin    int    `json:"j_min"`
	JMax    int    `json:"j_max"`
	HalfJ   bool   `json:"half_integer_j,omitempty"`
}

// LevelRange is a vibrational level reached by the used lines and the highest J
// observed in it: the range outside which a model extrapolates. State is its
// electronic state (empty: the ground state); with HalfJ the highest J is
// JMax + ½.
type LevelRange struct {
	Species string `json:"species"`
	State   string `json:"state,omitempty"`
	V       int    `json:"v"`
	JMax    int    `json:"j_max"`
	HalfJ   bool   `json:"half_integer_j,omitempty"`
}

// Derived is a constant computed from the fitted parameters, with its 1σ
// propagated through the full covariance: σ² = gᵀ C g with g the gradient of
// the constant with respect to the fitted parameters.
type Derived struct {
	Name    string  `json:"name"`
	Species string  `json:"species,omitempty"`
	Value   float64 `json:"value"`
	Sigma   float64 `json:"sigma"`
	Unit    string  `json:"unit"`
	Note    string  `json:"note,omitempty"`
	// Neglected is the order of magnitude of a correction the constant's
	// definition neglects (the Dunham correction between Y10 and ω_e, Y01 and
	// B_e), in its unit; 0 when negligible against σ or not applicable.
	Neglected float64 `json:"neglected_correction,omitempty"`
	// Truncation is the first-order shift of the constant by the terms the
	// fitted series omit (the next term of each, at the size the next-term
	// rule expects, the shifts combined in quadrature), in its unit: the
	// constant is an effective one to about that much, whatever its σ.
	// Omitted (0) when not estimated. An optional field: records without it
	// read as before, so the schema version stays 2.
	Truncation float64 `json:"truncation,omitempty"`
}

// Rounding records the sequential rounding and refitting of a fit (Le Roy
// 1998, with Watson's 1977 parameter sensitivity for the rounding units).
type Rounding struct {
	// Steps lists the parameters in the order they were rounded, with the
	// rounding unit used.
	Steps []RoundStep `json:"steps"`
	// Chi2Before and Chi2After are χ² of the unrounded and rounded constants
	// on the same lines.
	Chi2Before float64 `json:"chi2_before"`
	Chi2After  float64 `json:"chi2_after"`
}

// RoundStep is one parameter's rounding.
type RoundStep struct {
	Param     string  `json:"parameter"`
	Unrounded float64 `json:"unrounded"`
	Rounded   float64 `json:"rounded"`
	Unit      float64 `json:"unit"`
	// CondSigma is the conditional σ of the parameter (all others held) at the
	// moment it was rounded.
	CondSigma float64 `json:"conditional_sigma"`
}

// Write writes the record as indented JSON.
func (rec *Record) Write(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(rec)
}
