package pipelines

import (
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/units"
)

// Ground-state constants of 12C16O from millimetre- and submillimetre-wave
// measurements, as widely quoted (from memory), in MHz: B0, D0, H0. Lines
// computed from them reproduce the J = 1-0 line at 115 271.20 MHz.
const coB0, coD0, coH0 = 57635.96828, 0.1835055, 1.728e-7

// coRotationMHz returns the pure-rotation line J+1 ← J of 12C16O v=0 in MHz
// from the closed form E(J) = B x − D x² + H x³, x = J(J+1) — computed here,
// independently of the models under test.
func coRotationMHz(J int) float64 {
	e := func(j int) float64 {
		x := float64(j * (j + 1))
		return coB0*x - coD0*x*x + coH0*x*x*x
	}
	return e(J+1) - e(J)
}

// writeRotationMHz writes the lines J+1 ← J, J = 0 … jmax, of 12C16O v=0 in
// MHz with Gaussian noise of 1σ = unc.
func writeRotationMHz(t *testing.T, path string, jmax int, unc float64, seed uint64) {
	t.Helper()
	r := rand.New(rand.NewPCG(seed, 3))
	var b strings.Builder
	b.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,unit\n")
	for J := 0; J <= jmax; J++ {
		fmt.Fprintf(&b, "12C16O,0,%d,0,%d,%.6f,%g,MHz\n", J+1, J, coRotationMHz(J)+unc*r.NormFloat64(), unc)
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// readCSV reads a CSV file into its header and rows of name → cell.
func readCSV(t *testing.T, path string) ([]string, []map[string]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var rows []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		rows = append(rows, m)
	}
	return recs[0], rows
}

func atoiT(t *testing.T, s string) int {
	t.Helper()
	n, err := strconv.Atoi(s)
	if err != nil {
		t.Fatal(err)
	}
	return n
}

func atofT(t *testing.T, s string) float64 {
	t.Helper()
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

// TestPredictMicrowave fits a pure-rotation spectrum of 12C16O given in MHz
// and predicts it: positions in MHz within 4σ of the lines computed from the
// constants the data were made from, σ shown to two significant digits, the
// lines beyond the fitted J marked extrapolated, and relative intensities at
// 10 K as the Boltzmann law gives them.
func TestPredictMicrowave(t *testing.T) {
	dir := t.TempDir()
	lines := filepath.Join(dir, "co-mw.csv")
	writeRotationMHz(t, lines, 24, 0.01, 5)
	fo, err := RunFit(FitOptions{Inputs: []string{lines}, Model: "term-values", Terms: []string{"B", "D", "H"}, Reject: 3, Out: filepath.Join(dir, "fit")})
	if err != nil {
		t.Fatal(err)
	}
	if fo.Record.DisplayUnit != "MHz" || fo.Record.Unit != "cm-1" {
		t.Errorf("record unit %q, display unit %q; want cm-1 kept and MHz shown", fo.Record.Unit, fo.Record.DisplayUnit)
	}
	out := filepath.Join(dir, "pred.csv")
	const T = 10.0
	oc, err := RunPredict(PredictOptions{Constants: filepath.Join(dir, "fit", "constants.json"), Bands: []linelist.Band{{VUp: 0, VLo: 0}}, JMax: 40, Temperature: T, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	if oc.Unit != linelist.MHz || oc.Lines != 41 || len(oc.Warnings) != 0 {
		t.Fatalf("outcome %+v; want 41 lines in MHz (the fit's unit), no warning", oc)
	}
	head, rows := readCSV(t, out)
	if strings.Join(head, ",") != "species,v_up,J_up,v_lo,J_lo,branch,position,unc,unit,extrapolated,intensity" {
		t.Errorf("header %v", head)
	}
	ref := 0.0 // the independent intensity of the strongest line
	want := make([]float64, len(rows))
	for i, r := range rows {
		J := atoiT(t, r["J_lo"])
		nu := coRotationMHz(J)
		// I ∝ (J+1)·exp(−hcE_J/kT)·ν·(1 − exp(−hν/kT)) for a heteronuclear
		// molecule (common practice); E_J and ν in cm⁻¹.
		eJ := (coB0*float64(J*(J+1)) - coD0*math.Pow(float64(J*(J+1)), 2)) / units.MHzPerWavenumber
		nuCm := nu / units.MHzPerWavenumber
		want[i] = float64(J+1) * math.Exp(-units.SecondRadiation*eJ/T) * nuCm * -math.Expm1(-units.SecondRadiation*nuCm/T)
		ref = math.Max(ref, want[i])
	}
	for i, r := range rows {
		J := atoiT(t, r["J_lo"])
		pos, unc := atofT(t, r["position"]), atofT(t, r["unc"])
		if r["unit"] != "MHz" || r["branch"] != "R" {
			t.Errorf("J=%d: unit %s branch %s", J, r["unit"], r["branch"])
		}
		checkSigmaDigits(t, r["position"], r["unc"])
		extrap := J+1 > 25
		if (r["extrapolated"] == "yes") != extrap {
			t.Errorf("J=%d←%d: extrapolated %s, want %v (lines observed up to J=25)", J+1, J, r["extrapolated"], extrap)
		}
		if !extrap && math.Abs(pos-coRotationMHz(J)) > 4*unc {
			t.Errorf("J=%d←%d: %s ± %s MHz, truth %.5f MHz: off by %.1fσ", J+1, J, r["position"], r["unc"], coRotationMHz(J), (pos-coRotationMHz(J))/unc)
		}
		if got := atofT(t, r["intensity"]); !scalar.EqualWithinAbsOrRel(got, want[i]/ref, 1e-300, 6e-3) /* 3 significant digits */ {
			t.Errorf("J=%d←%d: intensity %g, want %.3g", J+1, J, got, want[i]/ref)
		}
	}
}

// checkSigmaDigits checks that a position and its σ are written to the same
// decimal place, with at least two significant digits of σ.
func checkSigmaDigits(t *testing.T, pos, unc string) {
	t.Helper()
	dec := func(s string) int {
		if i := strings.IndexByte(s, '.'); i >= 0 {
			return len(s) - i - 1
		}
		return 0
	}
	if dec(pos) != dec(unc) {
		t.Errorf("position %s and unc %s written to different places", pos, unc)
	}
	sig := strings.TrimLeft(strings.Replace(unc, ".", "", 1), "0")
	if len(sig) < 2 {
		t.Errorf("unc %s has fewer than two significant digits", unc)
	}
}

// TestPredictBranches: a ¹Σ–¹Σ infrared band has no Q branch; asking for one
// gives a warning and lines of intensity 0; the spectrum's own branches are the
// default; a band beyond the fitted levels is marked extrapolated.
func TestPredictBranches(t *testing.T) {
	dir := t.TempDir()
	lines := filepath.Join(dir, "co.csv")
	writeLines(t, lines, [][2]int{{1, 0}, {2, 1}}, 25, 4, "")
	if _, err := RunFit(FitOptions{Inputs: []string{lines}, Model: "dunham", Reject: 3, Out: filepath.Join(dir, "fit")}); err != nil {
		t.Fatal(err)
	}
	rec := filepath.Join(dir, "fit", "constants.json")
	out := filepath.Join(dir, "p.csv")
	for _, tc := range []struct {
		name     string
		o        PredictOptions
		branches string // distinct branches written, in order
		warning  string
	}{
		{"infrared default", PredictOptions{Bands: []linelist.Band{{VUp: 1, VLo: 0}}}, "P,R", ""},
		{"infrared with Q", PredictOptions{Bands: []linelist.Band{{VUp: 1, VLo: 0}}, Branches: []string{"P", "Q", "R"}, Temperature: 296}, "P,Q,R",
			"band 1-0 of 12C16O: a ¹Σ–¹Σ band of an infrared spectrum has no Q branch (ΔJ = 0; it has P, R); its Q lines are written as asked, with intensity 0"},
		{"raman default", PredictOptions{Bands: []linelist.Band{{VUp: 1, VLo: 0}}, Spectrum: "raman"}, "O,Q,S", ""},
		{"rotation asked for P", PredictOptions{Bands: []linelist.Band{{VUp: 0, VLo: 0}}, Branches: []string{"P", "R"}}, "R",
			"no P lines are written (within one level they are the lines of ΔJ = +1 read backwards)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := tc.o
			o.Constants, o.Out, o.JMax = rec, out, 10
			oc, err := RunPredict(o)
			if err != nil {
				t.Fatal(err)
			}
			if tc.warning == "" && len(oc.Warnings) > 0 || tc.warning != "" && (len(oc.Warnings) != 1 || !strings.Contains(oc.Warnings[0], tc.warning)) {
				t.Errorf("warnings %q, want %q", oc.Warnings, tc.warning)
			}
			_, rows := readCSV(t, out)
			var seen []string
			for _, r := range rows {
				if len(seen) == 0 || seen[len(seen)-1] != r["branch"] {
					seen = append(seen, r["branch"])
				}
				if o.Temperature > 0 && r["branch"] == "Q" && atofT(t, r["intensity"]) != 0 {
					t.Errorf("Q line %s←%s with intensity %s in an infrared band", r["J_up"], r["J_lo"], r["intensity"])
				}
				if r["unit"] != "cm-1" {
					t.Errorf("unit %s, want the fit's cm-1", r["unit"])
				}
			}
			if got := strings.Join(seen, ","); got != tc.branches {
				t.Errorf("branches %s, want %s", got, tc.branches)
			}
		})
	}
	// A band whose upper level no line reached is an extrapolation throughout.
	if _, err := RunPredict(PredictOptions{Constants: rec, Bands: []linelist.Band{{VUp: 3, VLo: 0}}, JMax: 5, Out: out}); err != nil {
		t.Fatal(err)
	}
	_, rows := readCSV(t, out)
	for _, r := range rows {
		if r["extrapolated"] != "yes" {
			t.Errorf("3-0 %s←%s: extrapolated %s, want yes (v=3 not observed)", r["J_up"], r["J_lo"], r["extrapolated"])
		}
	}
}

// mdRow returns the cells of the Markdown table row of fit.md whose first cell
// is name (Markdown-escaped as fit.md writes it).
func mdRow(t *testing.T, md, name string) []string {
	t.Helper()
	for _, l := range strings.Split(md, "\n") {
		cells := strings.Split(strings.Trim(l, "| "), " | ")
		if len(cells) >= 2 && cells[0] == name {
			return cells
		}
	}
	t.Fatalf("fit.md has no row %s:\n%s", name, md)
	return nil
}

// TestFitInMHzRounded: with --unit MHz and --round, fit.md quotes B in MHz, D
// in kHz and H in Hz, each with every digit sequential rounding kept (more
// than its σ alone shows), and the digits shown are the constants of the
// record; the rms is in MHz.
func TestFitInMHzRounded(t *testing.T) {
	dir := t.TempDir()
	lines := filepath.Join(dir, "co-mw.csv")
	writeRotationMHz(t, lines, 24, 0.01, 8)
	oc, err := RunFit(FitOptions{Inputs: []string{lines}, Model: "term-values", Terms: []string{"B", "D", "H"}, Reject: 3, Round: true, Unit: "MHz", Out: filepath.Join(dir, "fit")})
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(filepath.Join(dir, "fit", "fit.md"))
	if err != nil {
		t.Fatal(err)
	}
	md := string(b)
	rec := oc.Record
	for _, tc := range []struct{ id, unit, name string }{
		{"B_v0[12C16O]", "MHz", `B\_v0\[12C16O\]`}, {"D_v0[12C16O]", "kHz", `D\_v0\[12C16O\]`}, {"H_v0[12C16O]", "Hz", `H\_v0\[12C16O\]`},
	} {
		cells := mdRow(t, md, tc.name)
		text, unit := cells[2], cells[3]
		if unit != tc.unit {
			t.Errorf("%s in %s, want %s", tc.id, unit, tc.unit)
		}
		var p = rec.Parameters[0]
		for _, q := range rec.Parameters {
			if q.ID() == tc.id {
				p = q
			}
		}
		f, _ := constants.FrequencyFactor(tc.unit)
		shownValue := atofT(t, text[:strings.IndexByte(text, '(')])
		if !scalar.EqualWithinAbsOrRel(shownValue*f, p.Value, 0, 1e-13) {
			t.Errorf("%s shown %s %s = %.15g cm-1, record %.15g cm-1: the digits shown must be the rounded constant", tc.id, text, unit, shownValue*f, p.Value)
		}
		paren := constants.FormatParen(p.Value/f, p.Sigma/f)
		if len(text) <= len(paren) {
			t.Errorf("%s shown %s, no more digits than its σ alone gives (%s)", tc.id, text, paren)
		}
	}
	if cells := mdRow(t, md, "rms (MHz)"); !scalar.EqualWithinAbsOrRel(atofT(t, cells[1]), rec.Stats.RMSCm*units.MHzPerWavenumber, 0, 1e-3) {
		t.Errorf("rms %s MHz, record %g cm-1", cells[1], rec.Stats.RMSCm)
	}
}

// TestRunPeakListWithoutPipeline: `bandwright run PEAKS.csv` with the assign
// options and no pipeline file assigns, fits and reports in one command; the
// fit shows MHz (the unit of the peaks); without the options it says what a
// peak list needs.
func TestRunPeakListWithoutPipeline(t *testing.T) {
	dir := t.TempDir()
	peaks := filepath.Join(dir, "co-peaks.csv")
	var b strings.Builder
	b.WriteString("position\n")
	for J := 0; J <= 15; J++ {
		fmt.Fprintf(&b, "%.4f\n", coRotationMHz(J))
	}
	if err := os.WriteFile(peaks, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	start := filepath.Join(dir, "start.toml")
	if err := os.WriteFile(start, []byte("unit = \"MHz\"\n[[species]]\nname = \"12C16O\"\nB_0 = 57600\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	ao := &AssignOptions{Start: start, Bands: []linelist.Band{{VUp: 0, VLo: 0}}, Spectrum: "rotation", Unit: "MHz"}
	oc, err := RunChain(ChainOptions{Inputs: []string{peaks}, Assign: ao, Out: filepath.Join(dir, "run")})
	if err != nil {
		t.Fatal(err)
	}
	if oc.Assign == nil || len(oc.Assign.Result.Lines) != 16 || oc.Fit.Record.DisplayUnit != "MHz" {
		t.Fatalf("assigned %v, fit shown in %q", oc.Assign, oc.Fit.Record.DisplayUnit)
	}
	for _, p := range oc.Fit.Record.Parameters {
		if p.ID() == "B_v0[12C16O]" && math.Abs(p.Value*units.MHzPerWavenumber-coB0) > 4*p.Sigma*units.MHzPerWavenumber+1e-4 {
			t.Errorf("B_0 = %.5f MHz, truth %.5f MHz", p.Value*units.MHzPerWavenumber, coB0)
		}
	}
	for _, tc := range []struct {
		o    ChainOptions
		want string
	}{
		{ChainOptions{Inputs: []string{peaks}}, "a peak list (a position column, no quantum numbers); to assign it, give the starting constants (--start START.toml or --constants constants.json) and the bands"},
		{ChainOptions{Inputs: []string{peaks}, Assign: &AssignOptions{Start: start}}, "and the bands (--bands 1-0,2-1"},
		{ChainOptions{Inputs: []string{peaks, peaks}, Assign: ao}, "give it alone"},
		{ChainOptions{Inputs: []string{filepath.Join(dir, "run", "lines.csv")}, Assign: ao}, "a line list (it has quantum-number columns); the assign options"},
	} {
		tc.o.Out = filepath.Join(dir, "bad")
		_, err := RunChain(tc.o)
		if err == nil || !strings.Contains(err.Error(), tc.want) || failure.ExitCode(err) != 1 {
			t.Errorf("%+v: got %v, want exit 1 and %q", tc.o, err, tc.want)
		}
		if _, serr := os.Stat(tc.o.Out); serr == nil {
			t.Errorf("a failed run left %s", tc.o.Out)
		}
	}
}

// TestPredictAcrossUnconnectedLevels: with pure-rotation lines in v = 0 and
// v = 1 only, the fit holds T_v1 at 0; predict gives the rotational lines of
// either level but refuses the band 1-0, whose origin nobody measured.
func TestPredictAcrossUnconnectedLevels(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,unit\n")
	for J := 0; J < 12; J++ {
		fmt.Fprintf(&b, "12C16O,0,%d,0,%d,%.4f,0.001,MHz\n", J+1, J, coRotationMHz(J))
		// v = 1, B smaller by α_e = 524.76 MHz (Huber & Herzberg, from memory).
		x1, x0 := float64((J+1)*(J+2)), float64(J*(J+1))
		fmt.Fprintf(&b, "12C16O,1,%d,1,%d,%.4f,0.001,MHz\n", J+1, J, (coB0-524.76)*(x1-x0)-coD0*(x1*x1-x0*x0))
	}
	lines := filepath.Join(dir, "rot.csv")
	if err := os.WriteFile(lines, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := RunFit(FitOptions{Inputs: []string{lines}, Model: "term-values", Reject: 3, Out: filepath.Join(dir, "fit")}); err != nil {
		t.Fatal(err)
	}
	rec := filepath.Join(dir, "fit", "constants.json")
	if _, err := RunPredict(PredictOptions{Constants: rec, Bands: []linelist.Band{{VUp: 1, VLo: 1}}, JMax: 5, Out: filepath.Join(dir, "p11.csv")}); err != nil {
		t.Errorf("band 1-1: %v", err)
	}
	_, err := RunPredict(PredictOptions{Constants: rec, Bands: []linelist.Band{{VUp: 1, VLo: 0}}, JMax: 5, Out: filepath.Join(dir, "p10.csv")})
	if err == nil || !strings.Contains(err.Error(), "band 1-0 of 12C16O: the energy of v=1 above v=0 is not known") || failure.ExitCode(err) != 1 {
		t.Errorf("band 1-0: got %v, want a refusal (exit 1)", err)
	}
	if _, serr := os.Stat(filepath.Join(dir, "p10.csv")); serr == nil {
		t.Error("a refused prediction left its file")
	}
}
