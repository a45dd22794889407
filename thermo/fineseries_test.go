package thermo

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// curvedNitricOxide is 14N16O X²Π at every bound v (T_v below D0 + 100
// cm⁻¹ above v = 0) with fine-structure constants that vary with v beyond
// linear. The published constants are those of nitricOxide (Huber & Herzberg
// 1979 and later infrared and microwave work, from memory): T_v = 1904.20u −
// 14.075u², u = v + ½, B_v = 1.69611 − 0.01751 v, D = 5.47·10⁻⁶, A_v = 123.139
// − 0.227 v, γ = −0.0062, p = 0.0117, q = 7·10⁻⁵ cm⁻¹ at v = 0. Added here (our
// choice, not published values): A_v gets the quadratic term aQuad·v², and
// γ, p, q follow v as the pure-precession picture has them (common practice:
// γ ∝ B, p ∝ AB, q ∝ B²), so that p and q also curve.
func curvedNitricOxide(aQuad, d0 float64) openTruth {
	lv := map[int]map[string]float64{}
	const b0, a0 = 1.69611, 123.139
	t0 := 1904.20*0.5 - 14.075*0.25
	for v := 0; ; v++ {
		u, x := float64(v)+0.5, float64(v)
		tv := 1904.20*u - 14.075*u*u
		if tv-t0 > d0+100 || (v > 0 && tv <= lv[v-1]["T"]) {
			break
		}
		b := b0 - 0.01751*x
		a := a0 - 0.227*x + aQuad*x*x
		lv[v] = map[string]float64{"T": tv, "B": b, "D": 5.47e-6, "A": a,
			"gamma": -0.0062 * b / b0, "p": 0.0117 * (b / b0) * (a / a0), "q": 7e-5 * (b / b0) * (b / b0)}
	}
	return openTruth{species: "14N16O", state: states.State{Label: "X", Multiplicity: 2, Lambda: 1}, levels: lv}
}

// linearised returns the truth with the fine-structure constants of the
// levels above vmax replaced by their least-squares lines in v through
// levels 0 … vmax: what a perfect fit of those levels with X_e and α_X
// extrapolates.
func (o openTruth) linearised(vmax int) openTruth {
	out := openTruth{species: o.species, state: o.state, levels: map[int]map[string]float64{}}
	line := func(name string) (float64, float64) {
		var sx, sy, sxx, sxy, n float64
		for v := 0; v <= vmax; v++ {
			x, y := float64(v), o.levels[v][name]
			sx, sy, sxx, sxy, n = sx+x, sy+y, sxx+x*x, sxy+x*y, n+1
		}
		slope := (n*sxy - sx*sy) / (n*sxx - sx*sx)
		return (sy - slope*sx) / n, slope
	}
	for v, c := range o.levels {
		l := map[string]float64{}
		for name, x := range c {
			l[name] = x
			if v > vmax && (name == "A" || name == "gamma" || name == "p" || name == "q") {
				c0, c1 := line(name)
				l[name] = c0 + c1*float64(v)
			}
		}
		out.levels[v] = l
	}
	return out
}

// TestDunhamFineSeriesBudget: Dunham records of 14N16O X²Π fitted to the
// 1-0 and 2-0 bands (J″ ≤ 30.5, 1σ 0.001 cm⁻¹; Y10, Y20, Y01, Y11, Y02, A_e,
// α_A, γ_e, p_e, α_p, q_e) of curvedNitricOxide, whose γ, p, q curve as B
// and A do and whose A_v has a quadratic term aQuad·v² of two sizes: the
// size the next-term rule expects from the truth's own constants (α_A²/A_e =
// 0.227²/123.25 = 4.18·10⁻⁴ cm⁻¹), and 10⁻³ cm⁻¹, 2.4 times that, on the
// pessimistic side (for G(v) of the ¹Σ checks the published next term is
// smaller than the rule's estimate: 12C16O ω_e y_e = 0.0105 against
// (ω_e x_e)²/ω_e = 0.081; Huber & Herzberg 1979, from memory). In both the
// exact level sum of the truth (every v to D0 = 52 400 cm⁻¹, Huber &
// Herzberg 1979, from memory) must lie within 2.5 σ_total of every value at
// 298.15, 1000, 3000 and 5000 K (the coverage rule of the budget's
// cross-checks), the budget must carry fine_structure_constants, in
// thermo.json too, and the entry is compared with the effect it stands for:
// the difference between the truth and the truth whose fine-structure
// constants above v = 2 follow their least-squares lines through v = 0 … 2.
// The rule is an order of magnitude, and its shape P_n(v+½; v_max+½) takes
// the fit to absorb the value and slope of the term at the last observed v,
// while a line fitted through v = 0 … 2 leaves the curvature's offset and
// slope there (the effect grows as (v−1)² − ⅔ against the entry's (v−2)²):
// the entry must come within a factor of 4 of the effect with the curvature
// at the rule's size and within 10 at 2.4 times it, wherever the effect
// exceeds 10⁻¹⁰ of the value (at 298.15 K no level above v = 2 counts).
func TestDunhamFineSeriesBudget(t *testing.T) {
	const d0 = 52400
	for _, tc := range []struct {
		name         string
		aQuad        float64
		ratioAllowed float64
	}{{"rule size", -0.227 * 0.227 / 123.25, 4}, {"2.4 x rule", -0.001, 10}} {
		t.Run(tc.name, func(t *testing.T) {
			truth := curvedNitricOxide(tc.aQuad, d0)
			res, fi := fineSeriesResult(t, truth)
			exact := truth.allLevels(t, d0)
			linear := truth.linearised(2).allLevels(t, d0)
			worst, lo, hi := 0.0, math.Inf(1), 0.0
			for _, r := range res.Rows {
				want, lin := bruteFunctions(r, exact), bruteFunctions(r, linear)
				for k, name := range FunctionNames[:4] {
					got, sig, w := r.F.at(k), r.SigmaTotal.at(k), want.at(k)
					entry, effect := r.Model[fi].at(k), math.Abs(w-lin.at(k))
					worst = math.Max(worst, math.Abs(got-w)/sig)
					t.Logf("%g K %-10s Δ/σ_total %+.2f (σ %.2g, σ_model %.2g, largest entry %s); %s %.2g, effect of the curvature %.2g",
						r.T, name, (got-w)/sig, r.Sigma.at(k), r.SigmaModel.at(k), largestEntry(res, r, k), ContribFineConstants, entry, effect)
					if math.Abs(got-w) > 2.5*sig {
						t.Errorf("%g K: %s = %.8g ± %.2g (total), truth %.8g", r.T, name, got, sig, w)
					}
					if effect <= 1e-10*math.Abs(w) {
						continue
					}
					lo, hi = math.Min(lo, entry/effect), math.Max(hi, entry/effect)
					if entry < effect/tc.ratioAllowed || entry > effect*tc.ratioAllowed {
						t.Errorf("%g K %s: %s = %.3g, effect of the truth's curvature %.3g", r.T, name, ContribFineConstants, entry, effect)
					}
				}
			}
			t.Logf("largest |Δ|/σ_total %.2f; entry/effect %.2f … %.2f", worst, lo, hi)
		})
	}
}

// fineSeriesResult fits the Dunham record to the truth's 1-0 and 2-0 bands,
// runs thermo at 298.15, 1000, 3000 and 5000 K and returns the result and the
// index of the fine_structure_constants entry, which it checks thermo.json
// names with the next term of the v-expansions.
func fineSeriesResult(t *testing.T, truth openTruth) (*Result, int) {
	t.Helper()
	lines := truth.openLines(t, [][2]int{{1, 0}, {2, 0}}, 61, 0.001, 3)
	terms := []string{"Y10", "Y20", "Y01", "Y11", "Y02", "A_e", "alpha_A", "gamma_e", "p_e", "alpha_p", "q_e"}
	rec, cs := fitOpenModel(t, lines, truth.state, model.KindDunham, terms)
	t.Logf("%d lines, s = %.3f", len(lines), rec.Stats.Sigma)
	res, err := Compute(Problem{Constants: cs, Observed: rec.Observed}, Settings{Temperatures: []float64{ReferenceTemperature, 1000, 3000, 5000}})
	if err != nil {
		t.Fatal(err)
	}
	fi := indexOfContribution(res, ContribFineConstants)
	if fi < 0 {
		t.Fatalf("the budget lacks %s", ContribFineConstants)
	}
	var js bytes.Buffer
	if err := res.WriteJSON(&js, constants.Provenance{}); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Budget struct {
			Contributions []Contribution `json:"contributions"`
		} `json:"uncertainty_budget"`
	}
	if err := json.Unmarshal(js.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	named := false
	for _, c := range doc.Budget.Contributions {
		named = named || (c.Name == ContribFineConstants && strings.Contains(strings.Join(c.Alternatives, " "), "v-expansion"))
	}
	if !named {
		t.Errorf("thermo.json does not name %s with the next term of the v-expansions", ContribFineConstants)
	}
	return res, fi
}

// largestEntry names the largest contribution of the row to function k.
func largestEntry(res *Result, r Row, k int) string {
	best := -1
	for i := range res.Budget {
		if best < 0 || r.Model[i].at(k) > r.Model[best].at(k) {
			best = i
		}
	}
	if best < 0 {
		return ""
	}
	return res.Budget[best].Name
}
