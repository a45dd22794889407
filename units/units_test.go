package units

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/unit/constant"
)

// TestValues checks each constant against its CODATA 2018 value (from
// memory; h, c, k and N_A are exact in the SI since 2019, so the derived
// values are exact to the digits given).
func TestValues(t *testing.T) {
	for _, c := range []struct {
		name      string
		got, want float64
		tol       float64 // relative
	}{
		{"MHzPerWavenumber", MHzPerWavenumber, 29979.2458, 1e-15},
		{"SecondRadiation", SecondRadiation, 1.438776877e0, 1e-9},
		{"GasConstant", GasConstant, 8.314462618, 1e-9},
		// CODATA 2018 electron mass 9.1093837015e-31 kg (from memory) over
		// gonum's atomic mass constant m_u.
		{"ElectronMass", ElectronMass, 9.1093837015e-31 / float64(constant.AtomicMass), 1e-10},
	} {
		if !scalar.EqualWithinRel(c.got, c.want, c.tol) {
			t.Errorf("%s = %.12g, want %.12g (CODATA 2018)", c.name, c.got, c.want)
		}
	}
}
