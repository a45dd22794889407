package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/species"
	"bandwright/fit/states"
)

// TestEffectiveComponentsMatchSublevels: the levels evaluated from the
// effective constants of a vibronic level (the thermo stage's path) are the
// levels Sublevels gives, and ∂E/∂p = Σ_q ∂E/∂c_q·∂c_q/∂p is the gradient
// Sublevels gives, for every case.
func TestEffectiveComponentsMatchSublevels(t *testing.T) {
	for _, tc := range fineCases {
		t.Run(tc.name, func(t *testing.T) {
			m, p := oneLevel(t, tc.st, tc.vals)
			dc := make([][]float64, NumQuantities)
			for v := 0; v <= 1; v++ {
				c, ok := VibronicConstants(m, 0, 0, v, p)
				if !ok {
					t.Fatalf("no constants for v=%d", v)
				}
				for q := range dc {
					dc[q] = make([]float64, len(p))
					VibronicGradient(m, 0, 0, v, q, dc[q])
				}
				type key struct{ j2, f, par int }
				want := map[key]Sublevel{}
				m.Sublevels(0, 0, v, 41, p, true, func(l Sublevel) {
					l.Grad = append([]float64(nil), l.Grad...)
					want[key{l.J2, l.F, int(l.Parity)}] = l
				})
				n := 0
				for j2 := 0; j2 <= 41; j2++ {
					EffectiveComponents(tc.st, &c, v, j2, func(l Sublevel, dE *Effective) {
						n++
						w, ok := want[key{l.J2, l.F, int(l.Parity)}]
						if !ok || w.N != l.N || !scalar.EqualWithinAbsOrRel(w.E, l.E, 1e-10, 1e-13) {
							t.Fatalf("v=%d J2=%d F%d %v: E = %.12g (N %d), Sublevels %.12g (N %d, found %v)", v, j2, l.F, l.Parity, l.E, l.N, w.E, w.N, ok)
						}
						e, ok := EffectiveLevel(tc.st, &c, l.Level)
						if !ok || e != l.E {
							t.Errorf("EffectiveLevel %.12g, components %.12g", e, l.E)
						}
						var dE1 Effective
						if e1, _ := EffectiveLevelGradient(tc.st, &c, l.Level, &dE1); e1 != e || dE1 != *dE {
							t.Errorf("EffectiveLevelGradient %.12g %v, components %.12g %v", e1, dE1, l.E, *dE)
						}
						for j := range p {
							g := 0.0
							for q := range dc {
								g += dE[q] * dc[q][j]
							}
							if !scalar.EqualWithinAbsOrRel(g, w.Grad[j], 1e-9, 1e-9) {
								t.Errorf("v=%d J2=%d F%d: ∂E/∂%s = %g, Sublevels %g", v, j2, l.F, m.Params()[j].ID(), g, w.Grad[j])
							}
						}
					})
				}
				if n != len(want) {
					t.Errorf("v=%d: %d levels from the constants, %d from Sublevels", v, n, len(want))
				}
			}
		})
	}
}

// TestVibronicSeries: the series of a Dunham model's effective constants,
// summed at v + ½, give the constants VibronicConstants gives (NO X²Π with
// A_e, α_A, γ_e, p_e, q_e, for 14N16O and the mass-scaled 15N16O), with the
// series of A equal to (A_e, −α_A) for the reference isotopologue; a
// term-values model has no series. The rotational orders are those of the
// mass scaling in the package doc.
func TestVibronicSeries(t *testing.T) {
	var isos []species.Isotopologue
	for _, label := range []string{"14N16O", "15N16O"} {
		iso, err := species.Parse(label)
		if err != nil {
			t.Fatal(err)
		}
		isos = append(isos, iso)
	}
	m, err := NewDunham(isos, DunhamOptions{States: []states.State{stDoubletPi},
		Terms: []string{"Y10", "Y20", "Y01", "Y11", "Y02", "A_e", "alpha_A", "gamma_e", "p_e", "q_e"}})
	if err != nil {
		t.Fatal(err)
	}
	vals := map[string]float64{"Y10": 1904.2, "Y20": -14.075, "Y01": 1.7049, "Y11": -0.01751, "Y02": -5.47e-6,
		"A_e": 123.25, "alpha_A": 0.227, "gamma_e": -6.2e-3, "p_e": 1.17e-2, "q_e": 7e-5}
	p := make([]float64, len(m.Params()))
	for i, par := range m.Params() {
		p[i] = vals[par.Name]
	}
	for s := range isos {
		for v := 0; v <= 30; v += 5 {
			c, _ := VibronicConstants(m, s, 0, v, p)
			for q := range NumQuantities {
				a, ok := VibronicSeries(m, s, 0, q, p)
				if !ok {
					t.Fatalf("no series for %s", QuantityNames()[q])
				}
				sum, u := 0.0, float64(v)+0.5
				for k, x := range a {
					sum += x * math.Pow(u, float64(k))
				}
				if !scalar.EqualWithinAbsOrRel(sum, c[q], 1e-12, 1e-12) {
					t.Errorf("species %d v=%d %s: series %.12g, constants %.12g", s, v, QuantityNames()[q], sum, c[q])
				}
			}
		}
	}
	if a, _ := VibronicSeries(m, 0, 0, QuantityIndex("A"), p); len(a) != 2 || a[0] != 123.25 || a[1] != -0.227 {
		t.Errorf("series of A: %v, want [123.25 -0.227]", a)
	}
	tv, tp := oneLevel(t, stDoubletPi, fineCases[0].vals)
	if _, ok := VibronicSeries(tv, 0, 0, QuantityIndex("A"), tp); ok {
		t.Error("a term-values model has a series")
	}
	for name, want := range map[string]int{"A": 0, "lambda": 0, "gamma": 1, "p": 1, "A_D": 1, "q": 2, "q_D": 3, "T": -1, "B": -1} {
		if got := RotationalOrder(QuantityIndex(name)); got != want {
			t.Errorf("rotational order of %s: %d, want %d", name, got, want)
		}
	}
}
