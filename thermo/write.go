package thermo

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"bandwright/constants"
)

// Schemas of the files the thermo stage writes.
const (
	TableSchema = "bandwright.thermo/1"
	NASA7Schema = "bandwright.nasa7/1"
)

// Columns are the columns of thermo.csv without Monte Carlo; MCColumns follow
// them when Monte Carlo was run. <f>_sigma is statistical, <f>_sigma_model
// the model part of the budget, <f>_sigma_total their root-sum-square.
var (
	Columns = []string{"T_K", "Q", "Q_sigma", "Q_sigma_model", "Q_sigma_total",
		"Cp", "Cp_sigma", "Cp_sigma_model", "Cp_sigma_total",
		"S", "S_sigma", "S_sigma_model", "S_sigma_total",
		"H_minus_H0", "H_minus_H0_sigma", "H_minus_H0_sigma_model", "H_minus_H0_sigma_total",
		"H_minus_H298", "H_minus_H298_sigma", "H_minus_H298_sigma_model", "H_minus_H298_sigma_total",
		"gef", "gef_sigma", "gef_sigma_model", "gef_sigma_total",
		"share_outside_data", "Q_closed_form", "Q_closed_form_error"}
	MCColumns = []string{"Q_sigma_mc", "Cp_sigma_mc", "S_sigma_mc", "H_minus_H0_sigma_mc", "H_minus_H298_sigma_mc", "gef_sigma_mc"}
)

func fmtVal(x float64) string   { return strconv.FormatFloat(x, 'g', 12, 64) }
func fmtSigma(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }

// csvComment writes a "# " line with any line breaks folded.
func csvComment(w io.Writer, format string, a ...any) {
	s := fmt.Sprintf(format, a...)
	s = strings.ReplaceAll(s, "\n", " ")
	fmt.Fprintf(w, "# %s\n", s)
}

// WriteCSV writes thermo.csv: comment lines stating units and conventions, a
// header row, one row per temperature.
func (r *Result) WriteCSV(w io.Writer) error {
	if err := r.checkFinite(); err != nil {
		return err
	}
	bw := bufio.NewWriter(w)
	c := r.Conventions
	csvComment(bw, "%s%s", constants.ThermoHeading, c.Species)
	csvComment(bw, "units: %s", c.Units)
	csvComment(bw, "standard pressure: %s", c.PressureLabel)
	csvComment(bw, "composition: %s", c.CompositionNote)
	csvComment(bw, "nuclear spin: %s", c.NuclearSpinNote)
	csvComment(bw, "energy zero: %s", c.EnergyZero)
	csvComment(bw, "uncertainty: %s", c.Uncertainty)
	for _, b := range r.Budget {
		csvComment(bw, "budget: %s: %s; alternatives: %s; %s; rule: %s", b.Name, b.What, strings.Join(b.Alternatives, "; "), b.Method, b.Rule)
	}
	csvComment(bw, "dissociation: %s", r.Dissociation.Note)
	csvComment(bw, "share_outside_data: share of Q from levels outside the fitted data (v not observed, or J above the highest observed in that v)")
	if r.MonteCarlo != nil {
		csvComment(bw, "Monte Carlo: %d draws, seed %d; *_sigma_mc = sample standard deviation over the draws", r.MonteCarlo.Draws, r.MonteCarlo.Seed)
	}
	csvComment(bw, "closed form: %s", c.ClosedForm)
	for _, s := range r.States {
		csvComment(bw, "levels: state %s: %d levels, v %d–%d, J ≤ %g; v: %s; J: %s", s.Term, s.Levels, s.VMin, s.VMax, s.JMax, s.VTruncation, s.JTruncation)
		if s.FineStructure != "" {
			csvComment(bw, "levels: state %s: fine structure %s", s.State, s.FineStructure)
		}
		if s.ExtrapolatedV != "" {
			csvComment(bw, "levels: state %s: v = %s extrapolated (%s)", s.State, s.ExtrapolatedV, s.ExtrapolationNote)
		}
	}
	for _, wn := range r.Warnings {
		csvComment(bw, "warning: %s", wn)
	}
	csvComment(bw, "caution: %s", Caution)
	cols := append([]string(nil), Columns...)
	if r.MonteCarlo != nil {
		cols = append(cols, MCColumns...)
	}
	bw.WriteString(strings.Join(cols, ",") + "\n")
	for _, row := range r.Rows {
		vals := []string{fmtVal(row.T)}
		for k := range FunctionNames {
			vals = append(vals, fmtVal(row.F.at(k)), fmtSigma(row.Sigma.at(k)), fmtSigma(row.SigmaModel.at(k)), fmtSigma(row.SigmaTotal.at(k)))
		}
		vals = append(vals, fmtSigma(row.ExtrapolatedShare), fmtVal(row.QClosed), fmtSigma(row.QClosedError))
		if r.MonteCarlo != nil {
			m := row.MC.Sigma
			vals = append(vals, fmtSigma(m.Q), fmtSigma(m.Cp), fmtSigma(m.S), fmtSigma(m.HmH0), fmtSigma(m.HmH298), fmtSigma(m.Gef))
		}
		bw.WriteString(strings.Join(vals, ",") + "\n")
	}
	return bw.Flush()
}

type jsonRow struct {
	T                 float64  `json:"T_K"`
	Q                 float64  `json:"Q"`
	QSigma            float64  `json:"Q_sigma"`
	QSigmaModel       float64  `json:"Q_sigma_model"`
	QSigmaTotal       float64  `json:"Q_sigma_total"`
	Cp                float64  `json:"Cp"`
	CpSigma           float64  `json:"Cp_sigma"`
	CpSigmaModel      float64  `json:"Cp_sigma_model"`
	CpSigmaTotal      float64  `json:"Cp_sigma_total"`
	S                 float64  `json:"S"`
	SSigma            float64  `json:"S_sigma"`
	SSigmaModel       float64  `json:"S_sigma_model"`
	SSigmaTotal       float64  `json:"S_sigma_total"`
	HmH0              float64  `json:"H_minus_H0"`
	HmH0Sigma         float64  `json:"H_minus_H0_sigma"`
	HmH0SigmaModel    float64  `json:"H_minus_H0_sigma_model"`
	HmH0SigmaTotal    float64  `json:"H_minus_H0_sigma_total"`
	HmH298            float64  `json:"H_minus_H298"`
	HmH298Sigma       float64  `json:"H_minus_H298_sigma"`
	HmH298SigmaModel  float64  `json:"H_minus_H298_sigma_model"`
	HmH298SigmaTotal  float64  `json:"H_minus_H298_sigma_total"`
	Gef               float64  `json:"gef"`
	GefSigma          float64  `json:"gef_sigma"`
	GefSigmaModel     float64  `json:"gef_sigma_model"`
	GefSigmaTotal     float64  `json:"gef_sigma_total"`
	QClosed           float64  `json:"Q_closed_form"`
	QClosedError      float64  `json:"Q_closed_form_error"`
	QSigmaMC          *float64 `json:"Q_sigma_mc,omitempty"`
	CpSigmaMC         *float64 `json:"Cp_sigma_mc,omitempty"`
	SSigmaMC          *float64 `json:"S_sigma_mc,omitempty"`
	HmH0SigmaMC       *float64 `json:"H_minus_H0_sigma_mc,omitempty"`
	HmH298SigmaMC     *float64 `json:"H_minus_H298_sigma_mc,omitempty"`
	GefSigmaMC        *float64 `json:"gef_sigma_mc,omitempty"`
	MeanMC            *jsonFns `json:"mean_mc,omitempty"`
	ExtrapolatedShare float64  `json:"share_outside_data"`
	// Contributions holds the size of each contribution to σ_model, by name.
	Contributions map[string]jsonFns `json:"sigma_model_contributions"`
}

type jsonFns struct {
	Q      float64 `json:"Q"`
	Cp     float64 `json:"Cp"`
	S      float64 `json:"S"`
	HmH0   float64 `json:"H_minus_H0"`
	HmH298 float64 `json:"H_minus_H298"`
	Gef    float64 `json:"gef"`
}

type jsonTable struct {
	Schema         string               `json:"schema"`
	Conventions    Conventions          `json:"conventions"`
	Levels         []StateLevels        `json:"levels"`
	EnergyZero     ZeroPoint            `json:"energy_zero"`
	Dissociation   jsonDissociation     `json:"dissociation"`
	Budget         jsonBudget           `json:"uncertainty_budget"`
	ModelDominated []Dominance          `json:"model_sigma_exceeds_statistical"`
	Parameters     []string             `json:"fitted_parameters"`
	MonteCarlo     *MCInfo              `json:"monte_carlo,omitempty"`
	Columns        []string             `json:"columns"`
	Table          []jsonRow            `json:"table"`
	Warnings       []string             `json:"warnings"`
	Provenance     constants.Provenance `json:"provenance"`
}

func ptr(x float64) *float64 { return &x }

// jsonBudget states the budget's rule and contributions in thermo.json.
type jsonBudget struct {
	Rule          string         `json:"rule"`
	Contributions []Contribution `json:"contributions"`
}

// jsonDissociation is Dissociation with an unbounded D0 written as null.
type jsonDissociation struct {
	D0          *float64 `json:"D0_cm-1"`
	Sigma       float64  `json:"D0_sigma_cm-1"`
	Given       bool     `json:"given"`
	BirgeSponer float64  `json:"birge_sponer_D0_cm-1,omitempty"`
	Note        string   `json:"note"`
}

func newJSONDissociation(d Dissociation) jsonDissociation {
	j := jsonDissociation{Sigma: d.Sigma, Given: d.Given, BirgeSponer: d.BirgeSponer, Note: d.Note}
	if !math.IsInf(d.D0, 0) {
		j.D0 = ptr(d.D0)
	}
	return j
}

func fns(f Functions) jsonFns { return jsonFns(f) }

// WriteJSON writes thermo.json: the table with conventions, the levels used,
// the energy zero, warnings and provenance.
func (r *Result) WriteJSON(w io.Writer, prov constants.Provenance) error {
	if err := r.checkFinite(); err != nil {
		return err
	}
	t := jsonTable{Schema: TableSchema, Conventions: r.Conventions, Levels: r.States, EnergyZero: r.Zero,
		Dissociation:   newJSONDissociation(r.Dissociation),
		Budget:         jsonBudget{Rule: BudgetRule, Contributions: append([]Contribution{}, r.Budget...)},
		ModelDominated: append([]Dominance{}, r.ModelDominated...),
		Parameters:     r.Params, MonteCarlo: r.MonteCarlo, Columns: append([]string(nil), Columns...),
		Warnings: append([]string{}, r.Warnings...), Provenance: prov}
	if t.Parameters == nil {
		t.Parameters = []string{}
	}
	if r.MonteCarlo != nil {
		t.Columns = append(t.Columns, MCColumns...)
	}
	for _, row := range r.Rows {
		f, s, m, tot := row.F, row.Sigma, row.SigmaModel, row.SigmaTotal
		jr := jsonRow{T: row.T, Q: f.Q, QSigma: s.Q, QSigmaModel: m.Q, QSigmaTotal: tot.Q,
			Cp: f.Cp, CpSigma: s.Cp, CpSigmaModel: m.Cp, CpSigmaTotal: tot.Cp,
			S: f.S, SSigma: s.S, SSigmaModel: m.S, SSigmaTotal: tot.S,
			HmH0: f.HmH0, HmH0Sigma: s.HmH0, HmH0SigmaModel: m.HmH0, HmH0SigmaTotal: tot.HmH0,
			HmH298: f.HmH298, HmH298Sigma: s.HmH298, HmH298SigmaModel: m.HmH298, HmH298SigmaTotal: tot.HmH298,
			Gef: f.Gef, GefSigma: s.Gef, GefSigmaModel: m.Gef, GefSigmaTotal: tot.Gef,
			QClosed: row.QClosed, QClosedError: row.QClosedError, ExtrapolatedShare: row.ExtrapolatedShare,
			Contributions: map[string]jsonFns{}}
		for k, c := range r.Budget {
			jr.Contributions[c.Name] = fns(row.Model[k])
		}
		if row.MC != nil {
			m := row.MC.Sigma
			jr.QSigmaMC, jr.CpSigmaMC, jr.SSigmaMC = ptr(m.Q), ptr(m.Cp), ptr(m.S)
			jr.HmH0SigmaMC, jr.HmH298SigmaMC, jr.GefSigmaMC = ptr(m.HmH0), ptr(m.HmH298), ptr(m.Gef)
			mm := fns(row.MC.Mean)
			jr.MeanMC = &mm
		}
		t.Table = append(t.Table, jr)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(t)
}

type jsonNASA struct {
	Schema           string               `json:"schema"`
	Species          string               `json:"species"`
	StandardPressure string               `json:"standard_pressure"`
	Composition      string               `json:"composition"`
	NuclearSpin      string               `json:"nuclear_spin"`
	Units            string               `json:"units"`
	Uncertainty      string               `json:"uncertainty"`
	NASA7            *NASA7               `json:"nasa7"`
	Omitted          string               `json:"omitted,omitempty"`
	Warnings         []string             `json:"warnings"`
	Caution          string               `json:"caution"`
	Provenance       constants.Provenance `json:"provenance"`
}

// WriteNASA7 writes nasa7.json: the two ranges with their coefficients, the
// largest deviation of Cp, H and S, the budget of the fitted table over each
// range, the method and the conventions; without a fit (see
// Result.NASAOmitted) nasa7 is null and omitted says why.
func (r *Result) WriteNASA7(w io.Writer, prov constants.Provenance) error {
	if r.NASA == nil && r.NASAOmitted == "" {
		return fmt.Errorf("thermo: no NASA-7 fit in the result")
	}
	c := r.Conventions
	out := jsonNASA{Schema: NASA7Schema, Species: c.Species, StandardPressure: c.PressureLabel,
		Composition: c.CompositionNote, NuclearSpin: c.NuclearSpinNote,
		Units:       "T in K; coefficients for Cp/R, H/(RT), S/R with T in K; deviations and σ in J mol-1 K-1 (Cp, S) and kJ mol-1 (H)",
		Uncertainty: fmt.Sprintf("per range: the largest σ_total of Cp of the fitted table, the temperatures where σ_total(Cp) < %g J mol-1 K-1, and those where the model part of the budget exceeds the statistical part (Cp, S or H); %s", CpSigmaLimit, BudgetRule),
		NASA7:       r.NASA, Omitted: r.NASAOmitted, Warnings: []string{}, Caution: Caution, Provenance: prov}
	if r.NASA != nil {
		out.Warnings = append(out.Warnings, r.NASA.budgetWarnings()...)
	}
	if r.FineStructure != "" {
		out.Warnings = append(out.Warnings, r.FineStructure)
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
