package main

// Numerical faults at the command line: each ends in a clear message (exit 2
// when no honest result exists) or in a result without NaN, never in a panic.

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// noNaN fails when any file under dir holds NaN or Inf as a value.
func noNaN(t *testing.T, dir string) {
	t.Helper()
	n := 0
	for name := range snapshot(t, dir) {
		p := filepath.Join(dir, name)
		if st, err := os.Stat(p); err != nil || st.IsDir() {
			continue
		}
		n++
		b := readFile(t, p)
		for _, bad := range []string{"NaN", "+Inf", "-Inf", ",Inf", " Inf"} {
			if strings.Contains(b, bad) {
				t.Errorf("%s holds %q", name, bad)
			}
		}
	}
	if n == 0 {
		t.Errorf("no files under %s", dir)
	}
}

func TestNumericalFaults(t *testing.T) {
	dir := t.TempDir()
	in := func(name, content string) string {
		p := filepath.Join(dir, name)
		writeFile(t, p, []byte(content))
		return p
	}
	out := func(name string) string { return filepath.Join(dir, "out", name) }

	t.Run("rank deficiency", func(t *testing.T) {
		// One band determines the band origin Y10 + 2Y20 + …, not Y10 and Y20 apart.
		p := in("one-band.csv", coLineList([][2]int{{1, 0}}, 20))
		code, _, stderr := runCLI("fit", p, "--out", out("rank"))
		if code != 2 || !strings.Contains(stderr, "bandwright fit: "+filepath.Join(dir, "one-band.csv")+": the data cannot determine") || !strings.Contains(stderr, "Y10") || !strings.Contains(stderr, "Y20") {
			t.Errorf("exit %d: %s", code, stderr)
		}
		if _, err := os.Stat(out("rank")); !os.IsNotExist(err) {
			t.Errorf("output written")
		}
	})
	t.Run("fewer lines than parameters", func(t *testing.T) {
		p := in("four.csv", strings.Join(strings.SplitAfter(baseLines, "\n")[:5], ""))
		code, _, stderr := runCLI("fit", p, "--out", out("few"))
		if code != 2 || !strings.Contains(stderr, "4 lines in use for 5 fitted parameters") {
			t.Errorf("exit %d: %s", code, stderr)
		}
	})
	t.Run("no degrees of freedom", func(t *testing.T) {
		// One pure-rotation line of 12C16O (J = 1-0 at 2B ≈ 3.8451 cm-1, Huber &
		// Herzberg 1979, from memory) fitted with B alone: the fit exists, its s
		// does not.
		p := in("one.csv", "species,v_up,J_up,v_lo,J_lo,position,unc\n12C16O,0,1,0,0,3.8451,0.0001\n")
		code, stdout, stderr := runCLI("fit", p, "--model", "term-values", "--terms", "B", "--out", out("dof0"))
		if code != 0 || !strings.Contains(stdout, "s = undefined (no degrees of freedom)") || !strings.Contains(stderr, "warning: no degrees of freedom") {
			t.Fatalf("exit %d\n%s\n%s", code, stdout, stderr)
		}
		noNaN(t, out("dof0"))
		var rec map[string]any
		if err := json.Unmarshal([]byte(readFile(t, filepath.Join(out("dof0"), "constants.json"))), &rec); err != nil {
			t.Fatal(err)
		}
		if s := rec["stats"].(map[string]any)["sigma_dimensionless"]; s != nil {
			t.Errorf("sigma_dimensionless %v, want null", s)
		}
		// One vibrational level and no ω_e: the vibrational levels are unknown,
		// so thermo refuses the temperatures where they could matter (exit 2,
		// naming the key that would supply ω_e) and gives the ones below.
		if code, _, stderr := runCLI("thermo", filepath.Join(out("dof0"), "constants.json"), "--temperatures", "298.15", "--out", out("dof0-thermo")); code != 2 || !strings.Contains(stderr, "omega_e") || !strings.Contains(stderr, "--states") {
			t.Errorf("thermo of it at 298.15 K: exit %d: %s", code, stderr)
		}
		if code, _, stderr := runCLI("thermo", filepath.Join(out("dof0"), "constants.json"), "--temperatures", "2", "--out", out("dof0-thermo")); code != 0 {
			t.Errorf("thermo of it at 2 K: exit %d: %s", code, stderr)
		}
	})

	// A record whose extrapolated B_v turns negative: Y11 = −Be/40 for 12C16O.
	var m map[string]any
	if err := json.Unmarshal(record(t), &m); err != nil {
		t.Fatal(err)
	}
	for _, p := range m["parameters"].([]any) {
		if p := p.(map[string]any); p["name"] == "Y11" {
			p["value"] = -1.93128087 / 40
		}
	}
	b, _ := json.MarshalIndent(m, "", "  ")
	negB := in("negative-B.json", string(b))
	t.Run("B_v turns negative", func(t *testing.T) {
		code, _, stderr := runCLI("thermo", negB, "--temperatures", "1,298.15,6000,100000", "--mc", "50", "--out", out("negB"))
		if code != 0 || !strings.Contains(stderr, "turns negative at v=40") {
			t.Fatalf("exit %d: %s", code, stderr)
		}
		noNaN(t, out("negB"))
		if csv := readFile(t, filepath.Join(out("negB"), "thermo.csv")); !strings.Contains(csv, "B_v turns negative at v=40") {
			t.Errorf("thermo.csv does not say where the sum stops")
		}
		// predict: the observed band is fine, a band reaching v = 40 cannot be done.
		if code, _, stderr := runCLI("predict", negB, "--bands", "1-0", "--jmax", "60", "--out", out("negB.csv")); code != 0 {
			t.Errorf("predict 1-0: exit %d: %s", code, stderr)
		}
		code, _, stderr = runCLI("predict", negB, "--bands", "1-0,40-39", "--out", out("negB40.csv"))
		if code != 2 || !strings.Contains(stderr, "band 40-39 of 12C16O: the model's rotational constant B_v is not positive at v=40") {
			t.Errorf("predict 40-39: exit %d: %s", code, stderr)
		}
		if _, err := os.Stat(out("negB40.csv")); !os.IsNotExist(err) {
			t.Errorf("predict 40-39 wrote its output")
		}
		noNaN(t, filepath.Join(dir, "out"))
	})
	t.Run("temperatures", func(t *testing.T) {
		rec := in("c.json", string(record(t)))
		for _, bad := range []string{"0.001", "0", "-5", "nan", "1e6"} {
			code, _, stderr := runCLI("thermo", rec, "--temperatures", bad, "--out", out("T"))
			if code != 1 || !strings.Contains(stderr, "thermo: --temperatures: entry 1") {
				t.Errorf("%s K: exit %d: %s", bad, code, stderr)
			}
		}
		if code, _, stderr := runCLI("thermo", rec, "--temperatures", "1,100000", "--mc", "30", "--out", out("T")); code != 0 {
			t.Errorf("1 K and 100 000 K: exit %d: %s", code, stderr)
		}
		noNaN(t, out("T"))
	})
	t.Run("singular covariance", func(t *testing.T) {
		// Y11 made perfectly correlated with Y01 (its covariance row and column
		// the scaled ones of Y01, σ kept): positive semi-definite, singular.
		// Monte Carlo says so and draws in the range of the covariance.
		var m map[string]any
		if err := json.Unmarshal(record(t), &m); err != nil {
			t.Fatal(err)
		}
		idx := map[string]int{}
		for k, p := range m["parameters"].([]any) {
			idx[p.(map[string]any)["name"].(string)] = k // all fitted, in covariance order
		}
		c := [][]any{}
		for _, r := range m["covariance"].([]any) {
			c = append(c, r.([]any))
		}
		i, j := idx["Y01"], idx["Y11"]
		a := math.Sqrt(c[j][j].(float64) / c[i][i].(float64))
		for k := range c {
			if k != j {
				c[j][k] = a * c[i][k].(float64)
				c[k][j] = c[j][k]
			}
		}
		c[j][j] = a * a * c[i][i].(float64)
		b, _ := json.MarshalIndent(m, "", "  ")
		p := in("singular.json", string(b))
		code, _, stderr := runCLI("thermo", p, "--temperatures", "298.15,3000", "--mc", "50", "--out", out("singular"))
		if code != 0 || !strings.Contains(stderr, "the covariance of the fit is singular (rank 4 of 5)") {
			t.Errorf("exit %d: %s", code, stderr)
		}
		noNaN(t, out("singular"))
		code, _, stderr = runCLI("predict", p, "--bands", "1-0", "--out", out("singular.csv"))
		if code != 0 {
			t.Errorf("predict: exit %d: %s", code, stderr)
		}
	})
}
