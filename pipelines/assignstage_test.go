package pipelines

import (
	"errors"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"bandwright/assign/synth"
	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
)

// Synthetic CO hot-cell peak list (Huber & Herzberg 1979 constants, from
// memory, with Dunham mass scaling; package assign/synth) and rough starting
// constants.
func writeCOInputs(t *testing.T, dir string) (peaks, start string) {
	t.Helper()
	spec := synth.Spec{Reference: "12C16O", Terms: synth.CO,
		Species: []synth.Species{{Label: "12C16O", Abundance: 0.98654}, {Label: "13C16O", Abundance: 0.01084}},
		Bands:   [][2]int{{1, 0}, {2, 1}}, Spectrum: "ir", Temperature: 700, Threshold: 2e-4, Unc: 2e-4, UncMax: 4e-3,
		IntensityNoise: 0.1, Missing: 0.05, Spurious: 0.10, Resolution: 0.004, Seed: 1}
	ps, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	peaks = filepath.Join(dir, "peaks.csv")
	f, err := os.Create(peaks)
	if err != nil {
		t.Fatal(err)
	}
	if err := synth.WriteCSV(f, ps, "cm-1", true); err != nil {
		t.Fatal(err)
	}
	f.Close()
	start = filepath.Join(dir, "start.toml")
	st := "[[species]]\nname = \"12C16O\"\nomega_e = 2171.3\nomega_e_x_e = 13.3\nomega_e_y_e = 0.0105\nB_e = 1.9332\nalpha_e = 0.01785\nD_e = 6.0e-6\n\n[[species]]\nname = \"13C16O\"\n"
	if err := os.WriteFile(start, []byte(st), 0o644); err != nil {
		t.Fatal(err)
	}
	return peaks, start
}

func TestRunAssignWritesFilesThatFitReads(t *testing.T) {
	dir := t.TempDir()
	peaks, start := writeCOInputs(t, dir)
	out := filepath.Join(dir, "out")
	oc, err := RunAssign(AssignOptions{Peaks: peaks, Start: start, Bands: []linelist.Band{{VUp: 1, VLo: 0}, {VUp: 2, VLo: 1}}, Temperature: 700, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{constants.LinesFile, constants.UnassignedFile, constants.ConstantsFile, constants.AssignReportFile} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}
	list, err := linelist.ReadFile(filepath.Join(out, constants.LinesFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(list.Lines) != len(oc.Result.Lines) || len(list.Lines) < 250 {
		t.Fatalf("lines.csv has %d lines, result %d", len(list.Lines), len(oc.Result.Lines))
	}
	// position is the peak's text, unchanged; the truth column passes through.
	raw, _ := os.ReadFile(peaks)
	ti := -1
	for i, n := range list.Extra {
		if n == "truth" {
			ti = i
		}
	}
	if ti < 0 {
		t.Fatal("truth column not passed through")
	}
	for _, l := range list.Lines[:20] {
		if !strings.Contains(string(raw), "\n"+strconv.FormatFloat(l.Position, 'f', 6, 64)+",") {
			t.Errorf("position %v not found as written in the peak list", l.Position)
		}
	}
	// The line list fits at once (Dunham model, every isotopologue jointly).
	fo, err := RunFit(FitOptions{Inputs: []string{filepath.Join(out, constants.LinesFile)}, Model: "dunham", Terms: []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02"}, Reject: 3, Out: filepath.Join(dir, "fit")})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range fo.Result.Params {
		// Huber & Herzberg (1979) Be and αe of 12C16O, from memory: within 4σ.
		if p.Name == "Y01" && (p.Value-1.93128087 > 4*p.Sigma || 1.93128087-p.Value > 4*p.Sigma) {
			t.Errorf("Y01 = %v ± %v", p.Value, p.Sigma)
		}
		if p.Name == "Y11" && (p.Value+0.01750441 > 4*p.Sigma || -0.01750441-p.Value > 4*p.Sigma) {
			t.Errorf("Y11 = %v ± %v", p.Value, p.Sigma)
		}
	}
	md, _ := os.ReadFile(filepath.Join(out, constants.AssignReportFile))
	for _, want := range []string{"| 12C16O 1-0 |", "| 13C16O 2-1 |", "Combination differences", "Internal fit"} {
		if !strings.Contains(string(md), want) {
			t.Errorf("assign.md lacks %q", want)
		}
	}
}

func TestAssignBadInputsWriteNothing(t *testing.T) {
	dir := t.TempDir()
	peaks, start := writeCOInputs(t, dir)
	bad := filepath.Join(dir, "bad.toml")
	os.WriteFile(bad, []byte("[[species]]\nname = \"12C16O\"\nomega_e = 2170\nomega_ex_e = 13\nB_e = 1.93\nalpha_e = 0.0175\nD_e = 6e-6\n"), 0o644)
	badPeaks := filepath.Join(dir, "bad.csv")
	os.WriteFile(badPeaks, []byte("position,unc\n2143.2,0.001\n2144.1,-1\n"), 0o644)
	bands := []linelist.Band{{VUp: 1, VLo: 0}}
	cases := []struct {
		o    AssignOptions
		want string
		code int
	}{
		{AssignOptions{Peaks: peaks, Start: bad, Bands: bands}, "bad.toml:4: species.omega_ex_e: unknown key", 1},
		{AssignOptions{Peaks: badPeaks, Start: start, Bands: bands}, "bad.csv:3: unc: must be > 0", 1},
		{AssignOptions{Peaks: peaks, Bands: bands}, "either --start", 1},
		{AssignOptions{Peaks: peaks, Start: start, Bands: bands, Tolerance: "0.1nm"}, "--tolerance", 1},
		{AssignOptions{Peaks: peaks, Start: start, Bands: []linelist.Band{{VUp: 0, VLo: 0}}}, "pure rotation", 1},
	}
	for _, c := range cases {
		c.o.Out = filepath.Join(dir, "out")
		_, err := RunAssign(c.o)
		if err == nil || !strings.Contains(err.Error(), c.want) || failure.ExitCode(err) != c.code {
			t.Errorf("%+v: got %v (exit %d), want %q (exit %d)", c.o, err, failure.ExitCode(err), c.want, c.code)
		}
		if _, err := os.Stat(c.o.Out); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s: output folder written", c.want)
		}
	}
	// Constants of another molecule: no band locks, exit code 2, nothing written.
	hcl := filepath.Join(dir, "hcl.toml")
	os.WriteFile(hcl, []byte("[[species]]\nname = \"1H35Cl\"\nomega_e = 2990.9\nomega_e_x_e = 52.8\nB_e = 10.59\nalpha_e = 0.307\nD_e = 5.3e-4\n"), 0o644)
	_, err := RunAssign(AssignOptions{Peaks: peaks, Start: hcl, Bands: bands, Out: filepath.Join(dir, "out")})
	if err == nil || failure.ExitCode(err) != 2 || !strings.Contains(err.Error(), "1H35Cl 1-0") || !strings.Contains(err.Error(), "predicted inside the peaks' range") {
		t.Errorf("HCl constants on CO peaks: %v (exit %d)", err, failure.ExitCode(err))
	}
}
