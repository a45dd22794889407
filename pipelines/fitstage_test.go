package pipelines

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/species"
	"bandwright/internal/failure"
)

// coY are the Dunham coefficients Y_kl (cm⁻¹) of 12C16O X¹Σ⁺ from the constants
// of Huber & Herzberg, Constants of Diatomic Molecules (1979), from memory
// (docs/references.md): Y10 = ωe, Y20 = −ωexe, Y30 = ωeye, Y01 = Be, Y11 = −αe,
// Y02 = −De.
var coY = map[[2]int]float64{
	{1, 0}: 2169.81358, {2, 0}: -13.28831, {3, 0}: 0.010511,
	{0, 1}: 1.93128087, {1, 1}: -0.01750441, {0, 2}: -6.12147e-6,
}

// genSpec describes a generated line list: isotopologues whose Y_kl are
// mass-scaled from 12C16O by the first-order Dunham relation
// Y_kl ∝ μ^−(k/2+l) (docs/references.md), the bands, the highest lower-state J,
// the number of independent measurements of each line, and the noise.
type genSpec struct {
	extra   map[[2]int]float64 // further Y_kl of 12C16O added to coY
	species []string
	bands   [][2]int
	jmax    int
	repeats int
	unc     float64
	seed    uint64
}

// writeLineList streams the line list of g to path (P and R lines of every
// band, Gaussian noise of 1σ = unc with a fixed seed) and returns the number
// of lines written. Nothing but one row is held in memory.
func writeLineList(tb testing.TB, path string, g genSpec) int {
	tb.Helper()
	f, err := os.Create(path)
	if err != nil {
		tb.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<16)
	w.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc\n")
	rng := rand.New(rand.NewPCG(g.seed, 7))
	ref, err := species.Parse("12C16O")
	if err != nil {
		tb.Fatal(err)
	}
	n := 0
	var buf []byte
	for _, label := range g.species {
		iso, err := species.Parse(label)
		if err != nil {
			tb.Fatal(err)
		}
		type term struct {
			k, l int
			y    float64
		}
		// Terms in a fixed order (l, then k), so every run makes the same data.
		var terms []term
		for l := 0; l <= 9; l++ {
			for k := 0; k <= 9; k++ {
				c, ok := coY[[2]int{k, l}]
				if e, ok2 := g.extra[[2]int{k, l}]; ok2 {
					c, ok = e, true
				}
				if ok {
					terms = append(terms, term{k, l, c * math.Pow(ref.ReducedMass()/iso.ReducedMass(), float64(k+2*l)/2)})
				}
			}
		}
		energy := func(v, J int) float64 {
			// E(v, J) = Σ Y_kl (v+½)^k [J(J+1)]^l.
			e := 0.0
			x := float64(J) * float64(J+1)
			for _, t := range terms {
				e += t.y * math.Pow(float64(v)+0.5, float64(t.k)) * math.Pow(x, float64(t.l))
			}
			return e
		}
		for r := 0; r < g.repeats; r++ {
			for _, b := range g.bands {
				for jl := 0; jl <= g.jmax; jl++ {
					for _, dj := range []int{-1, 1} {
						ju := jl + dj
						if ju < 0 || (dj == -1 && jl == 0) || (dj == 1 && jl == g.jmax) {
							continue
						}
						nu := energy(b[0], ju) - energy(b[1], jl) + g.unc*rng.NormFloat64()
						buf = buf[:0]
						buf = append(buf, label...)
						for _, q := range []int{b[0], ju, b[1], jl} {
							buf = append(buf, ',')
							buf = strconv.AppendInt(buf, int64(q), 10)
						}
						buf = append(buf, ',')
						buf = strconv.AppendFloat(buf, nu, 'f', 6, 64)
						buf = append(buf, ',')
						buf = strconv.AppendFloat(buf, g.unc, 'g', -1, 64)
						buf = append(buf, '\n')
						w.Write(buf)
						n++
					}
				}
			}
		}
	}
	if err := w.Flush(); err != nil {
		tb.Fatal(err)
	}
	if err := f.Close(); err != nil {
		tb.Fatal(err)
	}
	return n
}

// smallSpec is a modest CO data set: two isotopologues, four bands.
var smallSpec = genSpec{
	species: []string{"12C16O", "13C16O"},
	bands:   [][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}},
	jmax:    30, repeats: 1, unc: 1e-3, seed: 1,
}

var smallTerms = []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02"}

// TestRunFitEndToEnd runs the fit stage on a generated line list into a
// temporary folder: the three outputs exist and agree with each other and with
// the constants the lines were made from, and the input is untouched.
func TestRunFitEndToEnd(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "lines.csv")
	n := writeLineList(t, in, smallSpec)
	before, err := os.ReadFile(in)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	oc, err := RunFit(FitOptions{Inputs: []string{in}, Model: "dunham", Terms: smallTerms, Reject: 3, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	after, err := os.ReadFile(in)
	if err != nil || !bytes.Equal(before, after) {
		t.Fatalf("input changed by the fit (err %v)", err)
	}
	for _, name := range []string{constants.ConstantsFile, constants.ResidualsFile, constants.FitReportFile} {
		st, err := os.Stat(filepath.Join(out, name))
		if err != nil || st.Size() == 0 {
			t.Errorf("%s: %v (size %d)", name, err, sizeOf(st))
		}
	}
	// No temporary folders left beside the output.
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), "partial") {
			t.Errorf("leftover %s", e.Name())
		}
	}

	rec := checkFitRecord(t, out, in, n)
	checkFitResiduals(t, out, in, n, oc, rec)
	checkFitSummary(t, out, oc)

	// A second run into the same folder replaces the files.
	if _, err := RunFit(FitOptions{Inputs: []string{in}, Model: "dunham", Terms: smallTerms, Reject: 3, Round: true, Out: out}); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(filepath.Join(out, constants.ConstantsFile)); !bytes.Contains(b, []byte(`"rounding"`)) {
		t.Error("second run did not replace constants.json")
	}
}

// checkFitRecord checks the constants.json that a fit of the n lines of the
// line list in wrote into out: it reads back, holds the constants the lines
// were made from (within 4σ) and the input's SHA-256.
func checkFitRecord(t *testing.T, out, in string, n int) *constants.Record {
	t.Helper()
	f, err := os.Open(filepath.Join(out, constants.ConstantsFile))
	if err != nil {
		t.Fatal(err)
	}
	rec, err := constants.Read(f, constants.ConstantsFile)
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	if rec.Stats.Lines != n || rec.Model != "dunham" || rec.ReferenceSpecies != "12C16O" {
		t.Errorf("record: %d lines (wrote %d), model %q, reference %q", rec.Stats.Lines, n, rec.Model, rec.ReferenceSpecies)
	}
	for _, p := range rec.Parameters {
		if p.K == nil {
			continue
		}
		want := coY[[2]int{*p.K, *p.L}]
		// Huber & Herzberg (1979), from memory.
		if math.Abs(p.Value-want) > 4*p.Sigma {
			t.Errorf("%s = %s, Huber & Herzberg %g", p.Name, constants.FormatParen(p.Value, p.Sigma), want)
		}
	}
	h, err := HashFile(in)
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Provenance.Inputs) != 1 || rec.Provenance.Inputs[0].SHA256 != h || rec.Provenance.Version != Version {
		t.Errorf("provenance %+v", rec.Provenance)
	}
	if rec.CovarianceConvention != constants.CovarianceConvention {
		t.Errorf("covariance convention %q", rec.CovarianceConvention)
	}
	return rec
}

// checkFitResiduals checks residuals.csv in out: one row per line of in
// (n lines), o−c equal to the fit's, used lines as the record counts them.
func checkFitResiduals(t *testing.T, out, in string, n int, oc *FitOutcome, rec *constants.Record) {
	t.Helper()
	rf, err := os.Open(filepath.Join(out, constants.ResidualsFile))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(rf).ReadAll()
	rf.Close()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != n+1 {
		t.Fatalf("residuals.csv has %d rows, want %d lines + header", len(rows), n)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	used := 0
	for i, row := range rows[1:] {
		omc, err := strconv.ParseFloat(row[col["o_minus_c"]], 64)
		if err != nil {
			t.Fatalf("row %d: o_minus_c %q", i+2, row[col["o_minus_c"]])
		}
		if !scalar.EqualWithinAbsOrRel(omc, oc.Result.Lines[i].OmC, 1e-12, 1e-5) {
			t.Errorf("row %d: o_minus_c %g, fit %g", i+2, omc, oc.Result.Lines[i].OmC)
		}
		if row[col["status"]] == "used" {
			used++
		}
		if r, _ := strconv.Atoi(row[col["row"]]); r != i+2 || row[col["file"]] != in {
			t.Errorf("row %d: file %q row %q", i+2, row[col["file"]], row[col["row"]])
		}
	}
	if used != rec.Stats.Used {
		t.Errorf("residuals.csv marks %d lines used, the record %d", used, rec.Stats.Used)
	}
}

// checkFitSummary checks that fit.md in out names the constants in
// parenthetical notation and the covariance convention.
func checkFitSummary(t *testing.T, out string, oc *FitOutcome) {
	t.Helper()
	md, err := os.ReadFile(filepath.Join(out, constants.FitReportFile))
	if err != nil {
		t.Fatal(err)
	}
	var y01 = oc.Result.Params[0]
	for _, p := range oc.Result.Params {
		if p.Name == "Y01" {
			y01 = p
		}
	}
	for _, want := range []string{constants.FormatParen(y01.Value, y01.Sigma), "scaled by the square of the dimensionless standard deviation", "13C16O"} {
		if !strings.Contains(string(md), want) {
			t.Errorf("fit.md does not contain %q", want)
		}
	}
}

func sizeOf(st os.FileInfo) int64 {
	if st == nil {
		return -1
	}
	return st.Size()
}

// TestRunFitBadInput: a line list with unc = -1 on line 4 is refused with a
// message naming FILE:4 and the field, no output folder is created, and the
// input is byte-identical afterwards.
func TestRunFitBadInput(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "bad.csv")
	writeLineList(t, in, smallSpec)
	b, err := os.ReadFile(in)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(b), "\n")
	// Line 4 of the file: the header is line 1.
	cells := strings.Split(strings.TrimSuffix(lines[3], "\n"), ",")
	cells[6] = "-1"
	lines[3] = strings.Join(cells, ",") + "\n"
	bad := []byte(strings.Join(lines, ""))
	if err := os.WriteFile(in, bad, 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	_, err = RunFit(FitOptions{Inputs: []string{in}, Model: "dunham", Terms: smallTerms, Reject: 3, Out: out})
	if err == nil {
		t.Fatal("a negative unc was accepted")
	}
	if want := in + ":4: unc"; !strings.Contains(err.Error(), want) {
		t.Errorf("error %q does not mention %q", err, want)
	}
	if failure.ExitCode(err) != 1 {
		t.Errorf("exit code %d, want 1 (bad input)", failure.ExitCode(err))
	}
	if _, serr := os.Stat(out); !errors.Is(serr, os.ErrNotExist) {
		t.Errorf("output folder exists after a failed run (%v)", serr)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("folder holds %v, want only the input", names)
	}
	if after, _ := os.ReadFile(in); !bytes.Equal(after, bad) {
		t.Error("input changed")
	}
}

// TestRunFitUndetermined: terms the data cannot determine (Y10 and Y20 from
// the 1-0 band of a single isotopologue, which fixes only Y10 + 2Y20) stop the
// run with exit code 2, naming them, and nothing is written.
func TestRunFitUndetermined(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "one.csv")
	g := smallSpec
	g.bands = [][2]int{{1, 0}}
	g.species = []string{"12C16O"}
	writeLineList(t, in, g)
	out := filepath.Join(dir, "out")
	_, err := RunFit(FitOptions{Inputs: []string{in}, Model: "dunham", Terms: []string{"Y10", "Y20", "Y01", "Y11", "Y02"}, Reject: 3, Out: out})
	if err == nil {
		t.Fatal("Y10 and Y20 from one band were accepted")
	}
	var ue *fit.UndeterminedError
	if !errors.As(err, &ue) || failure.ExitCode(err) != 2 {
		t.Errorf("err %v (exit %d), want *fit.UndeterminedError, exit 2", err, failure.ExitCode(err))
	}
	if !strings.Contains(err.Error(), "Y10") || !strings.Contains(err.Error(), "Y20") {
		t.Errorf("message does not name Y10 and Y20: %v", err)
	}
	if _, serr := os.Stat(out); !errors.Is(serr, os.ErrNotExist) {
		t.Error("output folder created")
	}
	// Usage errors: an unknown term.
	_, err = RunFit(FitOptions{Inputs: []string{in}, Model: "dunham", Terms: []string{"Q1"}, Out: out})
	if err == nil || failure.ExitCode(err) != 1 {
		t.Errorf("unknown term: err %v exit %d", err, failure.ExitCode(err))
	}
}
