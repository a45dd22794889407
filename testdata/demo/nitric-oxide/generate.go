//go:build ignore

// generate.go writes the second scenario of bandwright's bundled demo: an
// INVENTED measurement. The "Larkspur Ridge gas-cell laboratory" does not
// exist; its FTIR spectrum of a hot nitric-oxide cell is simulated here from
// published constants, so the demo exercises the chain for an open-shell
// molecule (fit with the ²Π fine structure → thermo → report) with known
// answers.
//
// The spectrum: 14N16O X²Π at 700 K, the fundamental 1-0 and the hot band
// 2-1, both spin–orbit subbands (²Π1/2 and ²Π3/2), P, Q and R branches with
// their Λ-doubling components (e and f levels). The levels come from the
// effective Hamiltonian of package fit/model with the constants of Huber &
// Herzberg (1979) for the vibration (ω_e 1904.20, ω_e x_e 14.075 cm⁻¹) and
// of later infrared and microwave work for the rest (B_0 1.69611, B_1
// 1.67860, D 5.47e-6, A_v 123.139 − 0.227 v, γ −0.0062, p 0.0117, q 7e-5
// cm⁻¹); all from memory. A line is kept when the population of its lower
// level at 700 K, (2J″+1)·exp(−hcE″/kT), is above 0.2 % of the largest
// (Hönl–London factors left out: a rough detection limit), 4 % of the kept
// lines are lost at random, of two lines closer than 0.002 cm⁻¹ (one peak)
// the first is kept, and each position gets Gaussian noise of its 1σ,
// 0.0015 cm⁻¹ (0.003 cm⁻¹ for the weaker hot band).
//
// Run from the repository root:   go run ./testdata/demo/nitric-oxide/generate.go
package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"

	"bandwright/fit/model"
	"bandwright/fit/states"
)

const statesFile = `# INVENTED DEMO — electronic states of the fictional Larkspur Ridge NO cell.
# 14N16O X 2Pi_r (Huber & Herzberg 1979, from memory): the fit needs the
# state's spin and Lambda to know the levels; thermo takes D0 from here.
species = "14N16O"
dissociation_energy = 52400.0     # D0 = 6.497 eV, from memory
dissociation_energy_sigma = 20.0

[[state]]
label = "X"
term_energy = 0.0
spin_multiplicity = 2
lambda = 1
[state.start]
A = 120.0      # a first guess; the fit tries both signs of A anyway
`

const pipeline = `# INVENTED DEMO — the pipeline the fictional Larkspur Ridge laboratory runs
# after each session with its hot nitric-oxide cell (an assigned line list:
# bandwright assign does not assign open-shell spectra yet).
name = "larkspur-no-cell (invented demo)"
input = "lines"
states = "states.toml"

[fit]
model = "term-values"
terms = ["B", "D", "A", "gamma", "p", "q"]
reject = 3.0

[thermo]
range = "100:3000:100"
composition = "natural"

[report]
formats = ["html", "md"]
`

type level struct {
	v int
	model.Sublevel
}

func main() {
	dir := filepath.Join("testdata", "demo", "nitric-oxide")
	st := states.State{Label: "X", Multiplicity: 2, Lambda: 1}
	terms := []string{"B", "D", "A", "gamma", "p", "q"}
	m, err := model.NewTermValuesStates([]states.State{st}, []model.LevelSpec{{Species: "14N16O", V: []int{0, 1, 2}}}, terms, nil)
	if err != nil {
		fail(err)
	}
	p := make([]float64, len(m.Params()))
	for i, par := range m.Params() {
		v := float64(par.V)
		u := v + 0.5
		p[i] = map[string]float64{"T": 1904.20*u - 14.075*u*u - (1904.20*0.5 - 14.075*0.25), "B": 1.69611 - 0.01751*v, "D": 5.47e-6,
			"A": 123.139 - 0.227*v, "gamma": -0.0062, "p": 0.0117, "q": 7e-5}[par.Name]
	}
	levels := map[int][]level{}
	e0 := math.Inf(1)
	for v := 0; v <= 2; v++ {
		m.Sublevels(0, 0, v, 121, p, false, func(l model.Sublevel) {
			levels[v] = append(levels[v], level{v, l})
			e0 = math.Min(e0, l.E)
		})
	}
	const kT = 700 / 1.438776877 // cm⁻¹
	pop := func(l level) float64 { return float64(l.J2+1) * math.Exp(-(l.E-e0)/kT) }
	top := 0.0
	for _, l := range levels[0] {
		top = math.Max(top, pop(l))
	}
	rng := rand.New(rand.NewPCG(20261203, 11))
	parity := func(l level) int {
		s := 1
		if (l.J2/2)%2 == 1 {
			s = -1
		}
		return s * int(l.Parity)
	}
	f, err := os.Create(filepath.Join(dir, "lines.csv"))
	if err != nil {
		fail(err)
	}
	fmt.Fprintln(f, "# INVENTED DEMO DATA — not a measurement. Larkspur Ridge gas-cell laboratory (fictional): assigned FTIR lines of a nitric-oxide cell at 700 K.")
	fmt.Fprintln(f, "# Simulated by testdata/demo/nitric-oxide/generate.go from published NO X2Pi constants (Huber & Herzberg 1979 and later work, from memory).")
	fmt.Fprintln(f, "species,v_up,J_up,F_up,parity_up,v_lo,J_lo,F_lo,parity_lo,position,unc")
	n := 0
	var written []float64 // exact positions of the lines kept
	for _, band := range [][2]int{{1, 0}, {2, 1}} {
		unc := 0.0015
		if band[1] > 0 {
			unc = 0.003
		}
		for _, lo := range levels[band[1]] {
			if pop(lo) < 2e-3*top {
				continue
			}
			for _, up := range levels[band[0]] {
				if d := up.J2 - lo.J2; d < -2 || d > 2 || up.F != lo.F || parity(up) == parity(lo) {
					continue
				}
				if rng.Float64() < 0.04 || blended(written, up.E-lo.E) {
					continue
				}
				written = append(written, up.E-lo.E)
				nu := up.E - lo.E + unc*rng.NormFloat64()
				fmt.Fprintf(f, "14N16O,%d,%s,%d,%s,%d,%s,%d,%s,%.4f,%g\n", band[0], jText(up.J2), up.F, up.Parity, band[1], jText(lo.J2), lo.F, lo.Parity, nu, unc)
				n++
			}
		}
	}
	if err := f.Close(); err != nil {
		fail(err)
	}
	for name, text := range map[string]string{"states.toml": statesFile, "pipeline.toml": pipeline} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			fail(err)
		}
	}
	fmt.Printf("lines.csv: %d lines; states.toml; pipeline.toml\n", n)
}

// blended reports whether a line at nu would fall within 0.002 cm⁻¹ of a
// line already kept: the two would be one peak, and the list keeps the first.
func blended(written []float64, nu float64) bool {
	for _, w := range written {
		if math.Abs(w-nu) < 0.002 {
			return true
		}
	}
	return false
}

func jText(j2 int) string { return strconv.FormatFloat(float64(j2)/2, 'f', 1, 64) }

func fail(err error) {
	fmt.Fprintln(os.Stderr, err)
	os.Exit(1)
}
