package thermo

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit/states"
)

// hydroxyl is 16OH X²Π_i at every bound v (T_v below d0 + 100 cm⁻¹ above
// v = 0), from the constants of Huber & Herzberg (1979) and later microwave
// and far-infrared work, all from memory: T_v = 3737.76u − 84.881u², u = v
// + ½, B_v = 18.910 − 0.7242u, D = 1.938·10⁻³, A_0 = −139.05 changing by
// 0.2 % per quantum, and at v = 0 γ = −0.119, p = 0.235, q = −0.0387 cm⁻¹. γ,
// p and q follow v as the pure-precession picture has them (common practice:
// γ ∝ B, p ∝ AB, q ∝ B²): p changes by about 4 % and q by about 8 % per
// quantum.
func hydroxyl(d0 float64) openTruth {
	lv := map[int]map[string]float64{}
	const a0 = -139.05
	b0 := 18.910 - 0.7242*0.5
	t0 := 3737.76*0.5 - 84.881*0.25
	for v := 0; ; v++ {
		u := float64(v) + 0.5
		tv := 3737.76*u - 84.881*u*u
		if tv-t0 > d0+100 || (v > 0 && tv <= lv[v-1]["T"]) {
			break
		}
		b := 18.910 - 0.7242*u
		a := a0 * (1 + 0.002*float64(v))
		lv[v] = map[string]float64{"T": tv, "B": b, "D": 1.938e-3, "A": a,
			"gamma": -0.119 * b / b0, "p": 0.235 * (b / b0) * (a / a0), "q": -0.0387 * (b / b0) * (b / b0)}
	}
	return openTruth{species: "16O1H", state: states.State{Label: "X", Multiplicity: 2, Lambda: 1}, levels: lv}
}

// heldAt returns the truth with the fine-structure constants of every level
// replaced by those of level v0: what a record of level v0 alone assumes
// for the others.
func (o openTruth) heldAt(v0 int) openTruth {
	out := openTruth{species: o.species, state: o.state, levels: map[int]map[string]float64{}}
	for v, c := range o.levels {
		l := map[string]float64{}
		for name, x := range c {
			l[name] = x
			if name == "A" || name == "gamma" || name == "p" || name == "q" {
				l[name] = o.levels[v0][name]
			}
		}
		out.levels[v] = l
	}
	return out
}

// TestHydrideOneLevelBudget: a term-values record of 16OH v = 0 alone (its
// rotational and Λ-doubling lines, J″ ≤ 10.5, 1σ 10⁻⁵ cm⁻¹ ≈ 0.3 MHz: a
// far-infrared and microwave data set) with ω_e = 3737.76 ± 1 cm⁻¹ and D0 =
// 35 420 ± 30 cm⁻¹ (4.392 eV; Huber & Herzberg 1979, from memory) from the
// electronic-states file. The exact sum of hydroxyl's levels to D0 must lie
// within 2.5 σ_total of every value at 298.15, 1000 and 3000 K (the coverage
// rule of the budget's cross-checks); the fine_structure_constants entry must
// be at least a quarter of the effect it stands for — the difference between
// the truth and the truth with every level's fine-structure constants held at
// those of v = 0 — wherever that effect exceeds 10⁻¹⁰ of the value (measured:
// 1.7 to 6.9 times the effect; the entry is dominated by A, whose assumed 1 %
// per quantum exceeds the truth's 0.2 %, while p and q, which change by 4 and
// 8 %, move the sums far less: the Λ-doubling splits levels symmetrically). At
// 298.15 K S° and Cp° must come within 0.02 J mol⁻¹ K⁻¹ of JANAF's 183.737 and
// 29.886 for OH (Chase 1998, from memory; the molar mass of 16OH alone,
// 17.0027 against 17.0073 g/mol for natural OH, lowers S° by 0.003).
func TestHydrideOneLevelBudget(t *testing.T) {
	const d0 = 35420
	truth := hydroxyl(d0)
	lines := truth.openLines(t, [][2]int{{0, 0}}, 21, 1e-5, 11)
	rec, cs := fitOpenRecord(t, lines, truth.state, []string{"B", "D", "A", "gamma", "p", "q"})
	t.Logf("%d lines, s = %.3f", len(lines), rec.Stats.Sigma)
	st := StateOf(truth.state)
	st.OmegaE, st.OmegaESigma = 3737.76, 1
	res, err := Compute(Problem{Constants: cs, Observed: rec.Observed, DissociationEnergy: d0, DissociationSigma: 30, States: []State{st}},
		Settings{Temperatures: []float64{ReferenceTemperature, 1000, 3000}})
	if err != nil {
		t.Fatal(err)
	}
	fi := indexOfContribution(res, ContribFineConstants)
	if fi < 0 {
		t.Fatalf("the budget lacks %s", ContribFineConstants)
	}
	exact := truth.allLevels(t, d0)
	held := truth.heldAt(0).allLevels(t, d0)
	checkLevelCoverage(t, res, exact, 2.5)
	if r := res.Rows[0]; math.Abs(r.F.S-183.737) > 0.02 || math.Abs(r.F.Cp-29.886) > 0.02 {
		t.Errorf("16OH at 298.15 K: S° = %.4f, Cp° = %.4f J mol⁻¹ K⁻¹; JANAF 183.737, 29.886", r.F.S, r.F.Cp)
	}
	for _, r := range res.Rows {
		want, nominal := bruteFunctions(r, exact), bruteFunctions(r, held)
		for k, name := range FunctionNames[:4] {
			entry, effect := r.Model[fi].at(k), math.Abs(want.at(k)-nominal.at(k))
			t.Logf("%g K %-10s %s %.3g, effect of the v-dependence of the fine-structure constants %.3g (ratio %.2f)", r.T, name, ContribFineConstants, entry, effect, entry/effect)
			if effect > 1e-10*math.Abs(want.at(k)) && entry < effect/4 {
				t.Errorf("%g K %s: %s = %.3g, effect %.3g", r.T, name, ContribFineConstants, entry, effect)
			}
		}
	}
}

// TestHydrideOneLevelAnharmonicity: the one-level 16OH record of
// TestHydrideOneLevelBudget with ω_e = 3737.76 ± 1 and ω_e x_e = 84.88 ± 0.5
// cm⁻¹ from the electronic-states file (Huber & Herzberg 1979, from memory;
// the truth, hydroxyl, has 84.881). The anharmonicity replaces the prior
// (nominal x_e 0.0077 against OH's 0.0227): the truth must lie within 2.5
// σ_total at 298.15, 1000 and 3000 K, the budget carries omega_e_x_e and no
// prior alternative, the source's note names the file, and σ_total of Cp° at
// 3000 K must fall well below its value with the prior (measured: see the
// log; asserted with a margin).
func TestHydrideOneLevelAnharmonicity(t *testing.T) {
	const d0 = 35420
	truth := hydroxyl(d0)
	lines := truth.openLines(t, [][2]int{{0, 0}}, 21, 1e-5, 11)
	rec, cs := fitOpenRecord(t, lines, truth.state, []string{"B", "D", "A", "gamma", "p", "q"})
	exact := truth.allLevels(t, d0)
	temps := Settings{Temperatures: []float64{ReferenceTemperature, 1000, 3000}}
	compute := func(omegaX, omegaXSigma float64) *Result {
		st := StateOf(truth.state)
		st.OmegaE, st.OmegaESigma = 3737.76, 1
		st.OmegaEXE, st.OmegaEXESigma = omegaX, omegaXSigma
		res, err := Compute(Problem{Constants: cs, Observed: rec.Observed, DissociationEnergy: d0, DissociationSigma: 30, States: []State{st}}, temps)
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	prior, given := compute(0, 0), compute(84.88, 0.5)
	checkLevelCoverage(t, given, exact, 2.5)
	for i, r := range given.Rows {
		p := prior.Rows[i]
		for k, name := range FunctionNames[:4] {
			w := bruteFunctions(r, exact).at(k)
			t.Logf("%g K %-10s prior: σ_total %.3g |Δ|/σ_total %.2f; ω_e x_e: σ_total %.3g |Δ|/σ_total %.2f", r.T, name,
				p.SigmaTotal.at(k), math.Abs(p.F.at(k)-w)/p.SigmaTotal.at(k), r.SigmaTotal.at(k), math.Abs(r.F.at(k)-w)/r.SigmaTotal.at(k))
		}
	}
	hot := 2
	ratio := given.Rows[hot].SigmaTotal.Cp / prior.Rows[hot].SigmaTotal.Cp
	t.Logf("σ_total(Cp°, 3000 K): %.4g with ω_e x_e, %.4g with the prior (ratio %.3f)", given.Rows[hot].SigmaTotal.Cp, prior.Rows[hot].SigmaTotal.Cp, ratio)
	for k, c := range given.Budget {
		t.Logf("3000 K Cp° %-26s %.3g", c.Name, given.Rows[hot].Model[k].Cp)
	}
	if ratio > 0.5 {
		t.Errorf("σ_total(Cp°, 3000 K) with ω_e x_e is %.3f of its value with the prior, want ≤ 0.5", ratio)
	}
	if !hasContribution(given, ContribOmegaX) || !hasContribution(given, ContribOmega) {
		t.Errorf("budget %v lacks %s or %s", names(given.Budget), ContribOmegaX, ContribOmega)
	}
	for _, c := range given.Budget {
		if c.Name == ContribVibrational && slices.Contains(c.Alternatives, fmt.Sprintf("x_e = %g", xePriorHigh)) {
			t.Errorf("the prior's alternatives apply to a source whose ω_e x_e is given: %v", c.Alternatives)
		}
	}
	var js bytes.Buffer
	if err := given.WriteJSON(&js, constants.Provenance{}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(js.String(), `"`+ContribOmegaX+`"`) || !strings.Contains(js.String(), "ω_e x_e = 84.88 cm-1 (x_e = 0.0227) from the electronic-states file") {
		t.Errorf("thermo.json does not name %s or the source of ω_e x_e", ContribOmegaX)
	}
	// Without σ the value is taken as exact, and the notes say so.
	exactRes := compute(84.88, 0)
	if hasContribution(exactRes, ContribOmegaX) {
		t.Errorf("budget %v has %s without a σ", names(exactRes.Budget), ContribOmegaX)
	}
	if !strings.Contains(strings.Join(exactRes.Warnings, "\n"), "from the electronic-states file (no σ given: taken as exact)") {
		t.Errorf("warnings do not say ω_e x_e is taken as exact: %q", exactRes.Warnings)
	}
}
