package model

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/species"
	"bandwright/units"
)

func mustIsos(t *testing.T, labels ...string) []species.Isotopologue { return mustIsosB(t, labels...) }

func mustIsosB(t testing.TB, labels ...string) []species.Isotopologue {
	t.Helper()
	var out []species.Isotopologue
	for _, l := range labels {
		iso, err := species.Parse(l)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, iso)
	}
	return out
}

// checkGradient compares the analytic gradient of m.Energy with a central
// finite difference (gonum diff/fd) at p, for every species and a grid of
// (v, J). The difference is taken in units of step[j] per parameter
// (p_j + step_j·t_j), so parameters of very different size are probed alike.
func checkGradient(t *testing.T, m Model, p, step []float64, vs []int, jmax int) {
	t.Helper()
	n := len(p)
	grad := make([]float64, n)
	num := make([]float64, n)
	x := make([]float64, n)
	for s := range m.Species() {
		for _, v := range vs {
			if !m.HasLevel(s, v) {
				continue
			}
			for J := 0; J <= jmax; J += 7 {
				e := m.Energy(s, v, J, p, grad)
				f := func(tv []float64) float64 {
					for j := range x {
						x[j] = p[j] + step[j]*tv[j]
					}
					return m.Energy(s, v, J, x, nil)
				}
				fd.Gradient(num, f, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: 1e-3})
				for j := range num {
					an := grad[j] * step[j]
					if !scalar.EqualWithinAbsOrRel(an, num[j], 1e-9*(math.Abs(e)+1), 1e-7) {
						t.Errorf("%s s=%d v=%d J=%d: ∂E/∂%s = %g analytic, %g finite difference", m.Kind(), s, v, J, m.Params()[j].ID(), grad[j], num[j]/step[j])
					}
				}
			}
		}
	}
}

// TestTermValuesEnergyGradient checks E = T_v + B_v x − D_v x² + H_v x³ + L_v x⁴ and its
// gradient against diff/fd for two isotopologues with different levels.
func TestTermValuesEnergyGradient(t *testing.T) {
	m, err := NewTermValues([]LevelSpec{{Species: "12C16O", V: []int{0, 1, 2}}, {Species: "13C16O", V: []int{1, 3}}}, []string{"B", "D", "H", "L"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	ps := m.Params()
	p := make([]float64, len(ps))
	step := make([]float64, len(ps))
	base := map[string]float64{"T": 2000, "B": 1.9, "D": 6e-6, "H": 5e-12, "L": 1e-17}
	for i, q := range ps {
		p[i] = base[q.Name] * (1 + 0.1*rng.Float64())
		step[i] = base[q.Name] * 1e-3
	}
	checkGradient(t, m, p, step, []int{0, 1, 2, 3}, 60)
	// Independent evaluation of the formula (the sign convention −D x²).
	s, v, J := 1, 3, 10
	x := float64(J * (J + 1))
	want := p[m.Index(s, v, "T")] + p[m.Index(s, v, "B")]*x - p[m.Index(s, v, "D")]*x*x + p[m.Index(s, v, "H")]*x*x*x + p[m.Index(s, v, "L")]*x*x*x*x
	if got := m.Energy(s, v, J, p, nil); !scalar.EqualWithinRel(got, want, 1e-14) {
		t.Errorf("E = %.15g, want %.15g", got, want)
	}
	if got := m.Energy(0, 3, 0, p, nil); !math.IsNaN(got) {
		t.Errorf("E of a level without parameters = %g, want NaN", got)
	}
}

// TestDunhamEnergyGradient checks the Dunham energy of several isotopologues with
// breakdown terms against the form of docs/references.md,
//
//	Y_kl(s) = U_kl μ_s^−(k+2l)/2 [1 + (m_e/M_A)Δ_kl^A + (m_e/M_B)Δ_kl^B],
//
// evaluated here from chosen U_kl and Δ_kl, and its gradient against diff/fd.
func TestDunhamEnergyGradient(t *testing.T) {
	isos := mustIsos(t, "1H35Cl", "2H35Cl", "1H37Cl", "2H37Cl")
	terms := []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02", "Y12"}
	m, err := NewDunham(isos, DunhamOptions{Terms: terms, BOBTerms: []string{"Y10", "Y01"}})
	if err != nil {
		t.Fatal(err)
	}
	// Reference Y_kl of 1H35Cl (Huber & Herzberg 1979, from memory, and a
	// made-up Y12) and test breakdown constants Δ (invented values).
	yr := map[[2]int]float64{{1, 0}: 2990.946, {2, 0}: -52.8186, {3, 0}: 0.2243, {0, 1}: 10.59341, {1, 1}: -0.30718, {0, 2}: -5.3194e-4, {1, 2}: -1e-5}
	delta := map[[2]int]map[string]float64{{1, 0}: {"H": -0.3, "Cl": 0.4}, {0, 1}: {"H": 0.5, "Cl": -0.2}}
	inv := func(iso species.Isotopologue, el string) float64 {
		s := 0.0
		for _, a := range []species.Isotope{iso.A, iso.B} {
			if a.Symbol == el {
				s += 1 / a.Mass
			}
		}
		return s
	}
	muR := isos[0].ReducedMass()
	// Parameters: Y_kl(r) = Ỹ(1 + m_e Σ S_X(r) Δ^X), δ^X = Ỹ Δ^X with Ỹ the
	// Born–Oppenheimer value of the reference.
	ps := m.Params()
	p := make([]float64, len(ps))
	for i, q := range ps {
		kl := [2]int{q.K, q.L}
		switch {
		case q.Element == "":
			y := yr[kl]
			for el, d := range delta[kl] {
				y += yr[kl] * units.ElectronMass * inv(isos[0], el) * d
			}
			p[i] = y
		default:
			p[i] = yr[kl] * delta[kl][q.Element]
		}
	}
	for s, iso := range isos {
		mu := iso.ReducedMass()
		for _, vj := range [][2]int{{0, 0}, {1, 5}, {3, 20}} {
			v, J := vj[0], vj[1]
			want := 0.0
			x := float64(J * (J + 1))
			for kl, y := range yr {
				ys := y * math.Pow(muR/mu, float64(kl[0]+2*kl[1])/2)
				f := 1.0
				for el, d := range delta[kl] {
					f += units.ElectronMass * inv(iso, el) * d
				}
				want += ys * f * math.Pow(float64(v)+0.5, float64(kl[0])) * math.Pow(x, float64(kl[1]))
			}
			if got := m.Energy(s, v, J, p, nil); !scalar.EqualWithinRel(got, want, 1e-13) {
				t.Errorf("%s v=%d J=%d: E = %.15g, want %.15g", iso.Label, v, J, got, want)
			}
		}
	}
	step := make([]float64, len(p))
	for i := range p {
		step[i] = math.Abs(p[i]) * 1e-3
	}
	checkGradient(t, m, p, step, []int{0, 1, 4}, 40)

	// Y and its gradient.
	g := make([]float64, len(p))
	for s := range isos {
		y := m.Y(s, 0, 1, p, g)
		f := func(tv []float64) float64 {
			x := make([]float64, len(p))
			for j := range x {
				x[j] = p[j] + step[j]*tv[j]
			}
			return m.Y(s, 0, 1, x, nil)
		}
		num := fd.Gradient(nil, f, make([]float64, len(p)), &fd.Settings{Formula: fd.Central, Step: 1e-3})
		for j := range num {
			if !scalar.EqualWithinAbsOrRel(g[j]*step[j], num[j], 1e-12*math.Abs(y), 1e-7) {
				t.Errorf("%s: ∂Y01/∂%s = %g, finite difference %g", isos[s].Label, ps[j].ID(), g[j], num[j]/step[j])
			}
		}
	}
}

// TestDunhamParams checks the parameter order (l, then k; breakdown last), that
// the reference comes first, and the refusals of NewDunham.
func TestDunhamParams(t *testing.T) {
	isos := mustIsos(t, "13C16O", "12C16O")
	m, err := NewDunham(isos, DunhamOptions{Terms: []string{"Y01", "Y10", "Y02", "Y20", "Y11"}, Reference: 1, BOBTerms: []string{"Y01"},
		Fixes: []Fix{{Name: "Y03", V: -1, Value: 1e-12}}})
	if err != nil {
		t.Fatal(err)
	}
	var ids []string
	for _, p := range m.Params() {
		ids = append(ids, p.ID())
	}
	want := []string{"Y10", "Y20", "Y01", "Y11", "Y02", "Y03", "BOB01_C"}
	if len(ids) != len(want) {
		t.Fatalf("params %v, want %v", ids, want)
	}
	for i := range want {
		if ids[i] != want[i] {
			t.Fatalf("params %v, want %v", ids, want)
		}
	}
	if sp := m.Species(); sp[0] != "12C16O" {
		t.Errorf("species %v: reference 12C16O must come first", sp)
	}
	if p := m.Params()[5]; !p.Fixed || p.Value != 1e-12 {
		t.Errorf("Y03 from --fix: %+v", p)
	}
	// Scale of 13C16O for Y01: μ(12C16O)/μ(13C16O).
	if got, want := m.Scale(1, 0, 1), isos[1].ReducedMass()/isos[0].ReducedMass(); !scalar.EqualWithinRel(got, want, 1e-15) {
		t.Errorf("scale of Y01 = %.15g, want %.15g", got, want)
	}
	for _, bad := range []DunhamOptions{
		{Terms: nil},
		{Terms: []string{"Y00"}},
		{Terms: []string{"Y1"}},
		{Terms: []string{"Y10"}, Reference: 5},
		{Terms: []string{"Y10"}, BOBTerms: []string{"Y01"}},
		{Terms: []string{"Y10"}, Fixes: []Fix{{Name: "Q", V: -1}}},
	} {
		if _, err := NewDunham(isos, bad); err == nil {
			t.Errorf("NewDunham accepted %+v", bad)
		}
	}
	if _, err := NewDunham(mustIsos(t, "12C16O", "1H35Cl"), DunhamOptions{Terms: []string{"Y10"}}); err == nil {
		t.Error("NewDunham accepted isotopologues of two molecules")
	}
}

// TestParseFix checks the --fix syntax.
func TestParseFix(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want Fix
	}{
		{"D=6.1e-6", Fix{Name: "D", V: -1, Value: 6.1e-6}},
		{"D_v1=2e-6", Fix{Name: "D", V: 1, Value: 2e-6}},
		{"B_v0[13C16O]=1.8", Fix{Name: "B", V: 0, Species: "13C16O", Value: 1.8}},
		{"Y02=-6.12e-6", Fix{Name: "Y02", V: -1, Value: -6.12e-6}},
		{"BOB01_H=0.1", Fix{Name: "BOB01_H", V: -1, Value: 0.1}},
	} {
		got, err := ParseFix(tc.in)
		if err != nil || got != tc.want {
			t.Errorf("ParseFix(%q) = %+v, %v; want %+v", tc.in, got, err, tc.want)
		}
	}
	for _, bad := range []string{"D", "D=x", "D=NaN", "D_vx=1", "=1", "D[=1", "D=1e400"} {
		if _, err := ParseFix(bad); err == nil {
			t.Errorf("ParseFix(%q) accepted", bad)
		}
	}
}

// TestTransition checks Transition against the difference of two energies,
// its gradient against diff/fd, the exact cancellation of level terms within a
// level (pure rotation) and of J terms in a Q line, and NaN for a missing level.
func TestTransition(t *testing.T) {
	isos := mustIsos(t, "1H35Cl", "2H35Cl")
	dm, err := NewDunham(isos, DunhamOptions{Terms: []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02", "Y12"}, BOBTerms: []string{"Y01"}})
	if err != nil {
		t.Fatal(err)
	}
	dp := []float64{2990.946, -52.8186, 0.2243, 10.59341, -0.30718, -5.3194e-4, -1e-5, 0.3}
	lm, err := NewTermValues([]LevelSpec{{Species: "12C16O", V: []int{0, 1, 2}}, {Species: "13C16O", V: []int{0, 1}}}, []string{"B", "D", "H"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	lp := make([]float64, len(lm.Params()))
	for i, q := range lm.Params() {
		lp[i] = map[string]float64{"T": 2143.27 * float64(q.V), "B": 1.93 - 0.0175*float64(q.V), "D": 6.1e-6, "H": 5.8e-12}[q.Name]
	}
	for _, tc := range []struct {
		m Model
		p []float64
	}{{dm, dp}, {lm, lp}} {
		m, p := tc.m, tc.p
		tr := m.(Transitioner)
		n := len(p)
		g := make([]float64, n)
		gu := make([]float64, n)
		gl := make([]float64, n)
		for s := range m.Species() {
			for _, q := range [][4]int{{1, 5, 0, 4}, {1, 3, 0, 4}, {2, 10, 1, 9}, {2, 20, 0, 21}, {0, 11, 0, 10}, {1, 31, 1, 30}, {1, 7, 0, 7}} {
				vu, ju, vl, jl := q[0], q[1], q[2], q[3]
				if !m.HasLevel(s, vu) || !m.HasLevel(s, vl) {
					if nu, _ := tr.Transition(s, vu, ju, vl, jl, p, g); !math.IsNaN(nu) {
						t.Errorf("%s: transition to a missing level = %g, want NaN", m.Kind(), nu)
					}
					continue
				}
				nu, mag := tr.Transition(s, vu, ju, vl, jl, p, g)
				eu, el := m.Energy(s, vu, ju, p, gu), m.Energy(s, vl, jl, p, gl)
				if !scalar.EqualWithinAbsOrRel(nu, eu-el, 1e-12*(math.Abs(eu)+math.Abs(el)), 1e-12) || !(mag >= math.Abs(nu)) {
					t.Errorf("%s s=%d %v: ν = %.15g (mag %g), E′ − E″ = %.15g", m.Kind(), s, q, nu, mag, eu-el)
				}
				for j := range g {
					d := gu[j] - gl[j]
					if !scalar.EqualWithinAbsOrRel(g[j], d, 1e-9*math.Abs(gu[j])+1e-300, 1e-12) {
						t.Errorf("%s s=%d %v: ∂ν/∂%s = %g, difference of energy gradients %g", m.Kind(), s, q, m.Params()[j].ID(), g[j], d)
					}
					// Exact zeros: within one level the level terms cancel, in
					// a Q line the pure-J terms do.
					if d == 0 && g[j] != 0 {
						t.Errorf("%s s=%d %v: ∂ν/∂%s = %g, want exactly 0", m.Kind(), s, q, m.Params()[j].ID(), g[j])
					}
				}
				f := func(u []float64) float64 {
					x := make([]float64, n)
					for j := range x {
						x[j] = p[j] * (1 + 1e-3*u[j])
					}
					v, _ := tr.Transition(s, vu, ju, vl, jl, x, nil)
					return v
				}
				num := fd.Gradient(nil, f, make([]float64, n), &fd.Settings{Formula: fd.Central, Step: 1})
				for j := range num {
					if !scalar.EqualWithinAbsOrRel(g[j]*p[j]*1e-3, num[j], 1e-9*(mag+1), 1e-7) {
						t.Errorf("%s %v: ∂ν/∂%s = %g, finite difference %g", m.Kind(), q, m.Params()[j].ID(), g[j], num[j]/(p[j]*1e-3))
					}
				}
			}
		}
	}
}
