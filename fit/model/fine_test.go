package model

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/species"
	"bandwright/fit/states"
)

var (
	stDoubletPi   = states.State{Label: "X", Multiplicity: 2, Lambda: 1}
	stTripletSigM = states.State{Label: "X", Multiplicity: 3, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '-'}}
	stDoubletSigP = states.State{Label: "X", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}}
	stSingletPi   = states.State{Label: "A", Multiplicity: 1, Lambda: 1, TermEnergy: 65000}
)

// oneLevel builds a term-values model of state st with levels v = 0, 1 and
// every constant of the case; values sets p by parameter name (the v = 1
// level gets each value scaled by 0.98, T 1000 more).
func oneLevel(t *testing.T, st states.State, values map[string]float64) (*TermValues, []float64) {
	t.Helper()
	terms := append([]string{"B", "D", "H"}, FineTerms(st.Case())...)
	m, err := NewTermValuesStates([]states.State{st}, []LevelSpec{{Species: "14N16O", V: []int{0, 1}}}, terms, nil)
	if err != nil {
		t.Fatal(err)
	}
	ps := m.Params()
	p := make([]float64, len(ps))
	for i, q := range ps {
		p[i] = values[q.Name]
		if q.V == 1 {
			p[i] *= 0.98
			if q.Name == "T" {
				p[i] = 1000
			}
		}
	}
	return m, p
}

var fineCases = []struct {
	name string
	st   states.State
	vals map[string]float64
}{
	// NO X²Π and OH X²Π v = 0 (Huber & Herzberg 1979 and later microwave
	// work, from memory), distortion constants (_D and _H) exaggerated.
	{"2Pi NO", stDoubletPi, map[string]float64{"B": 1.6961, "D": 5.4e-6, "H": 1e-11, "A": 123.14, "A_D": 1.9e-4, "gamma": -6e-3, "gamma_D": 1e-7, "p": 1.17e-2, "q": 6.7e-5, "p_D": 2e-6, "q_D": 1e-7, "A_H": 1e-9, "gamma_H": 1e-11, "p_H": 1e-10, "q_H": 1e-11}},
	{"2Pi OH", stDoubletPi, map[string]float64{"B": 18.535, "D": 1.9e-3, "H": 1.4e-7, "A": -139.05, "A_D": -7e-3, "gamma": -0.119, "gamma_D": 1e-5, "p": 0.235, "q": -0.0387, "p_D": -2e-5, "q_D": 1.5e-5, "A_H": -1e-8, "gamma_H": 1e-9, "p_H": 1e-9, "q_H": -1e-9}},
	// O2 X³Σg⁻ (the lead's recollection, from memory, in cm⁻¹).
	{"3Sigma O2", stTripletSigM, map[string]float64{"B": 1.4377, "D": 4.84e-6, "H": 1e-12, "lambda": 1.9847, "lambda_D": 1.95e-6, "lambda_H": 1e-11, "gamma": -8.425e-3, "gamma_D": -8e-9, "gamma_H": 1e-12}},
	{"2Sigma", stDoubletSigP, map[string]float64{"B": 1.8997, "D": 6.4e-6, "gamma": 7.25e-3, "gamma_D": 1e-7, "gamma_H": 1e-11}},
	{"1Pi", stSingletPi, map[string]float64{"B": 1.6115, "D": 7.3e-6, "q": -1.3e-5, "q_D": 2e-9, "q_H": 1e-13}},
}

// TestLevelGradientMatchesFiniteDifferences checks the Hellmann–Feynman
// gradients of LevelEnergy, LevelTransition and Sublevels against central
// differences (gonum diff/fd), in units of a step of each parameter's size.
func TestLevelGradientMatchesFiniteDifferences(t *testing.T) {
	for _, c := range fineCases {
		t.Run(c.name, func(t *testing.T) {
			m, p := oneLevel(t, c.st, c.vals)
			n := len(p)
			step := make([]float64, n)
			for j := range p {
				step[j] = math.Max(math.Abs(p[j]), 1e-9)
			}
			x := make([]float64, n)
			at := func(tv []float64) []float64 {
				for j := range x {
					x[j] = p[j] + step[j]*tv[j]
				}
				return x
			}
			check := func(what string, grad []float64, f func([]float64) float64) {
				t.Helper()
				num := make([]float64, n)
				fd.Gradient(num, func(tv []float64) float64 { return f(at(tv)) }, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: 1e-4})
				for j := range num {
					if !scalar.EqualWithinAbsOrRel(grad[j]*step[j], num[j], 1e-7, 1e-6) {
						t.Errorf("%s: ∂/∂%s = %g analytic, %g finite difference", what, m.Params()[j].ID(), grad[j], num[j]/step[j])
					}
				}
			}
			grad := make([]float64, n)
			var levels []Level
			m.Sublevels(0, 0, 1, 31, p, true, func(sl Sublevel) {
				levels = append(levels, sl.Level)
				e := m.LevelEnergy(0, sl.Level, p, grad)
				if e != sl.E {
					t.Errorf("Sublevels and LevelEnergy differ at %+v: %g, %g", sl.Level, sl.E, e)
				}
				for j := range grad {
					if grad[j] != sl.Grad[j] {
						t.Errorf("Sublevels and LevelEnergy gradients differ at %+v", sl.Level)
						break
					}
				}
			})
			if len(levels) < 20 {
				t.Fatalf("only %d levels enumerated", len(levels))
			}
			for i, lv := range levels {
				if i%3 != 0 {
					continue
				}
				m.LevelEnergy(0, lv, p, grad)
				check("E", grad, func(q []float64) float64 { return m.LevelEnergy(0, lv, q, nil) })
				lo := lv
				lo.V = 0
				m.LevelTransition(0, lv, lo, p, grad)
				check("ν", grad, func(q []float64) float64 { nu, _ := m.LevelTransition(0, lv, lo, q, nil); return nu })
			}
		})
	}
}

// TestDoubletPiHillVanVleck checks ²Π levels without Λ-doubling and
// distortion against the Hill–Van Vleck formula (common practice),
// F = B[(J+½)² − Λ² ∓ ½√(4(J+½)² + Y(Y−4)Λ²)], Y = A/B, F1 the lower sign.
// The N² formulation counts the rotational energy from B·N² with N² = J(J+1)
// + S(S+1) − 2ΩΣ, which lies BΛ² = B above the R² form of the formula.
func TestDoubletPiHillVanVleck(t *testing.T) {
	for _, c := range []struct{ A, B float64 }{{123.14, 1.6961}, {-139.05, 18.535}, {28.1, 14.19}, {-5, 10}} {
		m, err := NewTermValuesStates([]states.State{stDoubletPi}, []LevelSpec{{Species: "1H16O", V: []int{0}}}, []string{"B", "A"}, nil)
		if err != nil {
			t.Fatal(err)
		}
		p := []float64{0, c.B, c.A} // T, B, A
		y := c.A / c.B
		for j2 := 3; j2 <= 81; j2 += 2 {
			x := float64(j2+1) / 2
			root := 0.5 * math.Sqrt(4*x*x+y*(y-4))
			for f, sgn := range []float64{-1, 1} {
				want := c.B*(x*x-1+sgn*root) + c.B
				for _, par := range []states.Parity{states.ParityE, states.ParityF} {
					got := m.LevelEnergy(0, Level{J2: j2, F: f + 1, Parity: par}, p, nil)
					if !scalar.EqualWithinAbsOrRel(got, want, 1e-9, 1e-12) {
						t.Errorf("A=%g B=%g J=%s F%d: %.10g, Hill–Van Vleck %.10g", c.A, c.B, states.FormatJ(j2), f+1, got, want)
					}
				}
			}
		}
	}
}

// TestTripletSigmaSchlapp checks ³Σ levels (γ = 0) against Schlapp's closed
// forms (Phys. Rev. 51, 342 (1937); common practice), counted from the F2
// level B·N(N+1), which the model places at B·N(N+1) + ⅔λ:
//
//	F1 (J = N+1) = BN(N+1) + (2N+3)B − λ − √((2N+3)²B² + λ² − 2λB)
//	F3 (J = N−1) = BN(N+1) − (2N−1)B − λ + √((2N−1)²B² + λ² − 2λB)
//
// At J = 0 (N = 1, F3), which has no partner, the root stands for B − λ with
// its sign: F3 = 2(B − λ) also when λ > B (the level of 16O2 from which the
// line near 118.75 GHz starts).
func TestTripletSigmaSchlapp(t *testing.T) {
	for _, c := range []struct{ B, L float64 }{{1.4377, 1.9847}, {0.7, 5.3}, {0.5, -3}} {
		m, err := NewTermValuesStates([]states.State{stTripletSigM}, []LevelSpec{{Species: "16O16O", V: []int{0}}}, []string{"B", "lambda"}, nil)
		if err != nil {
			t.Fatal(err)
		}
		p := []float64{0, c.B, c.L}
		B, l := c.B, c.L
		for N := 0; N <= 40; N++ {
			nf := float64(N)
			base := B * nf * (nf + 1)
			want := map[int]float64{
				1: base + (2*nf+3)*B - l - math.Sqrt((2*nf+3)*(2*nf+3)*B*B+l*l-2*l*B),
				2: base,
				3: base - (2*nf-1)*B - l + math.Sqrt((2*nf-1)*(2*nf-1)*B*B+l*l-2*l*B),
			}
			if N == 1 {
				want[3] = 2 * (B - l)
			}
			for f, w := range want {
				J := N + 2 - f
				if J < 0 || (N == 0 && f != 1) {
					continue
				}
				got := m.LevelEnergy(0, Level{J2: 2 * J, F: f}, p, nil) - 2*l/3
				if !scalar.EqualWithinAbsOrRel(got, w, 1e-9, 1e-12) {
					t.Errorf("B=%g λ=%g N=%d F%d: %.10g, Schlapp %.10g", B, l, N, f, got, w)
				}
			}
		}
	}
}

// nitricOxide is a two-state Dunham model of NO: X²Π (Y_kl, the
// fine-structure expansions) and A²Σ⁺ (T_e, Y_kl, γ) for 14N16O and 15N16O,
// with constants of the size of Huber & Herzberg's (1979, from memory).
func nitricOxide(t *testing.T) (*Dunham, []float64, map[string]float64) {
	t.Helper()
	x := stDoubletPi
	a := states.State{Label: "A", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}, TermEnergy: 43965.7}
	m, err := NewDunham(mustIsos(t, "14N16O", "15N16O"), DunhamOptions{
		States: []states.State{x, a},
		Terms: []string{"Y10", "Y20", "Y01", "Y11", "Y02", "A_e", "alpha_A", "A_D", "gamma_e", "p_e", "alpha_p", "q_e", "p_D", "q_D", "A_H",
			"A:Y10", "A:Y20", "A:Y01", "A:Y11", "A:Y02", "A:gamma_e", "A:alpha_gamma", "A:gamma_D", "A:gamma_H"},
	})
	if err != nil {
		t.Fatal(err)
	}
	vals := map[string]float64{
		"Y10": 1904.2, "Y20": -14.075, "Y01": 1.67195, "Y11": -0.0171, "Y02": -5.4e-6,
		"A_e": 123.28, "alpha_A": 0.19, "A_D": 1.9e-4, "gamma_e": -6e-3, "p_e": 1.17e-2, "alpha_p": 1e-4, "q_e": 6.7e-5, "p_D": 2e-7, "q_D": 1e-8, "A_H": 1e-9,
		"A:T_e": 43965.7, "A:Y10": 2374.31, "A:Y20": -16.106, "A:Y01": 1.9965, "A:Y11": -0.01915, "A:Y02": -5.4e-6,
		"A:gamma_e": -2.7e-3, "A:alpha_gamma": 1e-5, "A:gamma_D": 1e-8, "A:gamma_H": 1e-11,
	}
	ps := m.Params()
	p := make([]float64, len(ps))
	for i, q := range ps {
		v, ok := vals[q.ID()]
		if !ok {
			t.Fatalf("no value for %s", q.ID())
		}
		p[i] = v
	}
	return m, p, vals
}

// TestDunhamFineStructure checks the Dunham model with electronic states
// against a term-values model given the effective constants of each level
// (X_v = X_e − α_X(v+½), mass-scaled with (μ_r/μ_s)^((k+2l)/2), l the
// rotational order of each constant), and its gradients against finite
// differences.
func TestDunhamFineStructure(t *testing.T) {
	m, p, vals := nitricOxide(t)
	if m.Linear() {
		t.Error("a model with a 2Pi state reports itself linear")
	}
	for s, label := range m.Species() {
		for st, state := range m.States() {
			for v := 0; v <= 2; v++ {
				r := m.Scale(s, 1, 0) // (μ_r/μ_s)^½
				vh := float64(v) + 0.5
				pre := ""
				if st > 0 {
					pre = "A:"
				}
				y := func(k, l int) float64 {
					return vals[pre+DunhamName(k, l)] * math.Pow(r, float64(k+2*l))
				}
				c := map[string]float64{
					"T": vals[pre+"T_e"] + y(1, 0)*vh + y(2, 0)*vh*vh,
					"B": y(0, 1) + y(1, 1)*vh, "D": -(y(0, 2)),
					"A": vals["A_e"] - vals["alpha_A"]*r*vh, "A_D": vals["A_D"] * r * r,
					"gamma": vals[pre+"gamma_e"]*r*r - vals[pre+"alpha_gamma"]*r*r*r*vh, "gamma_D": vals[pre+"gamma_D"] * math.Pow(r, 4),
					"p": vals["p_e"]*r*r - vals["alpha_p"]*r*r*r*vh, "q": vals["q_e"] * math.Pow(r, 4),
					"p_D": vals["p_D"] * math.Pow(r, 4), "q_D": vals["q_D"] * math.Pow(r, 6),
					"A_H": vals["A_H"] * math.Pow(r, 4), "gamma_H": vals[pre+"gamma_H"] * math.Pow(r, 6),
				}
				terms := append([]string{"B", "D"}, FineTerms(state.Case())...)
				tv, err := NewTermValuesStates([]states.State{state}, []LevelSpec{{Species: label, V: []int{v}}}, terms, nil)
				if err != nil {
					t.Fatal(err)
				}
				tp := make([]float64, len(tv.Params()))
				for i, q := range tv.Params() {
					tp[i] = c[q.Name]
				}
				n := 0
				m.Sublevels(s, st, v, 61, p, false, func(sl Sublevel) {
					lv := sl.Level
					lv.State = 0
					want := tv.LevelEnergy(0, lv, tp, nil)
					if !scalar.EqualWithinAbsOrRel(sl.E, want, 1e-8, 1e-12) {
						t.Errorf("%s %s v=%d J=%s F%d %s: Dunham %.10g, term values %.10g", label, state.Label, v, states.FormatJ(sl.J2), sl.F, sl.Parity, sl.E, want)
					}
					n++
				})
				if n < 60 {
					t.Errorf("%s %s v=%d: %d levels", label, state.Label, v, n)
				}
			}
		}
	}
	// Gradients of a band of the A–X system and of a rotational line in X.
	n := len(p)
	grad := make([]float64, n)
	for _, c := range [][2]Level{
		{{State: 1, V: 1, J2: 11, F: 2}, {State: 0, V: 0, J2: 9, F: 1, Parity: states.ParityF}},
		{{State: 0, V: 1, J2: 21, F: 2, Parity: states.ParityE}, {State: 0, V: 1, J2: 19, F: 1, Parity: states.ParityE}},
	} {
		for s := range m.Species() {
			m.LevelTransition(s, c[0], c[1], p, grad)
			num := make([]float64, n)
			x := make([]float64, n)
			f := func(tv []float64) float64 {
				for j := range x {
					x[j] = p[j] + math.Abs(p[j])*tv[j]
				}
				nu, _ := m.LevelTransition(s, c[0], c[1], x, nil)
				return nu
			}
			fd.Gradient(num, f, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: 1e-4})
			for j := range num {
				if !scalar.EqualWithinAbsOrRel(grad[j]*math.Abs(p[j]), num[j], 1e-7, 1e-6) {
					t.Errorf("%+v: ∂ν/∂%s = %g analytic, %g finite difference", c, m.Params()[j].ID(), grad[j], num[j]/math.Abs(p[j]))
				}
			}
		}
	}
}

// TestHydroxylLambdaDoubling checks the sign convention and size of p and q:
// with OH X²Π v = 0 constants (B = 18.535, D = 1.91e-3, A = −139.05, γ =
// −0.119, p = +0.2355, q = −0.0387 cm⁻¹; Coxon 1980 and later work, from
// memory) the Λ-doubling of the lowest levels must match the centres of the
// hyperfine quartets of the OH radio lines (from memory: ²Π3/2 J = 3/2 lines
// at 1665.40 and 1667.36 MHz, centre ≈ 1666.4; J = 5/2 at 6016.7 … 6049.1,
// centre ≈ 6033; ²Π½ J = 3/2 at 7749.9 … 7832.0, centre ≈ 7791), within 0.5 %
// for constants recalled to three or four digits.
func TestHydroxylLambdaDoubling(t *testing.T) {
	m, err := NewTermValuesStates([]states.State{stDoubletPi}, []LevelSpec{{Species: "16O1H", V: []int{0}}}, []string{"B", "D", "A", "gamma", "p", "q"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	p := []float64{0, 18.535, 1.91e-3, -139.05, -0.119, 0.2355, -0.0387}
	const mhz = 29979.2458
	for _, c := range []struct {
		j2, f int
		want  float64
	}{{3, 1, 1666.4}, {5, 1, 6033}, {3, 2, 7791}} {
		e := m.LevelEnergy(0, Level{J2: c.j2, F: c.f, Parity: states.ParityE}, p, nil)
		f := m.LevelEnergy(0, Level{J2: c.j2, F: c.f, Parity: states.ParityF}, p, nil)
		got := math.Abs(e-f) * mhz
		if !scalar.EqualWithinRel(got, c.want, 0.005) {
			t.Errorf("J = %s F%d: Λ-doubling %.1f MHz, want %.1f", states.FormatJ(c.j2), c.f, got, c.want)
		}
	}
}

// TestLambdaDoublingSignOfQ checks the sign of q against what it stands for.
// A ²Σ⁺ or ¹Σ⁺ state has levels of parity (−1)^N only (common practice), so
// it interacts with the Λ component of a Π state whose parity is (−1)^N, and
// from above pushes it down; in the trade's convention that makes q
// negative, q = 2Σ(−1)^s|⟨Π|BL₊|Σ^s⟩|²/(E_Π − E_Σ), s = 0 for Σ⁺ (Brown and
// Merer, J. Mol. Spectrosc. 74, 488 (1979), from memory) — as for OH X²Π,
// whose Λ-doubling comes mostly from A²Σ⁺ above it and whose q is −0.0387
// cm⁻¹ (from memory). So with q < 0 and no spin–orbit coupling (A = γ = p
// = 0: Hund's case (b), the spin a spectator) the component of parity (−1)^N
// lies |q|·N(N+1) below the other: in ¹Π the e level of each J (e: parity
// (−1)^J, Brown et al. 1975), in ²Π the e level of F1 (J = N + ½, e: parity
// (−1)^(J−½)) and the f level of F2 (J = N − ½). The p operator is tied to
// q by the next test.
func TestLambdaDoublingSignOfQ(t *testing.T) {
	const b, q = 1.5, -0.01
	for _, c := range []struct {
		st     states.State
		j2, f  int
		n      int
		lowEnd states.Parity // the parity label of the component of parity (−1)^N
	}{
		{stSingletPi, 10, 0, 5, states.ParityE},
		{stSingletPi, 21 * 2, 0, 21, states.ParityE},
		{stDoubletPi, 19, 1, 9, states.ParityE},
		{stDoubletPi, 19, 2, 10, states.ParityF},
		{stDoubletPi, 41, 1, 20, states.ParityE},
		{stDoubletPi, 41, 2, 21, states.ParityF},
	} {
		var cs Effective
		cs[qB], cs[qQ] = b, q
		energy := func(par states.Parity) float64 {
			e, ok := EffectiveLevel(c.st, &cs, Level{J2: c.j2, F: c.f, Parity: par})
			if !ok {
				t.Fatalf("%s J = %s F%d %v: no level", c.st.Term(), states.FormatJ(c.j2), c.f, par)
			}
			return e
		}
		other := states.ParityF
		if c.lowEnd == states.ParityF {
			other = states.ParityE
		}
		nn := float64(c.n) * float64(c.n+1)
		split := energy(c.lowEnd) - energy(other)
		if !scalar.EqualWithinAbsOrRel(split, q*nn, 1e-12, 1e-9) {
			t.Errorf("%s J = %s F%d (N = %d): E(%v) − E(%v) = %.6g, want q·N(N+1) = %.6g", c.st.Term(), states.FormatJ(c.j2), c.f, c.n, c.lowEnd, other, split, q*nn)
		}
	}
}

// TestLambdaDoublingPPlusTwoQ ties p to q: in the case-(a) limit the
// Λ-doubling of the Ω = ½ levels of a ²Π state is (p + 2q)(J + ½) (Mulliken
// and Christy 1931, with the e/f labels of Brown et al. 1975; common
// practice), so p and 2q of one sign add: p alone splits them as much as q =
// p/2 alone, with the same sign of E(e) − E(f). With q's sign fixed by
// TestLambdaDoublingSignOfQ this fixes p's. In this model E(e) − E(f) =
// −(p + 2q)(J + ½) (package doc): with p + 2q > 0, as for NO and OH, the e
// level of ²Π½ J = ½ is the lower.
func TestLambdaDoublingPPlusTwoQ(t *testing.T) {
	// Case (a): A/B = 10⁵, so that the Ω-mixing of the rotation, of order
	// B(J+½)²/A, stays below 2·10⁻³ of the splitting; first order in p, q.
	const b, a, x = 0.001, 100.0, 1e-4
	for _, j2 := range []int{1, 3, 9, 21} {
		split := func(p, q float64) float64 {
			var cs Effective
			cs[qB], cs[qA], cs[qP], cs[qQ] = b, a, p, q
			e, _ := EffectiveLevel(stDoubletPi, &cs, Level{J2: j2, F: 1, Parity: states.ParityE})
			f, _ := EffectiveLevel(stDoubletPi, &cs, Level{J2: j2, F: 1, Parity: states.ParityF})
			return e - f
		}
		want := -x * (float64(j2)/2 + 0.5)
		sp, sq := split(x, 0), split(0, x/2)
		if !scalar.EqualWithinRel(sp, want, 5e-3) || !scalar.EqualWithinRel(sq, want, 5e-3) {
			t.Errorf("Ω = ½, J = %s: E(e) − E(f) = %.6g with p alone, %.6g with q = p/2 alone; want −(p + 2q)(J + ½) = %.6g", states.FormatJ(j2), sp, sq, want)
		}
	}
}
