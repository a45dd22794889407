package pipelines

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/pipelines/nightly"
)

// writeNight writes one night's CO file: the 1-0 and 2-1 bands, J″ ≤ 24 (about
// 100 lines) at 0.003 cm⁻¹ with noise of that size (coLines: Huber & Herzberg
// constants, from memory), every position multiplied by (1 + scale).
func writeNight(t testing.TB, path string, seed uint64, scale float64) {
	t.Helper()
	ls := coLines(t, [][2]int{{1, 0}, {2, 1}}, 24, 0.003, seed)
	for i := range ls {
		ls[i].Position *= 1 + scale
	}
	saveLines(t, path, ls)
}

// TestScaleAgainstRecoversScale: lines computed from constants and scaled by
// (1 + κ) give back κ against those constants within its σ, and σ_κ is
// ≈ unc/√(Σν²) (the weighted least-squares formula, common practice).
func TestScaleAgainstRecoversScale(t *testing.T) {
	dir := t.TempDir()
	writeNight(t, filepath.Join(dir, "a.csv"), 1, 0)
	oc, err := Fit(FitOptions{Inputs: []string{filepath.Join(dir, "a.csv")}, Model: "dunham", Terms: []string{"Y10", "Y20", "Y01", "Y11", "Y02"}})
	if err != nil {
		t.Fatal(err)
	}
	ref, err := oc.Record.Constants()
	if err != nil {
		t.Fatal(err)
	}
	const kappa = 2e-6
	lines := coLines(t, [][2]int{{1, 0}, {2, 1}}, 24, 0.003, 9)
	sum := 0.0
	for i := range lines {
		lines[i].Position *= 1 + kappa
		sum += lines[i].Position * lines[i].Position
	}
	sf, ok := scaleAgainst(ref, lines, nil)
	if !ok {
		t.Fatal("no scale factor")
	}
	want := 0.003 / math.Sqrt(sum)
	t.Logf("κ = %.4g ± %.3g (%d lines), expected σ ≈ %.3g", sf.Kappa, sf.Sigma, sf.Lines, want)
	if math.Abs(sf.Kappa-kappa) > 4*sf.Sigma || sf.Sigma > 2*want || sf.Sigma < want/2 {
		t.Errorf("κ = %g ± %g, planted %g, σ expected %g", sf.Kappa, sf.Sigma, kappa, want)
	}
}

// TestNightlyDriftCatchesCalibration: six quiet nights of a CO file (100 lines
// at 0.003 cm⁻¹, the model chosen automatically each night), then a file whose
// wavenumber scale is off by 2×10⁻⁶. The scale factor against the archive's
// reference (the first night's record) must flag it at the default threshold
// z > 5, the quiet nights must flag nothing, and every history row names the
// model it belongs to (model constants) or none (the scale factor).
func TestNightlyDriftCatchesCalibration(t *testing.T) {
	dir := t.TempDir()
	inbox, archive := filepath.Join(dir, "inbox"), filepath.Join(dir, "archive")
	os.MkdirAll(inbox, 0o755)
	pf := filepath.Join(dir, "pipe.toml")
	os.WriteFile(pf, []byte("[fit]\nreject = 3.0\n[thermo]\ntemperatures = [298.15, 3000]\n[report]\nformats = [\"md\"]\n"), 0o644)
	run := func(name string, seed uint64, scale float64) nightly.FileOutcome {
		t.Helper()
		writeNight(t, filepath.Join(inbox, name), seed, scale)
		rep, err := RunNightly(context.Background(), NightlyOptions{Inbox: inbox, Archive: archive, Pipeline: pf, Workers: 1})
		if err != nil || len(rep.Files) != 1 || rep.Files[0].Status != nightly.StatusOK {
			t.Fatalf("%s: %v %+v", name, err, rep)
		}
		return rep.Files[0]
	}
	for night := 1; night <= 6; night++ {
		fo := run(fmt.Sprintf("night%d.csv", night), uint64(100+night), 0)
		for _, d := range fo.Drift {
			if d.Flagged {
				t.Errorf("quiet night %d: %s [%s] flagged, z = %.2f", night, d.Name, d.Model, d.Z)
			}
		}
	}
	if _, err := os.Stat(filepath.Join(archive, nightly.ReferenceDir, "12C16O.json")); err != nil {
		t.Fatalf("no reference adopted: %v", err)
	}
	fo := run("drifted.csv", 200, 2e-6)
	caught := false
	for _, d := range fo.Drift {
		t.Logf("drifted: %-22s %-40q z = %6.2f (n = %d) %v", d.Name, d.Model, d.Z, d.N, d.Flagged)
		if d.Name == ScaleConstantName {
			caught = d.Flagged
			if d.Model != "" {
				t.Errorf("the scale factor is keyed on the model %q", d.Model)
			}
		} else if d.Model == "" {
			t.Errorf("%s has no model key", d.Name)
		}
	}
	if !caught {
		t.Error("a 2e-6 wavenumber-scale drift was not flagged by the scale factor")
	}
	// The result's own report is titled with its file, SHA-8 and date, and
	// says that it drifted; a quiet night's report says it did not.
	rep, err := os.ReadFile(filepath.Join(archive, filepath.FromSlash(fo.Output), constants.ReportMarkdownFile))
	if err != nil {
		t.Fatal(err)
	}
	title := fmt.Sprintf("# drifted.csv · %s · ", fo.SHA256[:8])
	if !strings.HasPrefix(string(rep), title) || !strings.Contains(string(rep), "**DRIFT: ") || !strings.Contains(string(rep), `kappa\_vs\_reference: z = `) {
		t.Errorf("the drifted result's report lacks its title %q or its drift flag:\n%.1500s", title, rep)
	}
	quiet, _ := filepath.Glob(filepath.Join(archive, "results", "night6-*", constants.ReportMarkdownFile))
	if len(quiet) != 1 {
		t.Fatalf("night 6 reports: %q", quiet)
	}
	if b, _ := os.ReadFile(quiet[0]); !strings.Contains(string(b), "**Drift: none") {
		t.Errorf("a quiet night's report does not say it did not drift:\n%.1500s", b)
	}
	// The nightly summary carries the thermo table's flag: the model part of
	// its uncertainty exceeds the statistical part.
	sums, _ := filepath.Glob(filepath.Join(archive, "summary-*.md"))
	if len(sums) == 0 {
		t.Fatal("no summary")
	}
	if b, _ := os.ReadFile(sums[0]); !strings.Contains(string(b), "thermo: the model part of the uncertainty exceeds the statistical part for") {
		t.Errorf("the summary lacks the thermo flag:\n%.2000s", b)
	}
	hist, _ := os.ReadFile(filepath.Join(archive, nightly.HistoryFile))
	if !strings.HasPrefix(string(hist), strings.Join(nightly.HistoryHeader, ",")) || !strings.Contains(string(hist), "dunham Y01,") {
		t.Errorf("history.csv header or model column:\n%.300s", hist)
	}
}

// TestNightlyDriftFalseAlarms measures the false-alarm rate of the drift test
// over many quiet nights: 120 CO files of 100 lines at 0.003 cm⁻¹, processed by
// the nightly engine with the fit stage and the same constants as a nightly
// chain (model chosen automatically for each file, the model's constants keyed
// on it, band origins, the scale factor against the reference), at the
// default threshold z > 5. Every test of every constant counts; none may flag.
func TestNightlyDriftFalseAlarms(t *testing.T) {
	if testing.Short() {
		t.Skip("120 nightly files")
	}
	dir := t.TempDir()
	inbox, archive := filepath.Join(dir, "inbox"), filepath.Join(dir, "archive")
	os.MkdirAll(inbox, 0o755)
	const nights = 120
	for i := 0; i < nights; i++ {
		writeNight(t, filepath.Join(inbox, fmt.Sprintf("n%03d.csv", i)), uint64(1000+i), 0)
	}
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		ls, err := linelist.ReadFiles(in.Path)
		if err != nil {
			return nil, err
		}
		ch, err := ChooseModel(ls.Lines, fit.Settings{Reject: fit.DefaultReject})
		if err != nil {
			return nil, err
		}
		oc, err := RunFit(FitOptions{Inputs: []string{in.Path}, Names: []string{in.Name}, Model: ch.Model, Terms: ch.Terms, Reject: fit.DefaultReject, Out: filepath.Join(work, "fit")})
		if err != nil {
			return nil, err
		}
		used := make([]bool, len(oc.Result.Lines))
		for i, lr := range oc.Result.Lines {
			used[i] = lr.Used
		}
		cs, offer, _ := nightlyConstants(oc.Record, oc.Problem.Lines, used, in.ReferenceDir)
		if offer != nil {
			offer.Path = "fit/" + offer.Path
		}
		return &nightly.JobResult{Constants: cs, Reference: offer}, nil
	}
	rep, err := nightly.Run(context.Background(), nightly.Options{Inbox: inbox, Archive: archive, Workers: 1, Job: job, PipelineHash: "test", Version: Version})
	if err != nil || rep.Succeeded != nights {
		t.Fatalf("%v: %d of %d succeeded", err, rep.Succeeded, nights)
	}
	tests, flagged, scaleTests := 0, 0, 0
	models := map[string]int{}
	for _, fo := range rep.Files {
		for _, d := range fo.Drift {
			if math.IsNaN(d.Z) {
				continue
			}
			tests++
			models[d.Model]++
			if d.Name == ScaleConstantName {
				scaleTests++
			}
			if d.Flagged {
				flagged++
				t.Errorf("%s: %s [%s] flagged, z = %.2f (n = %d)", fo.Input, d.Name, d.Model, d.Z, d.N)
			}
		}
	}
	t.Logf("false alarms: %d of %d drift tests over %d quiet nights (%d of the scale factor); tests per model: %v", flagged, tests, nights, scaleTests, models)
	if scaleTests < nights-3 {
		t.Errorf("the scale factor was tested %d times over %d nights", scaleTests, nights)
	}
}
