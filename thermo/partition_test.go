package thermo

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/units"
)

// rigidRotor fits a term-values model with the single term B to the pure-rotation
// lines ν = 2B(J+1), J = 0…30, of label (exact positions), so that the model is
// a rigid rotor with constant B.
func rigidRotor(t *testing.T, label string, b float64) (*constants.Record, *constants.Set) {
	t.Helper()
	var lines []linelist.Line
	for j := 0; j <= 30; j++ {
		lines = append(lines, linelist.Line{File: "rr", Row: j + 2, Species: label, VUp: 0, JUp: j + 1, VLo: 0, JLo: j,
			Position: 2 * b * float64(j+1), Unc: 1e-6, Unit: linelist.Wavenumber})
	}
	return fitRecord(t, lines, model.KindTermValues, []string{"B"})
}

// TestRigidRotor: for a rigid rotor Q equals the exact sum Σ(2J+1)e^(−c₂BJ(J+1)/T)
// (computed here independently), and above about 50 K the closed form kT/(σhcB)
// with Mulholland's series (Mulholland 1928, docs/references.md) meets it to 1e-6.
// B = 1.93128 cm⁻¹ (CO, Huber–Herzberg Be, from memory) and, for σ = 2 with the
// nuclear-spin weights of 14N2, B = 1.99824 cm⁻¹ (N2, same source).
func TestRigidRotor(t *testing.T) {
	for _, tc := range []struct {
		label string
		b     float64
		even  float64 // thermochemistry weights
		odd   float64
	}{
		{"12C16O", 1.93128087, 1, 1},
		{"14N14N", 1.99824, 6.0 / 9, 3.0 / 9},
	} {
		_, c := rigidRotor(t, tc.label, tc.b)
		temps := []float64{5, 10, 20, 50, 51, 100, 298.15, 1000, 3000}
		// A rigid rotor: ω_e = 10⁵ cm⁻¹ freezes the vibration out at every
		// temperature of the test (e^(−c₂ω_e/T) < 10⁻²⁰ at 3000 K); without
		// an ω_e the record, which has one vibrational level, is refused above
		// a few K.
		x := State{Label: "X", Multiplicity: 1, Symmetry: defaultStates(mustParse(t, tc.label))[0].Symmetry, OmegaE: 1e5}
		res, err := Compute(Problem{Constants: c, States: []State{x}}, Settings{Temperatures: temps})
		if err != nil {
			t.Fatal(err)
		}
		b := c.Values[1] // T_v0 (fixed), B_v0
		if !scalar.EqualWithinRel(b, tc.b, 1e-9) {
			t.Fatalf("%s: fitted B = %.12g, want %.12g", tc.label, b, tc.b)
		}
		for _, r := range res.Rows {
			sum := 0.0
			for j := 0; j < 20000; j++ {
				w := tc.even
				if j%2 == 1 {
					w = tc.odd
				}
				x := float64(j) * float64(j+1)
				sum += w * float64(2*j+1) * math.Exp(-units.SecondRadiation*b*x/r.T)
			}
			if !scalar.EqualWithinRel(r.F.Q, sum, 1e-12) {
				t.Errorf("%s %g K: Q = %.15g, exact sum %.15g", tc.label, r.T, r.F.Q, sum)
			}
			if r.T >= 50 && math.Abs(r.QClosedError) > 1e-6 {
				t.Errorf("%s %g K: closed form off by %.3g (want ≤ 1e-6 above 50 K)", tc.label, r.T, r.QClosedError)
			}
			if r.T <= 10 && math.Abs(r.QClosedError) < 1e-5 {
				t.Errorf("%s %g K: closed form error %.3g; the integral form should visibly fail at low T", tc.label, r.T, r.QClosedError)
			}
		}
	}
}

// TestPopulatedLevels (common practice): near room temperature a typical
// diatomic molecule has from a few to many dozen rotational levels appreciably
// populated. At 298.15 K CO must have between 10 and 60 levels each holding more
// than 0.1 % of the molecules, H2 fewer than 10.
func TestPopulatedLevels(t *testing.T) {
	// H2 X¹Σg⁺: Huber & Herzberg (1979), from memory.
	hhH2 := hh{label: "1H1H", we: 4401.21, wexe: 121.33, be: 60.853, alpha: 3.062, de: 0.0471, homonuclear: true, vmax: 2, jmax: 8}
	for _, tc := range []struct {
		c        hh
		min, max int
	}{{hhCO, 10, 60}, {hhH2, 1, 9}} {
		rec, c := fitHH(t, tc.c, 0.001, 2)
		res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: []float64{ReferenceTemperature}})
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		total := 0.0
		for _, p := range res.System.Populations(ReferenceTemperature) {
			total += p.Fraction
			if p.Fraction > 0.001 {
				n++
			}
		}
		t.Logf("%s: %d levels above 0.1 %% at 298.15 K", tc.c.label, n)
		if n < tc.min || n > tc.max {
			t.Errorf("%s: %d levels hold more than 0.1 %% at 298.15 K, want %d…%d", tc.c.label, n, tc.min, tc.max)
		}
		if !scalar.EqualWithinAbs(total, 1, 1e-12) {
			t.Errorf("%s: populations add up to %.15g", tc.c.label, total)
		}
	}
}

// TestConventions checks the relations between the conventions: 1 atm lowers
// S° by R ln(101325/100000); the line-intensity convention multiplies Q by
// (2I_A+1)(2I_B+1) and adds R ln of it to S°, leaving Cp° and H° alone; the
// natural composition changes only the translational entropy, by (3/2)R ln(M_nat/M).
func TestConventions(t *testing.T) {
	rec, c := fitHH(t, hhHCl, 0.001, 3)
	temps := []float64{50, 298.15, 1500}
	p := Problem{Constants: c, Observed: rec.Observed}
	base, err := Compute(p, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	atm, _ := Compute(p, Settings{Temperatures: temps, Pressure: PressureAtm})
	li, _ := Compute(p, Settings{Temperatures: temps, NuclearSpin: SpinLineIntensity})
	nat, _ := Compute(p, Settings{Temperatures: temps, Composition: CompositionNatural})
	R := units.GasConstant
	mIso, mNat := base.Conventions.MolarMass, nat.Conventions.MolarMass
	for i := range temps {
		b, a, l, n := base.Rows[i], atm.Rows[i], li.Rows[i], nat.Rows[i]
		if !scalar.EqualWithinAbs(b.F.S-a.F.S, R*math.Log(PressureAtm/PressureBar), 1e-10) {
			t.Errorf("%g K: S(1 bar) − S(1 atm) = %.12g", b.T, b.F.S-a.F.S)
		}
		if !scalar.EqualWithinRel(l.F.Q, 8*b.F.Q, 1e-13) || !scalar.EqualWithinAbs(l.F.S-b.F.S, R*math.Log(8), 1e-10) ||
			!scalar.EqualWithinAbs(l.F.Cp, b.F.Cp, 1e-10) || !scalar.EqualWithinAbs(l.F.HmH0, b.F.HmH0, 1e-12) {
			t.Errorf("%g K: line-intensity convention: Q ratio %.15g, ΔS %.12g", b.T, l.F.Q/b.F.Q, l.F.S-b.F.S)
		}
		if !scalar.EqualWithinAbs(n.F.S-b.F.S, 1.5*R*math.Log(mNat/mIso), 1e-10) || !scalar.EqualWithinAbs(n.F.Cp, b.F.Cp, 1e-12) {
			t.Errorf("%g K: natural composition ΔS %.12g", b.T, n.F.S-b.F.S)
		}
		// Closed form scales with the convention too.
		if !scalar.EqualWithinAbs(l.QClosedError, b.QClosedError, 1e-12) {
			t.Errorf("%g K: closed-form error depends on the convention: %g vs %g", b.T, l.QClosedError, b.QClosedError)
		}
	}
}

// TestHighTemperatureFinite: nothing overflows at the highest temperatures,
// and the functions behave: Cp° stays within [5/2 R, 5/2 R + several R].
func TestHighTemperatureFinite(t *testing.T) {
	rec, c := fitHH(t, hhHF, 0.001, 4)
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: []float64{1, 2, 10, 6000, 20000, MaxTemperature}, MonteCarlo: 20, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range res.Rows {
		if r.F.Cp < 2.5*units.GasConstant-1e-9 || r.F.Cp > 2.5*units.GasConstant+6*units.GasConstant {
			t.Errorf("%g K: Cp = %g", r.T, r.F.Cp)
		}
	}
	// At 1 K only the lowest level of HF is populated: Q = 1, Cp = 5/2 R.
	if r := res.Rows[0]; !scalar.EqualWithinAbs(r.F.Q, 1, 1e-12) || !scalar.EqualWithinAbs(r.F.Cp, 2.5*units.GasConstant, 1e-9) {
		t.Errorf("1 K: Q = %.15g, Cp = %.12g", r.F.Q, r.F.Cp)
	}
}
