package fit

import (
	"math"
	"math/rand/v2"
	"testing"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
)

// This file holds the test helpers shared by the fit tests: reference
// constants, an independent line generator, and lookups into a Result.

// hhConst is a row of the table of ground-state constants of Huber & Herzberg,
// Constants of Diatomic Molecules (1979), as restated in docs/references.md; all
// values from memory. Energies in cm⁻¹, re in Å.
type hhConst struct {
	label          string
	we, wexe, weye float64
	be, ae, de     float64
	re             float64
	hasWeye        bool
	bands          [][2]int // bands (v′, v″) used to generate lines
	jmax           int
	raman          bool // O, Q, S branches and pure-rotation S lines instead of P and R
}

// Huber & Herzberg (1979), from memory (docs/references.md).
var (
	hhCO = hhConst{label: "12C16O", we: 2169.81358, wexe: 13.28831, weye: 0.010511, be: 1.93128087, ae: 0.01750441, de: 6.12147e-6, re: 1.128323, hasWeye: true,
		bands: [][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}}, jmax: 30}
	hhHCl = hhConst{label: "1H35Cl", we: 2990.946, wexe: 52.8186, weye: 0.2243, be: 10.59341, ae: 0.30718, de: 5.3194e-4, re: 1.27455, hasWeye: true,
		bands: [][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}}, jmax: 15}
	hhN2 = hhConst{label: "14N14N", we: 2358.57, wexe: 14.324, weye: -0.00226, be: 1.99824, ae: 0.017318, de: 5.76e-6, re: 1.09768, hasWeye: true,
		bands: [][2]int{{1, 0}, {2, 1}, {3, 2}, {0, 0}}, jmax: 30, raman: true}
	hhHF = hhConst{label: "1H19F", we: 4138.32, wexe: 89.88, be: 20.9557, ae: 0.798, de: 2.151e-3, re: 0.91680,
		bands: [][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}}, jmax: 12}
)

// yset holds Dunham coefficients Y_kl (cm⁻¹) by (k, l).
type yset map[[2]int]float64

// dunham returns the Dunham coefficients of the table row to first order:
// Y10 = ωe, Y20 = −ωexe, Y30 = ωeye, Y01 = Be, Y11 = −αe, Y02 = −De (common
// practice).
func (c hhConst) dunham() yset {
	y := yset{{1, 0}: c.we, {2, 0}: -c.wexe, {0, 1}: c.be, {1, 1}: -c.ae, {0, 2}: -c.de}
	if c.hasWeye {
		y[[2]int{3, 0}] = c.weye
	}
	return y
}

// terms lists the Y names of y in a fixed order.
func (y yset) terms() []string {
	var out []string
	for l := 0; l <= 9; l++ {
		for k := 0; k <= 9; k++ {
			if _, ok := y[[2]int{k, l}]; ok {
				out = append(out, model.DunhamName(k, l))
			}
		}
	}
	return out
}

// termEnergy is the Dunham expansion E(v, J) = Σ_kl Y_kl (v+½)^k [J(J+1)]^l
// (Dunham 1932; common practice), written out here independently of package
// model. The terms are summed in a fixed order so that the generated data
// are the same in every run.
func termEnergy(y yset, v, J int) float64 {
	e := 0.0
	x := float64(J) * float64(J+1)
	for l := 0; l <= 9; l++ {
		for k := 0; k <= 9; k++ {
			if c, ok := y[[2]int{k, l}]; ok {
				e += c * math.Pow(float64(v)+0.5, float64(k)) * math.Pow(x, float64(l))
			}
		}
	}
	return e
}

// massScaled returns Y_kl·(μ_ref/μ)^((k+2l)/2), the first-order Dunham isotope
// relation Y_kl ∝ μ^−(k/2+l) (docs/references.md).
func massScaled(y yset, muRef, mu float64) yset {
	out := yset{}
	for kl, c := range y {
		out[kl] = c * math.Pow(muRef/mu, float64(kl[0]+2*kl[1])/2)
	}
	return out
}

func reducedMass(t testing.TB, label string) float64 {
	t.Helper()
	iso, err := species.Parse(label)
	if err != nil {
		t.Fatal(err)
	}
	return iso.ReducedMass()
}

// trans is a transition (v′, J′) ← (v″, J″).
type trans struct{ vu, ju, vl, jl int }

// irBranches returns the P (J″ = 1…jmax) and R (J″ = 0…jmax−1) lines of each
// vibrational band, and the R lines J+1 ← J of a pure-rotation "band" v–v.
func irBranches(bands [][2]int, jmax int) []trans {
	var out []trans
	for _, b := range bands {
		for j := 0; j < jmax; j++ {
			out = append(out, trans{b[0], j + 1, b[1], j})
		}
		if b[0] == b[1] {
			continue
		}
		for j := 1; j <= jmax; j++ {
			out = append(out, trans{b[0], j - 1, b[1], j})
		}
	}
	return out
}

// ramanBranches returns the O, Q and S lines of each vibrational band and
// the S lines J+2 ← J of pure rotation (Raman selection rules ΔJ = 0, ±2;
// common practice).
func ramanBranches(bands [][2]int, jmax int) []trans {
	var out []trans
	for _, b := range bands {
		for j := 0; j+2 <= jmax; j++ {
			out = append(out, trans{b[0], j + 2, b[1], j})
		}
		if b[0] == b[1] {
			continue
		}
		for j := 0; j <= jmax; j++ {
			out = append(out, trans{b[0], j, b[1], j})
		}
		for j := 2; j <= jmax; j++ {
			out = append(out, trans{b[0], j - 2, b[1], j})
		}
	}
	return out
}

func (c hhConst) transitions() []trans {
	if c.raman {
		return ramanBranches(c.bands, c.jmax)
	}
	return irBranches(c.bands, c.jmax)
}

// makeLines turns transitions into lines of one file computed from y, with
// uncertainty unc (cm⁻¹) and, when rng is not nil, Gaussian noise of
// standard deviation unc added. Rows are numbered from 2 (row 1 is a header).
func makeLines(label, file string, y yset, ts []trans, unc float64, rng *rand.Rand) []linelist.Line {
	out := make([]linelist.Line, 0, len(ts))
	for i, t := range ts {
		nu := termEnergy(y, t.vu, t.ju) - termEnergy(y, t.vl, t.jl)
		if rng != nil {
			nu += unc * rng.NormFloat64()
		}
		out = append(out, linelist.Line{File: file, Row: i + 2, Species: label,
			VUp: t.vu, JUp: t.ju, VLo: t.vl, JLo: t.jl, Position: nu, Unc: unc})
	}
	return out
}

// renumber gives the lines consecutive rows in file order.
func renumber(ls []linelist.Line) {
	for i := range ls {
		ls[i].Row = i + 2
	}
}

func newRNG(seed uint64) *rand.Rand { return rand.New(rand.NewPCG(seed, 0x62616e64)) }

// mustFit builds a model for lines and fits it, failing the test on error.
func mustFit(t testing.TB, lines []linelist.Line, spec ModelSpec, s Settings) *Result {
	t.Helper()
	m, err := BuildModel(lines, spec)
	if err != nil {
		t.Fatalf("BuildModel: %v", err)
	}
	r, err := Fit(Problem{Lines: lines, Model: m}, s)
	if err != nil {
		t.Fatalf("Fit: %v", err)
	}
	return r
}

// paramOf returns the parameter with the given ID.
func paramOf(t testing.TB, r *Result, id string) model.Param {
	t.Helper()
	for _, p := range r.Params {
		if p.ID() == id {
			return p
		}
	}
	t.Fatalf("no parameter %s among %v", id, r.CovNames())
	return model.Param{}
}

// derivedOf returns the derived constant name of species sp ("" for none).
func derivedOf(t testing.TB, ds []constants.Derived, name, sp string) constants.Derived {
	t.Helper()
	for _, d := range ds {
		if d.Name == name && d.Species == sp {
			return d
		}
	}
	t.Fatalf("no derived constant %s[%s]", name, sp)
	return constants.Derived{}
}

// lre is the log relative error −log10(|x − ref|/|ref|), the accuracy
// measure of the NIST StRD, capped at 16.
func lre(x, ref float64) float64 {
	d := math.Abs(x - ref)
	if d == 0 {
		return 16
	}
	return math.Min(16, -math.Log10(d/math.Abs(ref)))
}
