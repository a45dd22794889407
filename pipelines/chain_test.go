package pipelines

import (
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/failure"
)

// writeLines writes simulated CO lines (see coLines) as a line list.
func writeLines(t testing.TB, path string, bands [][2]int, jmax int, seed uint64, comment string) {
	t.Helper()
	ls := coLines(t, bands, jmax, 2e-4, seed)
	if comment != "" {
		ls[3].Comment = comment
	}
	saveLines(t, path, ls)
}

// saveLines writes the line list ls to path.
func saveLines(t testing.TB, path string, ls []linelist.Line) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := linelist.Write(f, ls, nil); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

func TestRunChainLinesAutomatic(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "co.csv")
	writeLines(t, in, [][2]int{{1, 0}, {2, 1}, {3, 2}}, 30, 11, "<script>alert(1)</script>")
	before, _ := os.ReadFile(in)
	out := filepath.Join(dir, "out")
	oc, err := RunChain(ChainOptions{Inputs: []string{in}, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{constants.ConstantsFile, constants.ResidualsFile, constants.FitReportFile, constants.ThermoCSVFile, constants.ThermoJSONFile, constants.NASA7File, "report.html", "report.md"} {
		if st, err := os.Stat(filepath.Join(out, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s missing or empty: %v", f, err)
		}
	}
	if oc.Fit.Record.Model != "dunham" || len(oc.Chosen) == 0 || !strings.Contains(oc.Chosen[0], "chosen automatically") {
		t.Errorf("automatic choice not made or not said: model %s, chosen %v", oc.Fit.Record.Model, oc.Chosen)
	}
	// The thermo files name the record of this folder, never the temporary
	// folder the chain wrote it in (which differs on every run and is gone).
	for _, f := range []string{constants.ThermoJSONFile, constants.ThermoCSVFile, constants.NASA7File, "report.md"} {
		b, _ := os.ReadFile(filepath.Join(out, f))
		if strings.Contains(string(b), ".partial-") {
			t.Errorf("%s names the chain's temporary folder", f)
		}
	}
	if b, _ := os.ReadFile(filepath.Join(out, constants.ThermoJSONFile)); !strings.Contains(string(b), `"levels_from": "fitted constants (constants.json (this folder))"`) {
		t.Errorf("thermo.json does not say its levels come from constants.json (this folder)")
	}
	html, _ := os.ReadFile(filepath.Join(out, "report.html"))
	if strings.Contains(string(html), "<script>alert") {
		t.Error("a line comment reached the HTML report unescaped")
	}
	if n := strings.Count(string(html), "<svg"); n < 4 {
		t.Errorf("report carries %d plots, want residuals, correlations and thermo plots", n)
	}
	if after, _ := os.ReadFile(in); string(after) != string(before) {
		t.Error("the input file changed")
	}
	// The chain's record names the input as given, not a temporary path.
	if p := oc.Fit.Record.Provenance.Inputs[0].Path; p != in {
		t.Errorf("provenance path %q", p)
	}
	if oc.ReportPath() != filepath.Join(out, "report.html") {
		t.Errorf("report path %q", oc.ReportPath())
	}
}

func TestRunChainPeaksWithPipeline(t *testing.T) {
	dir := t.TempDir()
	// The synthetic CO peak list of testdata/assign (see its README) and its
	// starting constants, with a pipeline file that names them relatively.
	for _, f := range []string{"co-hot-cell.csv", "co-hot-cell-start.toml"} {
		b, err := os.ReadFile(filepath.Join("..", "testdata", "assign", f))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(dir, f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	pf := filepath.Join(dir, "pipe.toml")
	os.WriteFile(pf, []byte(`name = "co test"
input = "peaks"
[assign]
start = "co-hot-cell-start.toml"
bands = ["1-0", "2-1"]
temperature = 700.0
[fit]
model = "dunham"
terms = ["Y10", "Y20", "Y01", "Y11", "Y02"]
[thermo]
temperatures = [298.15, 1000.0]
composition = "natural"
[report]
formats = ["md"]
`), 0o644)
	p, err := LoadPipeline(pf)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	oc, err := RunChain(ChainOptions{Inputs: []string{filepath.Join(dir, "co-hot-cell.csv")}, Pipeline: p, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	if oc.Assign == nil || len(oc.Assign.Result.Lines) < 200 {
		t.Fatalf("assign stage did not run or assigned too little")
	}
	for _, f := range []string{constants.LinesFile, constants.UnassignedFile, constants.AssignReportFile, constants.AssignConstantsFile, constants.ConstantsFile, constants.ThermoCSVFile, "report.md"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("%s missing: %v", f, err)
		}
	}
	if _, err := os.Stat(filepath.Join(out, "report.html")); err == nil {
		t.Error("report.html written although the pipeline asked for md only")
	}
	// Constants: the Huber & Herzberg (1979) values the peak list was made
	// from (from memory): ωe 2169.81358 (Y10 absorbs part of ωeye, not
	// fitted here), Be 1.93128087 cm⁻¹.
	for _, q := range oc.Fit.Record.Parameters {
		if q.Name == "Y01" && (q.Value < 1.9312 || q.Value > 1.9314) {
			t.Errorf("Y01 = %v, far from Be = 1.93128087", q.Value)
		}
	}
	// thermo.csv: the CODATA key value S°(298.15 K) = 197.660 J/mol/K of CO
	// (Cox, Wagman & Medvedev 1989, from memory) under the natural convention.
	f, _ := os.Open(filepath.Join(out, constants.ThermoCSVFile))
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var s float64
	fmt.Sscan(rows[1][indexOf(rows[0], "S")], &s)
	if s < 197.64 || s > 197.68 {
		t.Errorf("S°(298.15 K) = %v, want 197.660 ± 0.02", s)
	}
}

func TestRunNightlyChain(t *testing.T) {
	dir := t.TempDir()
	inbox, archive := filepath.Join(dir, "inbox"), filepath.Join(dir, "archive")
	os.MkdirAll(inbox, 0o755)
	writeLines(t, filepath.Join(inbox, "a.csv"), [][2]int{{1, 0}, {2, 1}}, 25, 21, "")
	writeLines(t, filepath.Join(inbox, "b.csv"), [][2]int{{1, 0}, {2, 1}}, 25, 22, "")
	os.WriteFile(filepath.Join(inbox, "bad.csv"), []byte("species,v_up,J_up,v_lo,J_lo,position,unc\n12C16O,1,1,0,0,2147.08,-1\n"), 0o644)
	pf := filepath.Join(dir, "pipe.toml")
	os.WriteFile(pf, []byte("[fit]\nmodel = \"dunham\"\nterms = [\"Y10\", \"Y20\", \"Y01\", \"Y11\", \"Y02\"]\n[thermo]\ntemperatures = [298.15]\n"), 0o644)
	rep, err := RunNightly(context.Background(), NightlyOptions{Inbox: inbox, Archive: archive, Pipeline: pf, Workers: 2})
	var be *failure.BatchError
	if !errors.As(err, &be) || failure.ExitCode(err) != 3 {
		t.Fatalf("want a batch error (exit 3), got %v", err)
	}
	if rep.Succeeded != 2 || rep.Failed != 1 {
		t.Fatalf("succeeded %d failed %d", rep.Succeeded, rep.Failed)
	}
	ledger, _ := os.ReadFile(filepath.Join(archive, "ledger.csv"))
	if !strings.Contains(string(ledger), "bad.csv:2: unc") {
		t.Errorf("ledger does not say what is wrong with bad.csv:\n%s", ledger)
	}
	res, _ := filepath.Glob(filepath.Join(archive, "results", "*", "report.html"))
	th, _ := filepath.Glob(filepath.Join(archive, "results", "*", "thermo.csv"))
	if len(res) != 2 || len(th) != 2 {
		t.Errorf("results: %d reports, %d thermo tables; want 2 each", len(res), len(th))
	}
	rep, err = RunNightly(context.Background(), NightlyOptions{Inbox: inbox, Archive: archive, Pipeline: pf, Workers: 2})
	if err != nil || rep.Processed != 0 {
		t.Errorf("second run: processed %d, err %v; want nothing to do", rep.Processed, err)
	}
}

// TestRunChainClosedShellStatesChoosesModel: an electronic-states file that
// describes a single ¹Σ state (given for its D0 or ω_e, as the thermo stage
// asks of a microwave record) leaves the lines closed-shell, so the model is
// still chosen automatically. Before, any states file turned the choice off
// and the default Dunham terms failed on a single band (exit 2: "the data
// cannot determine Y20"). The band origin checks against the Huber & Herzberg
// (1979) constants of coLines (from memory): ν0 = G(1) − G(0).
func TestRunChainClosedShellStatesChoosesModel(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "co.csv")
	writeLines(t, in, [][2]int{{1, 0}}, 20, 5, "")
	st := filepath.Join(dir, "co.toml")
	os.WriteFile(st, []byte("species = \"12C16O\"\ndissociation_energy = 89460.0\n[[state]]\nlabel = \"X\"\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\nsymmetry = \"+\"\n"), 0o644)
	oc, err := RunChain(ChainOptions{Inputs: []string{in}, States: st, Out: filepath.Join(dir, "out")})
	if err != nil {
		t.Fatal(err)
	}
	if oc.Fit.Record.Model != model.KindTermValues || len(oc.Chosen) == 0 || !strings.Contains(oc.Chosen[0], "chosen automatically") {
		t.Fatalf("model %s, chosen %v", oc.Fit.Record.Model, oc.Chosen)
	}
	g := func(v float64) float64 { u := v + 0.5; return 2169.81358*u - 13.28831*u*u + 0.010511*u*u*u }
	nu0 := g(1) - g(0)
	for _, p := range oc.Fit.Record.Parameters {
		if p.Name == "T" && p.V != nil && *p.V == 1 {
			if math.Abs(p.Value-nu0) > 4*p.Sigma {
				t.Errorf("T_v1 = %.6f(%.6f), Huber & Herzberg ν0 %.6f", p.Value, p.Sigma, nu0)
			}
			return
		}
	}
	t.Errorf("no T_v1 in %+v", oc.Fit.Record.Parameters)
}
