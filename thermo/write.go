package thermo

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
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
// them when Monte Carlo was run.
var (
	Columns = []string{"T_K", "Q", "Q_sigma", "Cp", "Cp_sigma", "S", "S_sigma",
		"H_minus_H0", "H_minus_H0_sigma", "H_minus_H298", "H_minus_H298_sigma",
		"gef", "gef_sigma", "Q_closed_form", "Q_closed_form_error"}
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
	csvComment(bw, "bandwright thermo: ideal-gas partition function and thermodynamic functions of %s", c.Species)
	csvComment(bw, "units: %s", c.Units)
	csvComment(bw, "standard pressure: %s", c.PressureLabel)
	csvComment(bw, "composition: %s", c.CompositionNote)
	csvComment(bw, "nuclear spin: %s", c.NuclearSpinNote)
	csvComment(bw, "energy zero: %s", c.EnergyZero)
	csvComment(bw, "uncertainty: %s", c.Uncertainty)
	if r.MonteCarlo != nil {
		csvComment(bw, "Monte Carlo: %d draws, seed %d; *_sigma_mc = sample standard deviation over the draws", r.MonteCarlo.Draws, r.MonteCarlo.Seed)
	}
	csvComment(bw, "closed form: %s", c.ClosedForm)
	for _, s := range r.States {
		csvComment(bw, "levels: state %s: %d levels, v %d–%d, J ≤ %d; v: %s; J: %s", s.Term, s.Levels, s.VMin, s.VMax, s.JMax, s.VTruncation, s.JTruncation)
		if s.MissingV != "" {
			csvComment(bw, "levels: state %s lacks v = %s (estimated share of Q in thermo.json)", s.State, s.MissingV)
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
		f, s := row.F, row.Sigma
		vals := []string{fmtVal(row.T), fmtVal(f.Q), fmtSigma(s.Q), fmtVal(f.Cp), fmtSigma(s.Cp), fmtVal(f.S), fmtSigma(s.S),
			fmtVal(f.HmH0), fmtSigma(s.HmH0), fmtVal(f.HmH298), fmtSigma(s.HmH298), fmtVal(f.Gef), fmtSigma(s.Gef),
			fmtVal(row.QClosed), fmtSigma(row.QClosedError)}
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
	Cp                float64  `json:"Cp"`
	CpSigma           float64  `json:"Cp_sigma"`
	S                 float64  `json:"S"`
	SSigma            float64  `json:"S_sigma"`
	HmH0              float64  `json:"H_minus_H0"`
	HmH0Sigma         float64  `json:"H_minus_H0_sigma"`
	HmH298            float64  `json:"H_minus_H298"`
	HmH298Sigma       float64  `json:"H_minus_H298_sigma"`
	Gef               float64  `json:"gef"`
	GefSigma          float64  `json:"gef_sigma"`
	QClosed           float64  `json:"Q_closed_form"`
	QClosedError      float64  `json:"Q_closed_form_error"`
	QSigmaMC          *float64 `json:"Q_sigma_mc,omitempty"`
	CpSigmaMC         *float64 `json:"Cp_sigma_mc,omitempty"`
	SSigmaMC          *float64 `json:"S_sigma_mc,omitempty"`
	HmH0SigmaMC       *float64 `json:"H_minus_H0_sigma_mc,omitempty"`
	HmH298SigmaMC     *float64 `json:"H_minus_H298_sigma_mc,omitempty"`
	GefSigmaMC        *float64 `json:"gef_sigma_mc,omitempty"`
	MeanMC            *jsonFns `json:"mean_mc,omitempty"`
	ExtrapolatedShare float64  `json:"extrapolated_share"`
	MissingShare      *float64 `json:"missing_levels_share,omitempty"`
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
	Schema      string               `json:"schema"`
	Conventions Conventions          `json:"conventions"`
	Levels      []StateLevels        `json:"levels"`
	EnergyZero  ZeroPoint            `json:"energy_zero"`
	Parameters  []string             `json:"fitted_parameters"`
	MonteCarlo  *MCInfo              `json:"monte_carlo,omitempty"`
	Columns     []string             `json:"columns"`
	Table       []jsonRow            `json:"table"`
	Warnings    []string             `json:"warnings"`
	Provenance  constants.Provenance `json:"provenance"`
}

func ptr(x float64) *float64 { return &x }

// WriteJSON writes thermo.json: the table with conventions, the levels used,
// the energy zero, warnings and provenance.
func (r *Result) WriteJSON(w io.Writer, prov constants.Provenance) error {
	if err := r.checkFinite(); err != nil {
		return err
	}
	t := jsonTable{Schema: TableSchema, Conventions: r.Conventions, Levels: r.States, EnergyZero: r.Zero,
		Parameters: r.Params, MonteCarlo: r.MonteCarlo, Columns: append([]string(nil), Columns...),
		Warnings: append([]string{}, r.Warnings...), Provenance: prov}
	if t.Parameters == nil {
		t.Parameters = []string{}
	}
	if r.MonteCarlo != nil {
		t.Columns = append(t.Columns, MCColumns...)
	}
	for _, row := range r.Rows {
		f, s := row.F, row.Sigma
		jr := jsonRow{T: row.T, Q: f.Q, QSigma: s.Q, Cp: f.Cp, CpSigma: s.Cp, S: f.S, SSigma: s.S,
			HmH0: f.HmH0, HmH0Sigma: s.HmH0, HmH298: f.HmH298, HmH298Sigma: s.HmH298, Gef: f.Gef, GefSigma: s.Gef,
			QClosed: row.QClosed, QClosedError: row.QClosedError, ExtrapolatedShare: row.ExtrapolatedShare, MissingShare: row.MissingShare}
		if row.MC != nil {
			m := row.MC.Sigma
			jr.QSigmaMC, jr.CpSigmaMC, jr.SSigmaMC = ptr(m.Q), ptr(m.Cp), ptr(m.S)
			jr.HmH0SigmaMC, jr.HmH298SigmaMC, jr.GefSigmaMC = ptr(m.HmH0), ptr(m.HmH298), ptr(m.Gef)
			mm := row.MC.Mean
			jr.MeanMC = &jsonFns{mm.Q, mm.Cp, mm.S, mm.HmH0, mm.HmH298, mm.Gef}
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
	NASA7            *NASA7               `json:"nasa7"`
	Caution          string               `json:"caution"`
	Provenance       constants.Provenance `json:"provenance"`
}

// WriteNASA7 writes nasa7.json: the two ranges with their coefficients, the
// largest deviation of Cp, H and S, the method and the conventions.
func (r *Result) WriteNASA7(w io.Writer, prov constants.Provenance) error {
	if r.NASA == nil {
		return fmt.Errorf("thermo: no NASA-7 fit in the result")
	}
	c := r.Conventions
	out := jsonNASA{Schema: NASA7Schema, Species: c.Species, StandardPressure: c.PressureLabel,
		Composition: c.CompositionNote, NuclearSpin: c.NuclearSpinNote,
		Units: "T in K; coefficients for Cp/R, H/(RT), S/R with T in K; deviations in J mol-1 K-1 (Cp, S) and kJ mol-1 (H)",
		NASA7: r.NASA, Caution: Caution, Provenance: prov}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}
