package thermo

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// cnConstants: 12C14N X²Σ⁺, a record that resolves its spin-rotation
// structure (Huber & Herzberg 1979, from memory; as in
// TestSigmaStatesAgainstClosedForms), D0 = 62 000 cm⁻¹ (7.7 eV, from memory).
var cnConstants = dunhamSigma{label: "12C14N", st: states.State{Label: "X", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}},
	y10: 2068.59, y20: -13.087, y01: 1.8997831, y11: -0.0173714, d: 6.4e-6, gamma: 7.25e-3, d0: 62000}

// cnExcited: A²Π (T_e 9245.3) and B²Σ⁺ (T_e 25752.0 cm⁻¹) of CN, Huber &
// Herzberg 1979, from memory, as states without constants of their own.
func cnExcited() []State {
	return []State{
		{Label: "X", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}},
		{Label: "A", TermEnergy: 9245.3, Multiplicity: 2, Lambda: 1},
		{Label: "B", TermEnergy: 25752.0, Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}},
	}
}

// checkCovered fails where the truth lies farther than k·σ_total from a row
// of res (Cp, S, H°−H°(0), gef), or where a truth row is missing.
func checkCovered(t *testing.T, name string, res, truth *Result, k float64) {
	t.Helper()
	for i, r := range res.Rows {
		tr := truth.Rows[i]
		for f := 1; f < 6; f++ {
			d := math.Abs(tr.F.at(f) - r.F.at(f))
			if !(d <= k*r.SigmaTotal.at(f)) {
				t.Errorf("%s %g K: %s = %.5g ± %.3g (total), truth %.5g (Δ %.3g σ_total)", name, r.T, FunctionNames[f], r.F.at(f), r.SigmaTotal.at(f), tr.F.at(f), d/r.SigmaTotal.at(f))
			}
		}
	}
}

// TestCyanogenMissingA: CN with its X²Σ⁺ state alone (no electronic-states
// file, the record's state; or a file giving X alone) gets the electronic_states entry for A²Π and
// B²Σ⁺; the truth, the same record with A and B given as states (a second
// Compute), lies within 2.5 σ_total at 298.15, 1000 and 3000 K. At 3000 K
// A adds about +3.8 J mol⁻¹ K⁻¹ to Cp° and +1.1 to S° (our estimate from a
// two-level model: g_A/g_X = 2, x = c₂T_e/T ≈ 4.4); at 298.15 K the entry is
// negligible. With A and B given the entry and the warning are gone.
func TestCyanogenMissingA(t *testing.T) {
	set := cnConstants.set(t)
	temps := []float64{ReferenceTemperature, 1000, 3000}
	res, err := Compute(Problem{Constants: set, DissociationEnergy: cnConstants.d0}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	truth, err := Compute(Problem{Constants: set, DissociationEnergy: cnConstants.d0, States: cnExcited()}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	k := indexOfContribution(res, ContribElectronicStates)
	if k < 0 {
		t.Fatalf("no %s entry for CN X alone: %v", ContribElectronicStates, res.Budget)
	}
	if w := res.Budget[k].What; !strings.Contains(w, "A²Π") || !strings.Contains(w, "B²Σ⁺") {
		t.Errorf("entry names %q, want A²Π and B²Σ⁺", w)
	}
	for i, r := range res.Rows {
		tr := truth.Rows[i]
		t.Logf("CN %g K: Cp° %.4f σ_total %.3g (entry %.3g) truth %.4f (Δ %+.3f); S° %.4f σ_total %.3g truth %.4f (Δ %+.3f)",
			r.T, r.F.Cp, r.SigmaTotal.Cp, r.Model[k].Cp, tr.F.Cp, tr.F.Cp-r.F.Cp, r.F.S, r.SigmaTotal.S, tr.F.S, tr.F.S-r.F.S)
	}
	checkCovered(t, "CN X alone", res, truth, 2.5)
	if s := res.Rows[0].SigmaTotal.Cp; !(s < 1e-3) {
		t.Errorf("σ_total(Cp, 298.15 K) = %.3g: A²Π does not matter there", s)
	}
	// Two-level estimate of A at 3000 K, B (x ≈ 12.4) adding little.
	hi := res.Rows[2]
	if d := truth.Rows[2].F.Cp - hi.F.Cp; d < 3.3 || d > 4.4 {
		t.Errorf("ΔCp(3000 K) = %.3f, two-level estimate 3.8", d)
	}
	if d := truth.Rows[2].F.S - hi.F.S; d < 0.9 || d > 1.4 {
		t.Errorf("ΔS(3000 K) = %.3f, two-level estimate 1.1", d)
	}
	w := strings.Join(res.Warnings, "\n")
	for _, want := range []string{"electronic states missing from the sum: A²Π at T_e = 9245.3 cm-1, B²Σ⁺ at T_e = 25752 cm-1", "at 3000 K they would add about +3.", "term_energy, spin_multiplicity, lambda"} {
		if !strings.Contains(w, want) {
			t.Errorf("warnings lack %q:\n%s", want, w)
		}
	}
	var js bytes.Buffer
	if err := res.WriteJSON(&js, constants.Provenance{}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(js.String(), `"`+ContribElectronicStates+`"`) {
		t.Errorf("thermo.json does not name the %s entry", ContribElectronicStates)
	}
	// The same with an electronic-states file that gives X alone.
	withX, err := Compute(Problem{Constants: set, DissociationEnergy: cnConstants.d0, States: cnExcited()[:1]}, Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	if kx := indexOfContribution(withX, ContribElectronicStates); kx < 0 || withX.Rows[2].Model[kx].Cp != hi.Model[k].Cp {
		t.Errorf("CN with a states file giving X alone: entry %d, want the one without a file", kx)
	}
	if indexOfContribution(truth, ContribElectronicStates) >= 0 || strings.Contains(strings.Join(truth.Warnings, "\n"), "electronic states missing") {
		t.Errorf("CN with A and B given: entry or warning for missing states: %v\n%s", truth.Budget, strings.Join(truth.Warnings, "\n"))
	}
}

// TestOxygenMissingSinglets: 16O2 with X³Σg⁻ alone (as in TestOxygenStates)
// gets the entry for a¹Δg and b¹Σg⁺ (and the Herzberg and B states, which
// matter at 6000 K, the top of the NASA-7 range) and the warning; the
// CODATA key value S°(298.15 K) = 205.152(5) J mol⁻¹ K⁻¹ (Cox, Wagman &
// Medvedev 1989, from memory) and the JANAF Cp° = 29.376 (Chase 1998, from
// memory) stay covered, and at 1000 and 3000 K the sum with a and b given
// lies within 2.5 σ_total.
func TestOxygenMissingSinglets(t *testing.T) {
	hhO2 := hh{label: "16O16O", we: 1580.193, wexe: 11.981, weye: 0.04747, be: 1.44563, alpha: 0.0159305, de: 4.839e-6, homonuclear: true, vmax: 3, jmax: 31}
	rec, c := fitHH(t, hhO2, 0.001, 14)
	x := State{Label: "X", Multiplicity: 3, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '-'}}
	p := Problem{Constants: c, Observed: rec.Observed, DissociationEnergy: 41260, States: []State{x}}
	s := Settings{Temperatures: []float64{ReferenceTemperature, 1000, 3000}, Composition: CompositionNatural}
	res, err := Compute(p, s)
	if err != nil {
		t.Fatal(err)
	}
	p.States = append(p.States,
		State{Label: "a", TermEnergy: 7918.1, Multiplicity: 1, Lambda: 2, Symmetry: species.StateSymmetry{Parity: 'g'}},
		State{Label: "b", TermEnergy: 13195.1, Multiplicity: 1, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '+'}})
	truth, err := Compute(p, s)
	if err != nil {
		t.Fatal(err)
	}
	k := indexOfContribution(res, ContribElectronicStates)
	if k < 0 || !strings.Contains(res.Budget[k].What, "a¹Δg") || !strings.Contains(res.Budget[k].What, "b¹Σg⁺") {
		t.Fatalf("no %s entry naming a¹Δg and b¹Σg⁺: %v", ContribElectronicStates, res.Budget)
	}
	if kt := indexOfContribution(truth, ContribElectronicStates); kt < 0 || strings.Contains(truth.Budget[kt].What, "a¹Δg") {
		t.Errorf("with a and b given: the entry should name the higher states only: %v", truth.Budget)
	}
	r := res.Rows[0]
	t.Logf("16O2 X alone 298.15 K: S° %.4f σ_total %.3g (CODATA 205.152), Cp° %.4f σ_total %.3g (JANAF 29.376)", r.F.S, r.SigmaTotal.S, r.F.Cp, r.SigmaTotal.Cp)
	if d := math.Abs(r.F.S - 205.152); !(d <= 2.5*math.Hypot(r.SigmaTotal.S, 0.005)) {
		t.Errorf("S°(298.15 K) = %.4f ± %.3g, CODATA 205.152(5)", r.F.S, r.SigmaTotal.S)
	}
	if d := math.Abs(r.F.Cp - 29.376); !(d <= 2.5*math.Hypot(r.SigmaTotal.Cp, 0.005)) {
		t.Errorf("Cp°(298.15 K) = %.4f ± %.3g, JANAF 29.376", r.F.Cp, r.SigmaTotal.Cp)
	}
	for i, r := range res.Rows {
		t.Logf("16O2 %g K: Cp° %.4f σ_total %.3g (entry %.3g) with a, b %.4f; S° %.4f σ_total %.3g with a, b %.4f",
			r.T, r.F.Cp, r.SigmaTotal.Cp, r.Model[k].Cp, truth.Rows[i].F.Cp, r.F.S, r.SigmaTotal.S, truth.Rows[i].F.S)
	}
	checkCovered(t, "16O2 X alone", res, truth, 2.5)
	if w := strings.Join(res.Warnings, "\n"); !strings.Contains(w, "a¹Δg at T_e = 7918.1 cm-1, b¹Σg⁺ at T_e = 13195.1 cm-1") {
		t.Errorf("warnings lack the missing a and b states:\n%s", w)
	}
}

// TestCarbonMonoxideHot: CO without an electronic-states file (the implicit
// X¹Σ⁺) gets the entry for a³Π (T_e 48 687 cm⁻¹) at 6000 K, and the sum with
// the listed states given lies within 2.5 σ_total there; a table that stops
// at 1000 K with the NASA-7 range below 1000 K gets no entry.
func TestCarbonMonoxideHot(t *testing.T) {
	rec, c := fitHH(t, hhCO, 0.001, 3)
	p := Problem{Constants: c, Observed: rec.Observed, DissociationEnergy: 89460}
	s := Settings{Temperatures: []float64{3000, 6000}}
	res, err := Compute(p, s)
	if err != nil {
		t.Fatal(err)
	}
	k := indexOfContribution(res, ContribElectronicStates)
	if k < 0 || !strings.Contains(res.Budget[k].What, "a³Π") {
		t.Fatalf("CO at 6000 K: no %s entry naming a³Π: %v", ContribElectronicStates, res.Budget)
	}
	p.States = []State{{Label: "X", Multiplicity: 1, Symmetry: species.StateSymmetry{Reflection: '+'}}}
	for _, x := range KnownExcitedStates(mustParse(t, "12C16O")) {
		p.States = append(p.States, x.asState(mustParse(t, "12C16O"), 0))
	}
	truth, err := Compute(p, s)
	if err != nil {
		t.Fatal(err)
	}
	if indexOfContribution(truth, ContribElectronicStates) >= 0 {
		t.Errorf("CO with every listed state given: entry %v", truth.Budget)
	}
	for i, r := range res.Rows {
		t.Logf("CO %g K: Cp° %.4f σ_total %.3g (entry %.3g) truth %.4f; S° %.4f σ_total %.3g truth %.4f",
			r.T, r.F.Cp, r.SigmaTotal.Cp, r.Model[k].Cp, truth.Rows[i].F.Cp, r.F.S, r.SigmaTotal.S, truth.Rows[i].F.S)
	}
	checkCovered(t, "CO", res, truth, 2.5)
	cold, err := Compute(Problem{Constants: c, Observed: rec.Observed, DissociationEnergy: 89460},
		Settings{Temperatures: []float64{ReferenceTemperature, 1000}, NASA: NASARanges{Low: 200, Break: 500, High: 1000, Step: 10}})
	if err != nil {
		t.Fatal(err)
	}
	if indexOfContribution(cold, ContribElectronicStates) >= 0 {
		t.Errorf("CO up to 1000 K: entry %v (a³Π holds e^(−70) there)", cold.Budget)
	}
}

// TestExcitedStatesTable: every entry of the embedded list is a state the
// sum accepts for the molecule's main isotopologue (symmetry as the
// homonuclear rules ask), with T_e > 0 and a margin below T_e.
func TestExcitedStatesTable(t *testing.T) {
	labels := map[[2]string]string{{"O", "O"}: "16O16O", {"N", "O"}: "14N16O", {"H", "O"}: "16O1H", {"C", "H"}: "12C1H", {"C", "N"}: "12C14N",
		{"O", "S"}: "32S16O", {"H", "N"}: "14N1H", {"H", "S"}: "32S1H", {"S", "S"}: "32S32S", {"C", "O"}: "12C16O", {"N", "N"}: "14N14N", {"Cl", "Cl"}: "35Cl35Cl"}
	for key, xs := range excitedStates {
		iso := mustParse(t, labels[key])
		if elementKey(iso) != key {
			t.Fatalf("%v: test label %s", key, labels[key])
		}
		for _, x := range xs {
			s := x.asState(iso, 0)
			if err := iso.CheckStateSymmetry(s.Lambda, s.Symmetry); err != nil {
				t.Errorf("%s %s: %v", iso.Label, x.Term, err)
			}
			if !(x.Te > 0 && x.TeSigma > 0 && x.TeSigma < x.Te/10) || x.Multiplicity < 1 {
				t.Errorf("%s %s: T_e %g ± %g, 2S+1 = %d", iso.Label, x.Term, x.Te, x.TeSigma, x.Multiplicity)
			}
		}
	}
}
