package pipelines

import (
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/pipelines/report"
)

// o2Lines are fine-structure lines of 16O2 X³Σg⁻ v = 0 near 60 GHz (MHz), as
// the lead recalls them from published measurements (from memory; the
// digits may be off by about 0.01 MHz): N, the N+ line (J = N+1 → N) and the
// N− line (J = N−1 → N). J = N (F2) is the upper level of both.
var o2Lines = [][3]float64{
	{1, 56264.774, 0}, {3, 58446.588, 62486.255}, {5, 59590.982, 60306.056}, {7, 60434.778, 59164.204},
	{9, 61150.559, 58323.875}, {11, 61800.154, 57612.485}, {13, 62411.220, 56968.209},
	{15, 62997.982, 56363.393}, {17, 63568.525, 55783.810}, {19, 64127.776, 55221.371},
}

// TestOpenShellStages runs the fit and predict stages on the recalled 16O2
// lines with an electronic-states file: the record carries the state and the
// convergence, residuals.csv the open-shell columns, fit.md the state, and
// predict --lines --unit MHz gives the N = 1, J = 1 ← 0 line near
// 118750.343 MHz (recalled, from memory) within 0.1 MHz.
func TestOpenShellStages(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("species,v_up,J_up,v_lo,J_lo,N_up,N_lo,position,unc,unit\n")
	for _, l := range o2Lines {
		n := int(l[0])
		fmt.Fprintf(&b, "16O2,0,%d,0,%d,%d,%d,%.3f,0.02,MHz\n", n, n+1, n, n, l[1])
		if l[2] > 0 {
			fmt.Fprintf(&b, "16O2,0,%d,0,%d,%d,%d,%.3f,0.02,MHz\n", n, n-1, n, n, l[2])
		}
	}
	lines := filepath.Join(dir, "o2.csv")
	states := filepath.Join(dir, "o2.toml")
	search := filepath.Join(dir, "search.csv")
	for path, text := range map[string]string{
		lines:  b.String(),
		states: "species = \"16O2\"\n[[state]]\nlabel = \"X\"\nterm_energy = 0.0\nspin_multiplicity = 3\nlambda = 0\nsymmetry = \"g-\"\n[state.start]\nB = 1.4377\n",
		search: "species,v_up,J_up,v_lo,J_lo,N_up,N_lo\n16O2,0,1,0,0,1,1\n",
	} {
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	out := filepath.Join(dir, "fit")
	oc, err := RunFit(FitOptions{Inputs: []string{lines}, Model: "term-values", Terms: []string{"B", "lambda", "lambda_D", "gamma", "gamma_D"},
		Fix: []string{"D=4.84e-6"}, States: states, Out: out})
	if err != nil {
		t.Fatal(err)
	}
	rec := oc.Record
	if len(rec.States) != 1 || rec.States[0] != (constants.State{Label: "X", Multiplicity: 3, Symmetry: "g-"}) || rec.Convergence == nil || !rec.Convergence.Converged {
		t.Errorf("record states %+v, convergence %+v", rec.States, rec.Convergence)
	}
	if len(rec.Provenance.Inputs) != 2 || rec.Provenance.Inputs[1].Path != states {
		t.Errorf("provenance inputs %+v: the states file is an input", rec.Provenance.Inputs)
	}
	res, err := os.ReadFile(filepath.Join(out, constants.ResidualsFile))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(strings.NewReader(string(res))).ReadAll()
	if err != nil || len(rows) != 20 || !strings.Contains(strings.Join(rows[0], ","), "N_up,N_lo,F_up,F_lo,parity_up,parity_lo") {
		t.Fatalf("residuals.csv: %v %d rows, header %v", err, len(rows), rows[0])
	}
	md, _ := os.ReadFile(filepath.Join(out, constants.FitReportFile))
	if !strings.Contains(string(md), "Electronic states: X ³Σg⁻") || !strings.Contains(string(md), "starting points") {
		t.Errorf("fit.md lacks the state or the convergence:\n%s", md)
	}
	files, err := report.Build(out, report.Options{Formats: []string{"md"}})
	if err != nil {
		t.Fatalf("report of an open-shell fit: %v", err)
	}
	if md := string(files["report.md"]); !strings.Contains(md, "gamma\\_v0\\[16O16O\\]") {
		t.Errorf("report.md:\n%s", md)
	}
	pred := filepath.Join(dir, "pred.csv")
	if _, err := RunPredict(PredictOptions{Constants: filepath.Join(out, constants.ConstantsFile), Lines: search, Unit: "MHz", Out: pred}); err != nil {
		t.Fatal(err)
	}
	pb, _ := os.ReadFile(pred)
	prows, err := csv.NewReader(strings.NewReader(string(pb))).ReadAll()
	if err != nil || len(prows) != 2 {
		t.Fatalf("predicted.csv: %v\n%s", err, pb)
	}
	col := map[string]int{}
	for i, h := range prows[0] {
		col[h] = i
	}
	nu, _ := strconv.ParseFloat(prows[1][col["position"]], 64)
	if math.Abs(nu-118750.343) > 0.1 || prows[1][col["unit"]] != "MHz" || prows[1][col["branch"]] != "qR23" || prows[1][col["N_up"]] != "1" {
		t.Errorf("prediction %v (header %v)", prows[1], prows[0])
	}
}
