package report_test

import (
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/unit/constant"

	"bandwright/constants"
	"bandwright/pipelines"
)

// The fixtures of these tests are invented output folders: line lists
// simulated from published constants and fitted by the real fit stage
// (pipelines.RunFit), and thermo tables from the rigid-rotor/harmonic-
// oscillator formulas. The report is what is under test, not these numbers.

// coY are Dunham coefficients of 12C16O X¹Σ⁺ (cm⁻¹) from the constants of
// Huber & Herzberg (1979) as restated in docs/references.md, from memory:
// Y10 = ωe, Y20 = −ωexe, Y01 = Be, Y11 = −αe, Y02 = −De (common practice).
var coY = map[[2]int]float64{
	{1, 0}: 2169.81358, {2, 0}: -13.28831, {0, 1}: 1.93128087, {1, 1}: -0.01750441, {0, 2}: -6.12147e-6,
}

// coEnergy is the Dunham expansion E(v, J) = Σ Y_kl (v+½)^k [J(J+1)]^l.
func coEnergy(v, J int) float64 {
	e := 0.0
	x := float64(J * (J + 1))
	for kl, y := range coY {
		e += y * math.Pow(float64(v)+0.5, float64(kl[0])) * math.Pow(x, float64(kl[1]))
	}
	return e
}

// fixtureLine is one row of a simulated line list.
type fixtureLine struct {
	vUp, jUp, vLo, jLo int
	shift              float64 // added to the position (a misassignment)
	comment            string
}

// writeLines writes a line list of 12C16O with Gaussian noise of σ = unc.
func writeLines(t testing.TB, path string, lines []fixtureLine, unc float64, seed uint64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 7))
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	w := csv.NewWriter(f)
	w.Write([]string{"species", "v_up", "J_up", "v_lo", "J_lo", "position", "unc", "comment"})
	for _, l := range lines {
		nu := coEnergy(l.vUp, l.jUp) - coEnergy(l.vLo, l.jLo) + unc*rng.NormFloat64() + l.shift
		w.Write([]string{"12C16O", strconv.Itoa(l.vUp), strconv.Itoa(l.jUp), strconv.Itoa(l.vLo), strconv.Itoa(l.jLo),
			strconv.FormatFloat(nu, 'f', 6, 64), strconv.FormatFloat(unc, 'g', -1, 64), l.comment})
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
}

// bandLines returns the P(1…jmax) and R(0…jmax) lines of band vUp–vLo.
func bandLines(vUp, vLo, jmax int) []fixtureLine {
	var out []fixtureLine
	for j := 0; j <= jmax; j++ {
		if j >= 1 {
			out = append(out, fixtureLine{vUp: vUp, jUp: j - 1, vLo: vLo, jLo: j})
		}
		out = append(out, fixtureLine{vUp: vUp, jUp: j + 1, vLo: vLo, jLo: j})
	}
	return out
}

const scriptComment = "<script>alert(1)</script>"
const markdownComment = "see [here](http://example.invalid/x.png) | *bold* _it_ `code` # not a heading"

// fitFolder simulates a line list (1-0 and 2-1 bands, one 3-2 line on its
// own, one misassigned line, two commented lines) and fits it into a fresh
// folder, returned.
func fitFolder(t testing.TB) string {
	t.Helper()
	root := t.TempDir()
	lines := append(bandLines(1, 0, 25), bandLines(2, 1, 20)...)
	lines[3].comment = scriptComment
	lines[10].comment = markdownComment
	lines = append(lines,
		fixtureLine{vUp: 3, jUp: 6, vLo: 2, jLo: 5},                                        // a band of one line: no plot
		fixtureLine{vUp: 1, jUp: 8, vLo: 0, jLo: 7, shift: 0.8, comment: "overlaps water"}, // rejected
	)
	in := filepath.Join(root, "lines-in.csv")
	writeLines(t, in, lines, 0.0005, 1)
	out := filepath.Join(root, "out")
	if _, err := pipelines.RunFit(pipelines.FitOptions{Inputs: []string{in}, Model: "dunham", Reject: 3, Out: out}); err != nil {
		t.Fatal(err)
	}
	return out
}

// bigFitFolder fits 1000 simulated lines (nine bands, J″ ≤ 55).
func bigFitFolder(t testing.TB) string {
	t.Helper()
	root := t.TempDir()
	var lines []fixtureLine
	for _, b := range [][2]int{{1, 0}, {2, 1}, {3, 2}, {4, 3}, {5, 4}, {2, 0}, {3, 1}, {4, 2}, {5, 3}} {
		lines = append(lines, bandLines(b[0], b[1], 55)...)
	}
	lines = append(lines, fixtureLine{vUp: 1, jUp: 57, vLo: 0, jLo: 56})
	if len(lines) != 1000 {
		t.Fatalf("fixture has %d lines, want 1000", len(lines))
	}
	in := filepath.Join(root, "lines-in.csv")
	writeLines(t, in, lines, 0.001, 2)
	out := filepath.Join(root, "out")
	if _, err := pipelines.RunFit(pipelines.FitOptions{Inputs: []string{in}, Model: "dunham", Reject: 3, Out: out}); err != nil {
		t.Fatal(err)
	}
	return out
}

// thermoRow holds the functions of one temperature of a fixture table.
type thermoRow struct {
	T, Q, Cp, S, HmH0, Qcf float64
}

// rrho returns the functions of CO at T from the rigid rotor (level sum over
// J) and the harmonic oscillator, ideal gas at 1 bar, M = 28.0101 g/mol
// (natural CO, docs/references.md). Qcf is the rotational closed form of
// Mulholland (1928) times the same vibrational factor.
func rrho(T float64) thermoRow {
	c2 := float64(constant.Planck) * float64(constant.LightSpeedInVacuum) * 100 / float64(constant.Boltzmann)
	R := float64(constant.Avogadro) * float64(constant.Boltzmann)
	we, B := coY[[2]int{1, 0}], coY[[2]int{0, 1}]
	x := c2 * we / T
	qv := 1 / (1 - math.Exp(-x))
	qr, er := 0.0, 0.0
	for J := 0; ; J++ {
		e := c2 * B * float64(J*(J+1)) / T
		if e > 60 {
			break
		}
		w := float64(2*J+1) * math.Exp(-e)
		qr += w
		er += w * e
	}
	u := c2 * B / T
	qcf := 1 / u * (1 + u/3 + u*u/15 + 4*u*u*u/315)
	ex := math.Exp(-x)
	evib := x * ex / (1 - ex)
	erot := er / qr
	m := 28.0101e-3 / float64(constant.Avogadro)
	k := float64(constant.Boltzmann)
	h := float64(constant.Planck)
	str := R * (1.5*math.Log(2*math.Pi*m*k*T/(h*h)) + math.Log(k*T/1e5) + 2.5)
	cv := R * x * x * ex / ((1 - ex) * (1 - ex))
	return thermoRow{
		T: T, Q: qr * qv, Qcf: qcf * qv,
		Cp:   3.5*R + cv,
		S:    str + R*(math.Log(qr*qv)+erot+evib),
		HmH0: (2.5*R*T + R*T*(erot+evib)) / 1000,
	}
}

// writeThermo writes thermo.csv with the columns of the thermo stage for the
// temperatures given; σ are invented (relative 1e-6 growing with T). mangle
// may change cells of a row before it is written.
func writeThermo(t testing.TB, path string, temps []float64, mc bool, mangle func(i int, rec []string)) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	fmt.Fprintln(f, "# "+constants.ThermoHeading+"12C16O")
	fmt.Fprintln(f, "# energy zero: lowest rovibrational level")
	fmt.Fprintln(f, "# nuclear spin: thermochemistry convention (spin degeneracy divided out)")
	fmt.Fprintln(f, "# standard pressure: 1 bar; ideal gas; units J mol-1 K-1 and kJ mol-1")
	w := csv.NewWriter(f)
	head := []string{"T_K", "Q", "Q_sigma", "Cp", "Cp_sigma", "S", "S_sigma", "H_minus_H0", "H_minus_H0_sigma", "H_minus_H298", "H_minus_H298_sigma", "gef", "gef_sigma", "Q_closed_form", "Q_closed_form_error"}
	if mc {
		head = append(head, "Q_sigma_mc", "Cp_sigma_mc")
	}
	w.Write(head)
	h298 := rrho(298.15).HmH0
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', 10, 64) }
	for i, T := range temps {
		r := rrho(T)
		rel := 1e-6 * (1 + T/1000) * (1 + T/1000)
		hm := r.HmH0 - h298
		gef := r.S - hm*1000/T
		rec := []string{g(T), g(r.Q), g(r.Q * rel), g(r.Cp), g(r.Cp * rel), g(r.S), g(r.S * rel / 10), g(r.HmH0), g(r.HmH0 * rel),
			g(hm), g(math.Abs(hm)*rel + 1e-9), g(gef), g(gef * rel / 10), g(r.Qcf), g((r.Qcf - r.Q) / r.Q)}
		if mc {
			rec = append(rec, g(r.Q*rel*1.02), g(r.Cp*rel*0.98))
		}
		if mangle != nil {
			mangle(i, rec)
		}
		w.Write(rec)
	}
	w.Flush()
	if err := w.Error(); err != nil {
		t.Fatal(err)
	}
}

// thermoGrid returns 1, 2, … n K plus 298.15 K, sorted.
func thermoGrid(n int) []float64 {
	var out []float64
	for i := 1; i <= n; i++ {
		out = append(out, float64(i))
		if i == 298 {
			out = append(out, 298.15)
		}
	}
	return out
}
