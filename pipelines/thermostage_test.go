package pipelines

import (
	"bufio"
	"encoding/json"
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
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/failure"
	"bandwright/thermo"
)

// writeCOConstants runs lines → fit for 12C16O lines made from the
// Huber–Herzberg constants (Constants of Diatomic Molecules, 1979, as widely
// quoted; from memory) with 0.001 cm-1 Gaussian noise, and writes the record to
// dir/name.
func writeCOConstants(t *testing.T, dir, name string, seed uint64) string {
	t.Helper()
	var lines []linelist.Line
	row := 1
	for vu := 0; vu <= 3; vu++ {
		for jl := 0; jl <= 30; jl++ {
			for _, ju := range []int{jl + 1, jl - 1} {
				if ju < 0 || (vu == 0 && ju < jl) {
					continue
				}
				row++
				lines = append(lines, linelist.Line{File: "co.csv", Row: row, Species: "12C16O", VUp: vu, JUp: ju, VLo: 0, JLo: jl, Unc: 0.001, Unit: linelist.Wavenumber})
			}
		}
	}
	m, err := fit.BuildModel(lines, fit.ModelSpec{Kind: model.KindDunham, Terms: []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02"}})
	if err != nil {
		t.Fatal(err)
	}
	vals := map[string]float64{"Y10": 2169.81358, "Y20": -13.28831, "Y30": 0.010511, "Y01": 1.93128087, "Y11": -0.01750441, "Y02": -6.12147e-6}
	p := make([]float64, len(m.Params()))
	for i, par := range m.Params() {
		p[i] = vals[par.Name]
	}
	rng := rand.New(rand.NewPCG(seed, 1))
	for i := range lines {
		l := &lines[i]
		l.Position = m.Energy(0, l.VUp, l.JUp, p, nil) - m.Energy(0, l.VLo, l.JLo, p, nil) + 0.001*rng.NormFloat64()
	}
	res, err := fit.Fit(fit.Problem{Lines: lines, Model: m}, fit.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, name)
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := fit.NewRecord(res).Write(f); err != nil {
		t.Fatal(err)
	}
	f.Close()
	return path
}

// readThermoCSV returns the comment lines, the header and the rows.
func readThermoCSV(t *testing.T, path string) (comments []string, header []string, rows [][]float64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") {
			comments = append(comments, line)
			continue
		}
		if header == nil {
			header = strings.Split(line, ",")
			continue
		}
		var row []float64
		for i, s := range strings.Split(line, ",") {
			x, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				t.Fatalf("%s: column %s: %q is not a finite number", path, header[i], s)
			}
			row = append(row, x)
		}
		if len(row) != len(header) {
			t.Fatalf("%s: row with %d fields, header has %d", path, len(row), len(header))
		}
		rows = append(rows, row)
	}
	return comments, header, rows
}

func TestRunThermo(t *testing.T) {
	dir := t.TempDir()
	cpath := writeCOConstants(t, dir, "constants.json", 1)
	out := filepath.Join(dir, "out")
	oc, err := RunThermo(ThermoOptions{Constants: cpath, Temperatures: "100, 298.15,1000", Composition: "natural", Out: out})
	if err != nil {
		t.Fatal(err)
	}
	comments, header, rows := readThermoCSV(t, filepath.Join(out, constants.ThermoCSVFile))
	if strings.Join(header, ",") != strings.Join(thermo.Columns, ",") {
		t.Errorf("header %v", header)
	}
	if len(rows) != 3 || !scalar.EqualWithinAbs(rows[1][0], 298.15, 1e-12) {
		t.Fatalf("rows %v", rows)
	}
	all := strings.Join(comments, "\n")
	for _, want := range []string{"J mol-1 K-1", "kJ mol-1", "1 bar", "natural-composition", "thermochemistry", "caution: " + thermo.Caution, "energy zero"} {
		if !strings.Contains(all, want) {
			t.Errorf("thermo.csv comments lack %q", want)
		}
	}
	// S°(298.15 K) of CO under the natural-composition convention: CODATA key
	// value 197.660 J/mol/K (Cox, Wagman & Medvedev 1989, from memory).
	if s := rows[1][indexOf(header, "S")]; !scalar.EqualWithinAbs(s, 197.660, 0.02) {
		t.Errorf("S°(298.15 K) = %.4f", s)
	}
	var tj map[string]any
	b, err := os.ReadFile(filepath.Join(out, constants.ThermoJSONFile))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &tj); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"schema", "conventions", "levels", "energy_zero", "table", "warnings", "provenance"} {
		if _, ok := tj[k]; !ok {
			t.Errorf("thermo.json lacks %q", k)
		}
	}
	if strings.Contains(string(b), "NaN") || strings.Contains(string(b), "Inf") {
		t.Error("thermo.json holds a non-finite number")
	}
	var n7 struct {
		NASA7 thermo.NASA7 `json:"nasa7"`
	}
	b, err = os.ReadFile(filepath.Join(out, constants.NASA7File))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &n7); err != nil || len(n7.NASA7.Ranges) != 2 {
		t.Fatalf("nasa7.json: %v %+v", err, n7)
	}
	if oc.Provenance.Inputs[0].SHA256 == "" {
		t.Error("no input hash in the provenance")
	}
}

func TestRunThermoMonteCarloAndStates(t *testing.T) {
	dir := t.TempDir()
	cpath := writeCOConstants(t, dir, "constants.json", 2)
	sub := filepath.Join(dir, "states")
	os.MkdirAll(sub, 0o755)
	writeCOConstants(t, sub, "a-state.json", 3)
	statesFile := filepath.Join(sub, "co.toml")
	os.WriteFile(statesFile, []byte(`species = "12C16O"
dissociation_energy = 89460.0
[[state]]
label = "X"
term_energy = 0.0
spin_multiplicity = 1
lambda = 0
[[state]]
label = "a"
term_energy = 48686.7
spin_multiplicity = 3
lambda = 1
constants = "a-state.json"
`), 0o644)
	out := filepath.Join(dir, "out")
	oc, err := RunThermo(ThermoOptions{Constants: cpath, States: statesFile, Range: "200:6000:200", MC: 50, Seed: 5, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	_, header, rows := readThermoCSV(t, filepath.Join(out, constants.ThermoCSVFile))
	want := append(append([]string(nil), thermo.Columns...), thermo.MCColumns...)
	if strings.Join(header, ",") != strings.Join(want, ",") || len(rows) != 30 {
		t.Errorf("header %v, %d rows", header, len(rows))
	}
	if len(oc.Inputs) != 3 || oc.Result.System.NumLevels() == 0 || len(oc.Result.States) != 2 {
		t.Errorf("inputs %v, states %d", oc.Inputs, len(oc.Result.States))
	}
	if n := len(oc.Result.Params); n != 12 {
		t.Errorf("%d fitted parameters in the combined covariance, want 12", n)
	}
}

// TestThermoBadInput: bad options and electronic-states files are errors that name the field
// (and the file), and nothing is written.
func TestThermoBadInput(t *testing.T) {
	dir := t.TempDir()
	cpath := writeCOConstants(t, dir, "constants.json", 4)
	badStates := filepath.Join(dir, "bad.toml")
	os.WriteFile(badStates, []byte("[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\nflavour = \"x\"\n"), 0o644)
	badSym := filepath.Join(dir, "badsym.toml")
	os.WriteFile(badSym, []byte("[[state]]\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\nsymmetry = \"q\"\n"), 0o644)
	out := filepath.Join(dir, "out")
	cases := []struct {
		o    ThermoOptions
		want []string
	}{
		{ThermoOptions{States: badStates}, []string{"bad.toml", "state.flavour"}},
		{ThermoOptions{States: badSym}, []string{"badsym.toml", "symmetry"}},
		{ThermoOptions{Temperatures: "300,0"}, []string{"--temperatures", "entry 2"}},
		{ThermoOptions{Temperatures: "-5"}, []string{"--temperatures", "> 0"}},
		{ThermoOptions{Temperatures: "300,abc"}, []string{"--temperatures", "\"abc\""}},
		{ThermoOptions{Temperatures: "300,"}, []string{"--temperatures", "entry 2"}},
		{ThermoOptions{Range: "10:6000:0"}, []string{"--range", "STEP"}},
		{ThermoOptions{Range: "10:6000:-1"}, []string{"--range", "STEP"}},
		{ThermoOptions{Range: "0:6000:1"}, []string{"--range", "FROM"}},
		{ThermoOptions{Range: "10:x:1"}, []string{"--range", "TO"}},
		{ThermoOptions{Range: "10:6000"}, []string{"--range"}},
		{ThermoOptions{Range: "10:20:1", Temperatures: "300"}, []string{"--temperatures", "--range"}},
		{ThermoOptions{Pressure: "2bar"}, []string{"--pressure"}},
		{ThermoOptions{Composition: "mixed"}, []string{"composition"}},
		{ThermoOptions{NuclearSpin: "full"}, []string{"nuclear-spin"}},
		{ThermoOptions{Species: "1H35Cl"}, []string{"1H35Cl"}},
		{ThermoOptions{MC: 1}, []string{"Monte Carlo"}},
	}
	for _, tc := range cases {
		o := tc.o
		o.Constants, o.Out = cpath, out
		_, err := RunThermo(o)
		if err == nil {
			t.Errorf("%+v accepted", tc.o)
			continue
		}
		for _, w := range tc.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%+v: error %q does not name %q", tc.o, err, w)
			}
		}
		if failure.ExitCode(err) != 1 {
			t.Errorf("%+v: exit code %d", tc.o, failure.ExitCode(err))
		}
		if _, err := os.Stat(out); err == nil {
			t.Fatalf("%+v: the output folder was written", tc.o)
		}
	}
	// Thermo computes without writing.
	if _, err := Thermo(ThermoOptions{Constants: cpath, Temperatures: "300", Out: out}); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("Thermo wrote the output folder")
	}
}

func TestParseRange(t *testing.T) {
	ts, err := ParseRange("10:6000:1")
	if err != nil || len(ts) != 5991 || !scalar.EqualWithinAbs(ts[5990], 6000, 1e-9) {
		t.Fatalf("%d temperatures, %v", len(ts), err)
	}
	ts, err = ParseRange("100:1000:300")
	if err != nil || len(ts) != 4 {
		t.Fatalf("%v %v", ts, err)
	}
	ts, err = ParseRange("0.1:0.3:0.1")
	if err == nil {
		t.Errorf("range below 1 K accepted: %v", ts)
	}
}

// indexOf returns the index of the column named name in header (-1: none).
func indexOf(header []string, name string) int {
	for i, h := range header {
		if h == name {
			return i
		}
	}
	return -1
}

// TestThermoPureRotationTable: a microwave record (v = 0 only, no ω_e) with
// the default table gives the temperatures where vibration cannot matter and
// names the others; asked for 298.15 K explicitly, it refuses (exit 2,
// naming --states and omega_e) and writes nothing.
func TestThermoPureRotationTable(t *testing.T) {
	dir := t.TempDir()
	co := map[string]float64{"Y10": 2169.81358, "Y20": -13.28831, "Y01": 1.93128087, "Y11": -0.01750441, "Y02": -6.12147e-6}
	var mw [][4]int
	for j := 0; j <= 9; j++ {
		mw = append(mw, [4]int{0, j + 1, 0, j})
	}
	lines := filepath.Join(dir, "mw.csv")
	saveLines(t, lines, simLines(t, "12C16O", "mw.csv", co, mw, 0.05, true))
	fit := filepath.Join(dir, "fit")
	if _, err := RunFit(FitOptions{Inputs: []string{lines}, Model: "term-values", Terms: []string{"B", "D"}, Out: fit}); err != nil {
		t.Fatal(err)
	}
	rec := filepath.Join(fit, constants.ConstantsFile)
	oc, err := RunThermo(ThermoOptions{Constants: rec, Out: filepath.Join(dir, "table")})
	if err != nil {
		t.Fatal(err)
	}
	r := oc.Result
	if len(r.Rows) != 1 || r.Rows[0].T != 100 || r.NASA != nil || !strings.Contains(r.OmittedNote, "temperatures left out: 200, 298.15, … 6000") {
		t.Errorf("default table: %d rows, NASA %v, %q", len(r.Rows), r.NASA, r.OmittedNote)
	}
	n7, _ := os.ReadFile(filepath.Join(dir, "table", constants.NASA7File))
	if !strings.Contains(string(n7), `"omitted": "no NASA-7 fit`) {
		t.Errorf("nasa7.json does not say why it has no fit:\n%s", n7)
	}
	out := filepath.Join(dir, "asked")
	_, err = RunThermo(ThermoOptions{Constants: rec, Temperatures: "298.15", Out: out})
	if failure.ExitCode(err) != 2 || !strings.Contains(err.Error(), "--states") || !strings.Contains(err.Error(), "omega_e") {
		t.Errorf("asked for 298.15 K: exit %d, %v", failure.ExitCode(err), err)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a refused table left a folder")
	}
	// The chain on the same lines: the report says which temperatures were
	// left out, under At a glance.
	run := filepath.Join(dir, "run")
	if _, err := RunChain(ChainOptions{Inputs: []string{lines}, Out: run}); err != nil {
		t.Fatal(err)
	}
	md, _ := os.ReadFile(filepath.Join(run, constants.ReportMarkdownFile))
	if !strings.Contains(string(md), "Thermodynamic table: temperatures left out: 200, 298.15") {
		t.Errorf("the report does not name the temperatures left out")
	}
}
