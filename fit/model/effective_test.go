package model

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
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
