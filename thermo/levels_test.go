package thermo

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/linelist"
	"bandwright/fit/species"
	"bandwright/fit/states"
	"bandwright/internal/failure"
	"bandwright/units"
)

// coBands returns P and R lines of CO for the bands (v′, v″), J″ ≤ jmax.
func coBands(bands [][2]int, jmax int) []linelist.Line {
	var ls []linelist.Line
	row := 1
	for _, b := range bands {
		for jl := 0; jl <= jmax; jl++ {
			for _, ju := range []int{jl + 1, jl - 1} {
				if ju < 0 {
					continue
				}
				row++
				ls = append(ls, linelist.Line{File: "bands", Row: row, Species: "12C16O", VUp: b[0], JUp: ju, VLo: b[1], JLo: jl, Unc: 0.001, Unit: linelist.Wavenumber})
			}
		}
	}
	return ls
}

// TestTermValuesModelMissingLevels: a term-values model of v = 0, 1, 2 (bands
// 1-0, 2-1) lacks v ≥ 3. They enter the sum extrapolated from the record's
// levels (ω_e, ω_e x_e from the three band origins, B_v linear in v), so Q
// comes within 0.1 % of the exact Dunham sum of the same constants at 3000 K,
// and the output names them.
func TestTermValuesModelMissingLevels(t *testing.T) {
	lines := coBands([][2]int{{1, 0}, {2, 1}}, 30)
	rec, c := termValuesFit(t, hhCO, lines, []string{"B", "D"}, 0)
	temps := []float64{ReferenceTemperature, 1000, 3000}
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	st := res.States[0]
	if !strings.HasPrefix(st.ExtrapolatedV, "3–") || st.VMax < 10 {
		t.Fatalf("extrapolated levels %q, v_max %d", st.ExtrapolatedV, st.VMax)
	}
	drec, dc := fitHH(t, hhCO, 0, 1)
	dres, err := Compute(Problem{Constants: dc, Observed: drec.Observed}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.Contains(w, "lacks v = 3–")
	}
	if !found {
		t.Errorf("no warning names the extrapolated levels: %q", res.Warnings)
	}
	for i, r := range res.Rows {
		t.Logf("%g K: Q %.8g, Dunham %.8g, share outside data %.3g", r.T, r.F.Q, dres.Rows[i].F.Q, r.ExtrapolatedShare)
		if !scalar.EqualWithinRel(r.F.Q, dres.Rows[i].F.Q, 1e-3) {
			t.Errorf("%g K: Q with the extrapolated levels %.8g, Dunham sum %.8g", r.T, r.F.Q, dres.Rows[i].F.Q)
		}
	}
}

// TestExtrapolationShare: a Dunham fit to data with v ≤ 3, J ≤ 21 extrapolates
// in the sum; the reported share equals the population of the levels beyond the
// data, and a warning names it.
func TestExtrapolationShare(t *testing.T) {
	c0 := hhCO
	c0.vmax, c0.jmax = 3, 20
	rec, c := fitHH(t, c0, 0.001, 12)
	temps := []float64{100, ReferenceTemperature, 1000}
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	vmax, jmax := map[int]int{}, -1
	for _, o := range rec.Observed {
		vmax[o.V] = o.JMax
		jmax = max(jmax, o.JMax)
	}
	for _, r := range res.Rows {
		want := 0.0
		for _, p := range res.System.Populations(r.T) {
			jm, ok := vmax[p.V]
			if !ok || p.J > float64(jm) {
				want += p.Fraction
			}
		}
		if !scalar.EqualWithinAbsOrRel(r.ExtrapolatedShare, want, 1e-15, 1e-9) {
			t.Errorf("%g K: extrapolated share %.6g, populations give %.6g", r.T, r.ExtrapolatedShare, want)
		}
	}
	if res.Rows[0].ExtrapolatedShare > 1e-5 || res.Rows[2].ExtrapolatedShare < 0.1 {
		t.Errorf("shares %g (100 K), %g (1000 K)", res.Rows[0].ExtrapolatedShare, res.Rows[2].ExtrapolatedShare)
	}
	if !strings.Contains(strings.Join(res.Warnings, "\n"), "extrapolation") {
		t.Errorf("no extrapolation warning: %q", res.Warnings)
	}
}

// TestExcitedStates: a ³Σ⁺ state that is the ground manifold shifted by T_e
// multiplies Q by 1 + (g_A/g_X)·e^(−c₂T_e/T), g_A/g_X = 3; with its own constants
// record (here a copy of the ground-state record) the result is the same.
func TestExcitedStates(t *testing.T) {
	rec, c := fitHH(t, hhCO, 0.001, 13)
	_, cCopy := fitHH(t, hhCO, 0.001, 13)
	temps := []float64{300, 1500, 4000}
	p := Problem{Constants: c, Observed: rec.Observed, DissociationEnergy: 60000}
	ground, err := Compute(p, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	const te = 2000.0
	for _, own := range []bool{false, true} {
		q := p
		// products_energy = T_e: the state's asymptote moves with it, so its
		// levels are exactly the ground levels shifted.
		a := State{Label: "a", TermEnergy: te, Multiplicity: 3, Symmetry: species.StateSymmetry{Reflection: '+'}, ProductsEnergy: te}
		if own {
			a.Constants = cCopy
			a.Observed = rec.Observed
		}
		q.States = []State{{Label: "X", Multiplicity: 1}, a}
		res, err := Compute(q, Settings{Temperatures: temps})
		if err != nil {
			t.Fatal(err)
		}
		for i, r := range res.Rows {
			want := ground.Rows[i].F.Q * (1 + 3*math.Exp(-units.SecondRadiation*te/r.T))
			if own {
				// Its own Dunham manifold is not bounded by the ground state's D0:
				// compare below the levels where that matters.
				if r.T > 2000 {
					continue
				}
			}
			if !scalar.EqualWithinRel(r.F.Q, want, 1e-9) {
				t.Errorf("own constants %v, %g K: Q = %.12g, want %.12g", own, r.T, r.F.Q, want)
			}
		}
	}
}

// TestOxygenStates: 16O2 X³Σg⁻ takes odd N only (spin-0 bosons) and g_e = 3; the
// energy zero is N = 1. S°(298.15 K) then comes within 0.02 J mol⁻¹ K⁻¹ of the
// CODATA key value 205.152 J mol⁻¹ K⁻¹ (Cox, Wagman & Medvedev 1989, from
// memory) and Cp° within 0.02 of the JANAF 29.376 J mol⁻¹ K⁻¹ (Chase 1998, from
// memory), although the spin splitting of the N levels (about 2 cm⁻¹) is
// neglected. Constants: Huber & Herzberg (1979), from memory.
func TestOxygenStates(t *testing.T) {
	hhO2 := hh{label: "16O16O", we: 1580.193, wexe: 11.981, weye: 0.04747, be: 1.44563, alpha: 0.0159305, de: 4.839e-6, homonuclear: true, vmax: 3, jmax: 31}
	rec, c := fitHH(t, hhO2, 0.001, 14)
	file, err := states.Read(strings.NewReader(`
species = "16O2"
dissociation_energy = 41260.0
[[state]]
label = "X"
term_energy = 0.0
spin_multiplicity = 3
lambda = 0
symmetry = "g-"
`), "o2.toml")
	if err != nil {
		t.Fatal(err)
	}
	if err := file.Check(mustParse(t, "16O16O")); err != nil {
		t.Fatal(err)
	}
	s := file.States[0]
	p := Problem{Constants: c, Observed: rec.Observed, DissociationEnergy: file.DissociationEnergy,
		States: []State{{Label: s.Label, Multiplicity: s.Multiplicity, Lambda: s.Lambda, Symmetry: s.Symmetry}}}
	res, err := Compute(p, Settings{Temperatures: []float64{ReferenceTemperature}, Composition: CompositionNatural})
	if err != nil {
		t.Fatal(err)
	}
	if res.Zero.N != 1 || res.Zero.LevelAboveV0J0 < 2.8 || res.Zero.LevelAboveV0J0 > 2.9 {
		t.Errorf("energy zero at N=%d, %.4g cm-1 above N=0 (want N=1, 2B ≈ 2.88)", res.Zero.N, res.Zero.LevelAboveV0J0)
	}
	for _, pop := range res.System.Populations(ReferenceTemperature) {
		if pop.N%2 == 0 {
			t.Fatalf("even N = %d in the sum of 16O2 X³Σg⁻", pop.N)
		}
	}
	sv, cp := res.Rows[0].F.S, res.Rows[0].F.Cp
	t.Logf("16O2: S°(298.15 K) = %.4f J/mol/K (CODATA 205.152), Cp° = %.4f (JANAF 29.376)", sv, cp)
	if !scalar.EqualWithinAbs(sv, 205.152, 0.02) {
		t.Errorf("S°(298.15 K) of O2 = %.4f, CODATA 205.152", sv)
	}
	if !scalar.EqualWithinAbs(cp, 29.376, 0.02) {
		t.Errorf("Cp°(298.15 K) of O2 = %.4f, JANAF 29.376", cp)
	}
	if !strings.Contains(res.States[0].VTruncation, "dissociation energy") && !strings.Contains(res.States[0].JTruncation, "dissociation energy") {
		t.Errorf("truncation does not name D0: %q / %q", res.States[0].VTruncation, res.States[0].JTruncation)
	}
}

// TestDissociationLimit: with D0 every level lies below D0 above the zero;
// without it every level lies below the estimated D0, which is named, and
// which lies below the top of the model's G(v) (Birge–Sponer corrected
// downwards; the top of HCl's cubic G(v) is far above its D0).
func TestDissociationLimit(t *testing.T) {
	rec, c := fitHH(t, hhHCl, 0.001, 15)
	const d0 = 35748.2 // HCl D0, cm-1 (Huber & Herzberg 1979, from memory); only its size matters here
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed, DissociationEnergy: d0}, Settings{Temperatures: []float64{3000}})
	if err != nil {
		t.Fatal(err)
	}
	if e := res.States[0].EMax; e >= d0 {
		t.Errorf("highest level %.1f cm-1 above the zero, D0 = %.1f", e, d0)
	}
	free, err := Compute(Problem{Constants: c, Observed: rec.Observed}, Settings{Temperatures: []float64{3000}})
	if err != nil {
		t.Fatal(err)
	}
	est := free.Dissociation
	if est.Given || !(est.D0 > 0.5*d0 && est.D0 < 1.5*d0) || !(est.Sigma > 0) || !strings.Contains(est.Note, "Birge–Sponer") {
		t.Errorf("estimated limit %+v", est)
	}
	if e := free.States[0].EMax; e >= est.D0 {
		t.Errorf("highest level %.1f cm-1 above the zero, estimated D0 = %.1f", e, est.D0)
	}
	if !strings.Contains(free.States[0].VTruncation+free.States[0].JTruncation, "estimated dissociation energy") {
		t.Errorf("truncation does not name the estimate: %q / %q", free.States[0].VTruncation, free.States[0].JTruncation)
	}
	// The enumeration runs to the budget's highest limit (D0 + σ); the
	// vibrational ladder of the nominal sum ends at the nominal estimate, and
	// says so with the first v it leaves out.
	if s := free.States[0]; !strings.Contains(s.VTruncation, fmt.Sprintf("estimated dissociation energy D0 = %.6g cm-1 (Birge–Sponer): no level of v ≥ %d lies below it", est.D0, s.VMax+1)) {
		t.Errorf("the vibrational ladder of v 0–%d ends at the estimated D0 = %.6g, but its note says %q", s.VMax, est.D0, s.VTruncation)
	}
	if !strings.Contains(est.Note, fmt.Sprintf("D0 = 0.86 × D0(LBS) = %.6g cm-1", est.D0)) {
		t.Errorf("the note does not give the estimate it uses (%.6g): %q", est.D0, est.Note)
	}
}

func TestSettingsErrors(t *testing.T) {
	_, c := fitHH(t, hhHF, 0.001, 16)
	for _, s := range []Settings{
		{},
		{Temperatures: []float64{0}},
		{Temperatures: []float64{-5}},
		{Temperatures: []float64{math.NaN()}},
		{Temperatures: []float64{300}, Pressure: -1},
		{Temperatures: []float64{300}, Composition: "nat"},
		{Temperatures: []float64{300}, NuclearSpin: "full"},
		{Temperatures: []float64{300}, MonteCarlo: 1},
		{Temperatures: []float64{300}, NASA: NASARanges{Low: 1000, Break: 500}},
	} {
		if _, err := Compute(Problem{Constants: c}, s); err == nil || !strings.HasPrefix(err.Error(), "thermo: ") {
			t.Errorf("%+v: error %v", s, err)
		}
	}
	if _, err := Compute(Problem{Constants: c, Species: "12C16O"}, Settings{Temperatures: []float64{300}}); err == nil {
		t.Error("species not in the record accepted")
	}
}

// TestTooManyLevels: constants whose levels never turn over (G(v) curving up,
// Y02 > 0), a dissociation energy far above them and a high temperature
// would need millions of levels: the stage refuses with ErrCannotCompute,
// which the command line maps to exit code 2. Without the dissociation
// energy the estimated limit bounds the sum (never "no ceiling").
func TestTooManyLevels(t *testing.T) {
	odd := hh{label: "12C16O", we: 100, wexe: -0.01, be: 0.05, alpha: 0.0001, de: -1e-12, vmax: 3, jmax: 20}
	_, c := fitHH(t, odd, 0, 1)
	if res, err := Compute(Problem{Constants: c}, Settings{Temperatures: []float64{MaxTemperature}}); err != nil || math.IsInf(res.Dissociation.D0, 0) {
		t.Fatalf("without D0: %v", err)
	}
	_, err := Compute(Problem{Constants: c, DissociationEnergy: 1e7}, Settings{Temperatures: []float64{MaxTemperature}})
	if !errors.Is(err, ErrCannotCompute) || failure.KindOf(err) != failure.CannotCompute || !strings.HasPrefix(err.Error(), "thermo: ") {
		t.Fatalf("error %v", err)
	}
	t.Log(err)
}

// TestUnconnectedLevelLeftOut: pure-rotation lines in v = 0 and v = 1 give no
// energy of v = 1 above v = 0 (the fit holds T_v1 at 0 and marks it). The sum
// leaves the record's v = 1 out with a warning instead of placing it at the
// energy of v = 0, so Q equals that of the v = 0 lines alone. (Both records
// have one placed vibrational level, so ω_e comes from the electronic-states
// file — 2169.81 cm⁻¹, Huber & Herzberg 1979, from memory — and the levels
// v ≥ 1 are extrapolated from it the same way in both.)
func TestUnconnectedLevelLeftOut(t *testing.T) {
	rotation := func(vs ...int) []linelist.Line {
		var ls []linelist.Line
		for _, v := range vs {
			for jl := 0; jl <= 30; jl++ {
				ls = append(ls, linelist.Line{File: "rot", Row: len(ls) + 2, Species: "12C16O", VUp: v, JUp: jl + 1, VLo: v, JLo: jl, Unc: 0.001, Unit: linelist.Wavenumber})
			}
		}
		return ls
	}
	temps := []float64{ReferenceTemperature, 1000}
	x := State{Label: "X", Multiplicity: 1, Symmetry: species.StateSymmetry{Reflection: '+'}, OmegaE: hhCO.we}
	rec, c := termValuesFit(t, hhCO, rotation(0, 1), []string{"B", "D"}, 0)
	if !c.Unconnected(0, 1) {
		t.Fatal("the record does not mark T_v1 as held for want of a connecting line")
	}
	res, err := Compute(Problem{Constants: c, Observed: rec.Observed, States: []State{x}}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	rec0, c0 := termValuesFit(t, hhCO, rotation(0), []string{"B", "D"}, 0)
	res0, err := Compute(Problem{Constants: c0, Observed: rec0.Observed, States: []State{x}}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range res.Rows {
		if !scalar.EqualWithinRel(r.F.Q, res0.Rows[i].F.Q, 1e-12) {
			t.Errorf("%g K: Q %.12g, with the v = 0 lines alone %.12g", r.T, r.F.Q, res0.Rows[i].F.Q)
		}
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.Contains(w, "12C16O: v=1 left out of the sum: no line connects it to the lowest level")
	}
	if !found {
		t.Errorf("no warning says v=1 is left out: %q", res.Warnings)
	}
}
