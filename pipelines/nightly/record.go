package nightly

import (
	"math"
	"sort"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// mainDerived are the derived constants of a fit that RecordConstants keeps
// (besides every fitted parameter): the equilibrium constants a drift of the
// spectrometer's calibration shows in first.
var mainDerived = map[string]bool{"omega_e": true, "omega_e_x_e": true, "B_e": true, "alpha_e": true, "D_e": true, "r_e": true}

// RecordConstants returns the main constants of a fit's constants record for
// the history and the summary: every fitted (not fixed) model parameter, named
// as --fix names it ("B_v0[12C16O]", "Y01"), the derived ω_e, ω_e x_e, B_e,
// α_e, D_e and r_e of every isotopologue when the record has them, named the
// same way ("B_e[13C16O]"), and the band origin ν₀ = E(v′, 0) − E(v″, 0) of
// every vibrational band of the data ("nu0_1-0[12C16O]"), with σ from the
// record's covariance. Every one carries the record's ModelKey, so the
// history compares it only with results of the same model and term set.
// Calibration factors are left out (they belong to one file). Units: cm⁻¹,
// r_e in ångström, as in the record.
func RecordConstants(rec *constants.Record) []Constant {
	mk := ModelKey(rec)
	var out []Constant
	for _, p := range rec.Parameters {
		if p.Fixed || p.Name == "kappa" {
			continue
		}
		out = append(out, Constant{Species: p.Species, Name: p.ID(), Value: p.Value, Sigma: p.Sigma, Unit: rec.Unit, Model: mk})
	}
	for _, d := range rec.Derived {
		if mainDerived[d.Name] {
			out = append(out, Constant{Species: d.Species, Name: d.Name + "[" + d.Species + "]", Value: d.Value, Sigma: d.Sigma, Unit: d.Unit, Model: mk})
		}
	}
	return append(out, bandOrigins(rec, mk)...)
}

// ModelKey names the model and term set of a record: "dunham Y01,Y02,Y10" (the
// Dunham and breakdown terms, fitted or fixed) or "term-values B,D" (the
// rotational terms), sorted.
func ModelKey(rec *constants.Record) string {
	seen := map[string]bool{}
	var terms []string
	for _, p := range rec.Parameters {
		n := p.Name
		if n == "kappa" || n == "T" || seen[n] {
			continue
		}
		seen[n] = true
		terms = append(terms, n)
	}
	sort.Strings(terms)
	return rec.Model + " " + strings.Join(terms, ",")
}

// bandOrigins returns the band origins of the record's vibrational bands,
// ν₀ = E(v′, J=0) − E(v″, J=0) of the model, σ = √(gᵀCg) over its fitted
// parameters.
func bandOrigins(rec *constants.Record, mk string) []Constant {
	c, err := rec.Constants()
	if err != nil {
		return nil
	}
	type band struct {
		sp     string
		vu, vl int
	}
	seen := map[band]bool{}
	var out []Constant
	gu, gl := make([]float64, len(c.Values)), make([]float64, len(c.Values))
	for _, b := range rec.Bands {
		k := band{b.Species, b.VUp, b.VLo}
		sp := model.SpeciesIndex(c.Model, b.Species)
		if b.VUp == b.VLo || seen[k] || sp < 0 {
			continue
		}
		seen[k] = true
		nu := c.Model.Energy(sp, b.VUp, 0, c.Values, gu) - c.Model.Energy(sp, b.VLo, 0, c.Values, gl)
		g := make([]float64, len(c.Free))
		for i, j := range c.Free {
			g[i] = gu[j] - gl[j]
		}
		var v float64
		for i := range g {
			for j := range g {
				v += g[i] * c.Cov.At(i, j) * g[j]
			}
		}
		if math.IsNaN(nu) {
			continue
		}
		out = append(out, Constant{Species: b.Species, Name: "nu0_" + linelist.BandLabel(b.VUp, b.VLo) + "[" + b.Species + "]",
			Value: nu, Sigma: math.Sqrt(math.Max(0, v)), Unit: "cm-1", Model: mk})
	}
	return out
}
