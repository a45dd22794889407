package nightly

import (
	"bandwright/constants"
)

// mainDerived are the derived constants of a fit that RecordConstants keeps
// (besides every fitted parameter): the equilibrium constants a drift of the
// spectrometer's calibration shows in first.
var mainDerived = map[string]bool{"omega_e": true, "omega_e_x_e": true, "B_e": true, "alpha_e": true, "D_e": true, "r_e": true}

// RecordConstants returns the main constants of a fit's constants record for
// the history and the summary: every fitted (not fixed) model parameter, named
// as --fix names it ("B_v0[12C16O]", "Y01"), and the derived ω_e, ω_e x_e,
// B_e, α_e, D_e and r_e of every isotopologue when the record has them, named
// the same way ("B_e[13C16O]"). Calibration factors are left out (they belong to one
// file). Units: cm⁻¹, r_e in ångström, as in the record.
func RecordConstants(rec *constants.Record) []Constant {
	var out []Constant
	for _, p := range rec.Parameters {
		if p.Fixed || p.Name == "kappa" {
			continue
		}
		out = append(out, Constant{Species: p.Species, Name: p.ID(), Value: p.Value, Sigma: p.Sigma, Unit: rec.Unit})
	}
	for _, d := range rec.Derived {
		if mainDerived[d.Name] {
			out = append(out, Constant{Species: d.Species, Name: d.Name + "[" + d.Species + "]", Value: d.Value, Sigma: d.Sigma, Unit: d.Unit})
		}
	}
	return out
}
