package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestReferenceTables runs the chain lines → fit → thermo from the
// Huber–Herzberg constants and compares S°(298.15 K) and Cp°(298.15 K) at 1 bar,
// natural-composition convention, thermochemistry nuclear-spin convention, with
// the reference tables. Tolerance 0.02 J mol⁻¹ K⁻¹ (the requirement; the
// reference values were recalled, and an exact level sum reproduces them to
// about 0.01).
func TestReferenceTables(t *testing.T) {
	cases := []struct {
		c     hh
		s, cp float64 // reference values, J mol⁻¹ K⁻¹; cp 0: no reference
		mNat  float64 // natural-composition molar mass, g/mol (docs/references.md)
	}{
		// S°: CODATA Key Values for Thermodynamics (Cox, Wagman & Medvedev 1989), from memory.
		// Cp°: JANAF Thermochemical Tables (Chase, 4th ed. 1998), from memory.
		{hhCO, 197.660, 29.142, 28.0101},
		{hhN2, 191.609, 29.124, 28.0134},
		{hhHCl, 186.902, 29.136, 36.461},
		{hhHF, 173.779, 0, 20.0063},
	}
	for _, tc := range cases {
		t.Run(tc.c.label, func(t *testing.T) {
			rec, cs := fitHH(t, tc.c, 0.001, 1)
			res, err := Compute(Problem{Constants: cs, Observed: rec.Observed},
				Settings{Temperatures: []float64{ReferenceTemperature}, Composition: CompositionNatural})
			if err != nil {
				t.Fatal(err)
			}
			if m := res.Conventions.MolarMass; !scalar.EqualWithinAbs(m, tc.mNat, 5e-4) {
				t.Errorf("natural molar mass %.5f g/mol, docs/references.md gives %.4f", m, tc.mNat)
			}
			r := res.Rows[0]
			t.Logf("%s: S° = %.4f (ref %.3f, Δ %+.4f), Cp° = %.4f (ref %.3f), σ(S) = %.2g, σ(Cp) = %.2g, levels %d",
				tc.c.label, r.F.S, tc.s, r.F.S-tc.s, r.F.Cp, tc.cp, r.Sigma.S, r.Sigma.Cp, res.System.NumLevels())
			if !scalar.EqualWithinAbs(r.F.S, tc.s, 0.02) {
				t.Errorf("S°(298.15 K) = %.4f J/mol/K, CODATA %.3f", r.F.S, tc.s)
			}
			if tc.cp != 0 {
				if !scalar.EqualWithinAbs(r.F.Cp, tc.cp, 0.02) {
					t.Errorf("Cp°(298.15 K) = %.4f J/mol/K, JANAF %.3f", r.F.Cp, tc.cp)
				}
				t.Logf("%s: Cp° − JANAF = %+.4f", tc.c.label, r.F.Cp-tc.cp)
			}
			// H°(298.15) − H°(298.15) is zero and gef = S at 298.15 K by definition.
			if math.Abs(r.F.HmH298) > 1e-12 || !scalar.EqualWithinAbsOrRel(r.F.Gef, r.F.S, 1e-12, 1e-12) {
				t.Errorf("at 298.15 K: H−H298 = %g, gef = %g, S = %g", r.F.HmH298, r.F.Gef, r.F.S)
			}
		})
	}
}
