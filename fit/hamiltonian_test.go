package fit

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// genModel builds a one-level term-values model of state st with every
// constant of its case and sets the values of g.
func genModel(t *testing.T, st states.State, g genState) (*model.TermValues, []float64) {
	t.Helper()
	terms := append([]string{"B", "D", "H"}, model.FineTerms(st.Case())...)
	m, err := model.NewTermValuesStates([]states.State{st}, []model.LevelSpec{{Species: "14N16O", V: []int{0}}}, terms, nil)
	if err != nil {
		t.Fatal(err)
	}
	val := map[string]float64{"T": g.T, "B": g.B, "D": g.D, "H": g.H, "A": g.A, "A_D": g.AD, "gamma": g.Gamma, "gamma_D": g.GD,
		"lambda": g.Lam, "lambda_D": g.LamD, "p": g.P, "q": g.Q, "p_D": g.PD, "q_D": g.QD,
		"A_H": g.AH, "gamma_H": g.GH, "lambda_H": g.LamH, "p_H": g.PH, "q_H": g.QH}
	ps := m.Params()
	p := make([]float64, len(ps))
	for i, q := range ps {
		v, ok := val[q.Name]
		if !ok {
			t.Fatalf("no value for %s", q.Name)
		}
		p[i] = v
	}
	return m, p
}

// TestLevelsMatchCaseABasis compares the model's energies of every level up
// to J = 40 with the independent generator (signed case-(a) basis, gonum
// EigenSym) for states of each case, with constants of the size of published
// ones (NO X²Π and OH X²Π from Huber & Herzberg 1979 and later microwave work,
// from memory; O2 X³Σg⁻ as the lead recalls them, from memory; ²Σ and ¹Π of
// plausible size) and the distortion constants exaggerated so that every
// operator matters.
func TestLevelsMatchCaseABasis(t *testing.T) {
	cases := []struct {
		name string
		st   states.State
		g    genState
	}{
		{"2Pi NO-like", states.State{Label: "X", Multiplicity: 2, Lambda: 1},
			genState{S2: 1, Lambda: 1, T: 3, B: 1.6961, D: 5.4e-6, H: 1e-11, A: 123.14, AD: 1.9e-4, Gamma: -6e-3, GD: 1e-7, P: 1.17e-2, Q: 6.7e-5, PD: 2e-6, QD: 1e-7, AH: 1e-9, GH: 1e-11, PH: 1e-10, QH: 1e-11}},
		{"2Pi OH-like (A<0)", states.State{Label: "X", Multiplicity: 2, Lambda: 1},
			genState{S2: 1, Lambda: 1, T: -7, B: 18.535, D: 1.9e-3, H: 1.4e-7, A: -139.05, AD: -7e-3, Gamma: -0.119, GD: 1e-5, P: 0.235, Q: -0.0387, PD: -2e-5, QD: 1.5e-5, AH: -1e-8, GH: 1e-9, PH: 1e-9, QH: -1e-9}},
		{"2Pi A between 0 and 4B", states.State{Label: "X", Multiplicity: 2, Lambda: 1},
			genState{S2: 1, Lambda: 1, B: 14.19, D: 1.4e-3, A: 28.1, Gamma: -0.02, P: 0.033, Q: 0.038}},
		{"3Sigma- O2-like", states.State{Label: "X", Multiplicity: 3, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '-'}},
			genState{S2: 2, Minus: true, T: 1, B: 1.4377, D: 4.84e-6, H: 1e-12, Lam: 1.9847, LamD: 1.95e-6, LamH: 1e-11, Gamma: -8.425e-3, GD: -8e-9, GH: 1e-12}},
		{"3Sigma+ large lambda", states.State{Label: "X", Multiplicity: 3, Symmetry: species.StateSymmetry{Reflection: '+'}},
			genState{S2: 2, B: 0.7, D: 1e-6, Lam: 5.3, LamD: 3e-5, LamH: -1e-9, Gamma: 0.01, GD: 1e-6, GH: 1e-10}},
		{"2Sigma+ CN-like", states.State{Label: "X", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}},
			genState{S2: 1, T: 2, B: 1.8997, D: 6.4e-6, H: 1e-12, Gamma: 7.25e-3, GD: 1e-7, GH: 1e-11}},
		{"2Sigma- ", states.State{Label: "X", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '-'}},
			genState{S2: 1, Minus: true, B: 1.2, D: 3e-6, Gamma: -0.02, GD: 2e-7, GH: -1e-11}},
		{"1Pi", states.State{Label: "X", Multiplicity: 1, Lambda: 1},
			genState{Lambda: 1, T: 5, B: 1.6115, D: 7.3e-6, Q: -1.3e-5, QD: 2e-9, QH: 1e-13}},
		{"1Sigma+", states.Ground(), genState{B: 1.93, D: 6.1e-6, H: 1e-12}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, p := genModel(t, c.st, c.g)
			start := 0
			if c.st.HalfIntegerJ() {
				start = 1
			}
			n := 0
			for j2 := start; j2 <= 80; j2 += 2 {
				for _, l := range c.g.levels(j2) {
					lv := model.Level{V: 0, J2: j2, F: l.F, Parity: states.Parity(l.Par)}
					if l.F == 0 && c.st.Case() == states.DoubletPi {
						lv.F = 1
					}
					got := m.LevelEnergy(0, lv, p, nil)
					if !scalar.EqualWithinAbsOrRel(got, l.E, 1e-9, 1e-12) {
						t.Errorf("J=%s F%d %s: model %.12g, generator %.12g (diff %.3g)", states.FormatJ(j2), l.F, states.Parity(l.Par), got, l.E, got-l.E)
					}
					n++
				}
			}
			if n < 40 {
				t.Errorf("only %d levels compared", n)
			}
		})
	}
}
