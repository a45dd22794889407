package constants

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/linelist"
	"bandwright/units"
)

// TestShowEnergy: constants in MHz get the prefix microwave spectroscopists
// quote them with (common practice): B of 12C16O in MHz, D in kHz, H in Hz
// (ground-state constants 57 635.968 MHz, 183.5 kHz, 0.17 Hz, from memory).
func TestShowEnergy(t *testing.T) {
	const mhz = units.MHzPerWavenumber
	for _, tc := range []struct {
		cm, sigma float64
		u         linelist.Unit
		value     float64
		unit      string
	}{
		{57635.96828 / mhz, 2e-4 / mhz, linelist.MHz, 57635.96828, "MHz"},
		{0.1835055 / mhz, 1e-6 / mhz, linelist.MHz, 183.5055, "kHz"},
		{1.728e-7 / mhz, 1e-9 / mhz, linelist.MHz, 0.1728, "Hz"},
		{-0.1835055 / mhz, 1e-6 / mhz, linelist.MHz, -183.5055, "kHz"},
		{57635.96828 / mhz, 2e-4 / mhz, linelist.GHz, 57.63596828, "GHz"},
		{0.1835055 / mhz, 1e-6 / mhz, linelist.GHz, 183.5055, "kHz"},
		{1.92252933, 1e-8, linelist.Wavenumber, 1.92252933, "cm-1"},
		{0, 0, linelist.MHz, 0, "MHz"},
		{0, 2e-3 / mhz, linelist.MHz, 0, "kHz"},
	} {
		sh := ShowEnergy(tc.cm, tc.sigma, tc.u)
		if sh.Unit != tc.unit || !scalar.EqualWithinAbsOrRel(sh.Value, tc.value, 1e-12, 1e-12) {
			t.Errorf("ShowEnergy(%g cm-1, %v) = %v %s, want %v %s", tc.cm, tc.u, sh.Value, sh.Unit, tc.value, tc.unit)
		}
		if f, ok := FrequencyFactor(sh.Unit); ok && !scalar.EqualWithinAbsOrRel(sh.Value*f, tc.cm, 1e-300, 1e-12) {
			t.Errorf("%v %s back to cm-1: %v, want %v", sh.Value, sh.Unit, sh.Value*f, tc.cm)
		}
	}
	d := ShowDerived(Derived{Name: "U01", Value: 13.7, Sigma: 1e-4, Unit: "cm-1 u^1"}, linelist.MHz)
	if d.Unit != "MHz u^1" || !scalar.EqualWithinAbsOrRel(d.Value, 13.7*mhz, 0, 1e-12) {
		t.Errorf("U01 shown as %v %s", d.Value, d.Unit)
	}
	if d := ShowDerived(Derived{Name: "r_e", Value: 1.128, Unit: "angstrom"}, linelist.MHz); d.Unit != "angstrom" || d.Value != 1.128 {
		t.Errorf("r_e shown as %v %s", d.Value, d.Unit)
	}
}
