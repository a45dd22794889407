package fit

import (
	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

func intp(i int) *int { return &i }

// NewRecord turns a fit result into a record (provenance is the caller's).
func NewRecord(r *Result) *constants.Record {
	rec := &constants.Record{
		Schema: constants.Schema, Model: r.Model.Kind(), Unit: linelist.Wavenumber.String(), DisplayUnit: r.Unit.String(),
		Species: r.Model.Species(), Stats: r.Stats, Status: r.Status.String(),
		Bands: r.Bands, Observed: r.Observed, Derived: r.Derived, Rounding: r.Rounding,
		Warnings:             append([]string{}, r.Warnings...),
		CovarianceConvention: constants.CovarianceConvention,
		States:               constants.RecordStates(r.Model),
		Convergence:          r.Convergence,
	}
	if rec.Model == model.KindDunham {
		rec.ReferenceSpecies = rec.Species[0]
	}
	unconnected := map[int]bool{}
	for _, j := range r.Unconnected {
		unconnected[j] = true
	}
	for j, p := range r.Params {
		rp := constants.Param{Name: p.Name, Species: p.Species, Element: p.Element, State: p.State, Value: p.Value, Sigma: p.Sigma, Fixed: p.Fixed, Unconnected: unconnected[j]}
		if p.V >= 0 {
			rp.V = intp(p.V)
		}
		if p.K >= 0 {
			rp.K = intp(p.K)
		}
		if p.L >= 0 {
			rp.L = intp(p.L)
		}
		rec.Parameters = append(rec.Parameters, rp)
	}
	// Covariance rows follow Free then κ; Parameters lists model parameters in
	// model order (Free is increasing), then κ — the same order.
	for _, c := range r.Calib {
		if !c.Fixed {
			rec.Parameters = append(rec.Parameters, constants.Param{Name: "kappa", File: c.File, Value: c.Kappa, Sigma: c.Sigma})
		} else {
			rec.Parameters = append(rec.Parameters, constants.Param{Name: "kappa", File: c.File, Value: 0, Fixed: true})
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
