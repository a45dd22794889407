package thermo

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// TestExcitedStateWithoutVibration: 14N16O X²Π (bands 1-0 and 2-0 fitted,
// nitricOxide) with the A²Σ⁺ state 44 200 cm⁻¹ above it (the origin of the
// γ(0,0) band; Huber & Herzberg 1979, from memory) known from its v = 0
// rotational lines alone (B = 1.9870, D = 5.5·10⁻⁶, γ = −0.0027 cm⁻¹, from
// memory). The vibrational levels of A lie at least 44 200 cm⁻¹ up, so up to
// 3000 K, where e^(−c₂·44200/T) < 10⁻⁹, they cannot move Cp° by 0.01 J mol⁻¹
// K⁻¹: the table must be computed, and agree within 0.01 J mol⁻¹ K⁻¹ (Cp°, S°)
// with the one made when the electronic-states file gives A's ω_e = 2374.31
// cm⁻¹ (Huber & Herzberg 1979, from memory). At 25 000 K, where about 3 % of
// the molecules are in A, its vibrational levels do matter: without ω_e the
// temperature is refused, and the message names state A.
func TestExcitedStateWithoutVibration(t *testing.T) {
	x := nitricOxide()
	xRec, xCs := fitOpenRecord(t, x.openLines(t, [][2]int{{1, 0}, {2, 0}}, 41, 0.001, 3), x.state, []string{"B", "D", "A", "gamma", "p", "q"})
	a := openTruth{species: "14N16O", state: states.State{Label: "A", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}},
		levels: map[int]map[string]float64{0: {"T": 0, "B": 1.9870, "D": 5.5e-6, "gamma": -0.0027}}}
	aRec, aCs := fitOpenRecord(t, a.openLines(t, [][2]int{{0, 0}}, 41, 1e-4, 4), a.state, []string{"B", "D", "gamma"})
	problem := func(omegaA float64) Problem {
		sa := StateOf(a.state)
		sa.TermEnergy, sa.Constants, sa.Observed, sa.Source = 44200, aCs, aRec.Observed, "A.json"
		sa.OmegaE, sa.OmegaESigma = omegaA, 1
		return Problem{Constants: xCs, Observed: xRec.Observed, DissociationEnergy: 52400, DissociationSigma: 20,
			States: []State{StateOf(x.state), sa}}
	}
	temps := []float64{ReferenceTemperature, 1000, 3000}
	without, err := Compute(problem(0), Settings{Temperatures: temps})
	if err != nil {
		t.Fatalf("A's vibrational levels, 44 200 cm-1 up, cannot matter up to 3000 K: %v", err)
	}
	with, err := Compute(problem(2374.31), Settings{Temperatures: temps})
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range without.Rows {
		w := with.Rows[i]
		t.Logf("%g K: Cp° %.6f without ω_e(A), %.6f with; S° %.6f, %.6f", r.T, r.F.Cp, w.F.Cp, r.F.S, w.F.S)
		if math.Abs(r.F.Cp-w.F.Cp) > vibThresholdCp || math.Abs(r.F.S-w.F.S) > vibThresholdCp {
			t.Errorf("%g K: Cp° %.6f and S° %.6f without ω_e(A), %.6f and %.6f with it", r.T, r.F.Cp, r.F.S, w.F.Cp, w.F.S)
		}
	}
	_, err = Compute(problem(0), Settings{Temperatures: []float64{25000}})
	if err == nil || !strings.Contains(err.Error(), "state A") {
		t.Errorf("25 000 K without ω_e of A: error %v, want a refusal naming state A", err)
	}
}

// bandLines returns the electric-dipole lines (ΔJ = 0, ±1 with a change of
// parity) from v = 0 of the truth lo (the ground state) to v = 0 of up, term
// term above it, with J″ ≤ j2max/2 and Gaussian noise of 1σ unc (seeded).
func bandLines(t testing.TB, up, lo openTruth, term float64, j2max int, unc float64, seed uint64) []linelist.Line {
	t.Helper()
	levels := func(o openTruth) []model.Sublevel {
		m, p := o.truthModel(t)
		var out []model.Sublevel
		m.Sublevels(0, 0, 0, j2max+2, p, false, func(l model.Sublevel) { out = append(out, l) })
		return out
	}
	parity := func(l model.Sublevel) int {
		if (l.J2/2)%2 == 1 {
			return -int(l.Parity)
		}
		return int(l.Parity)
	}
	rng := rand.New(rand.NewPCG(seed, 5))
	var out []linelist.Line
	ups := levels(up)
	for _, l := range levels(lo) {
		for _, u := range ups {
			if d := u.J2 - l.J2; l.J2 > j2max || d < -2 || d > 2 || parity(u) == parity(l) {
				continue
			}
			out = append(out, linelist.Line{File: "band.csv", Row: len(out) + 2, Species: lo.species, JUp: u.J2 / 2, JLo: l.J2 / 2,
				Position: term + u.E - l.E + unc*rng.NormFloat64(), Unc: unc, Unit: linelist.Wavenumber,
				Open: &linelist.OpenShell{HalfJ: u.J2%2 == 1,
					Up: linelist.LevelLabel{State: up.state.Label, N: -1, F: u.F, Parity: u.Parity},
					Lo: linelist.LevelLabel{N: -1, F: l.F, Parity: l.Parity}}})
		}
	}
	return out
}

// TestBandSystemStateNotShifted: a record fitted to the A²Σ⁺–X²Π (0,0) band
// of 14N16O with the 1-0 and 2-0 infrared bands (constants as in
// TestExcitedStateWithoutVibration) describes A itself; thermo sums A from
// the record, and no warning may call its levels the ground-state levels
// shifted by its term energy.
func TestBandSystemStateNotShifted(t *testing.T) {
	x := nitricOxide()
	a := openTruth{species: "14N16O", state: states.State{Label: "A", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}, TermEnergy: 44200},
		levels: map[int]map[string]float64{0: {"T": 0, "B": 1.9870, "D": 5.5e-6, "gamma": -0.0027}}}
	lines := append(x.openLines(t, [][2]int{{1, 0}, {2, 0}}, 41, 0.001, 3), bandLines(t, a, x, 44200, 41, 0.005, 6)...)
	rec, cs := fitSpec(t, lines, fit.ModelSpec{Kind: model.KindTermValues, States: []states.State{x.state, a.state},
		Terms: []string{"B", "D", "A", "gamma", "p", "q", "A:B", "A:D", "A:gamma"}})
	sa := StateOf(a.state)
	sa.OmegaE, sa.OmegaESigma = 2374.31, 1
	res, err := Compute(Problem{Constants: cs, Observed: rec.Observed, DissociationEnergy: 52400, States: []State{StateOf(x.state), sa}},
		Settings{Temperatures: []float64{ReferenceTemperature}})
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range res.Warnings {
		if strings.Contains(w, "state A has no constants of its own") {
			t.Errorf("the record describes A, yet: %s", w)
		}
	}
}
