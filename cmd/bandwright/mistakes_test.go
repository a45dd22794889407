package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Ground-state constants of 12C16O in MHz (millimetre-wave work, as widely
// quoted; from memory): B0, D0, H0.
const mwB0, mwD0, mwH0 = 57635.96828, 0.1835055, 1.728e-7

// coRotMHz is the pure-rotation line J+1 ← J of 12C16O v = 0 in MHz, from the
// closed form E = B x − D x² + H x³, x = J(J+1) (common practice).
func coRotMHz(J int) float64 {
	e := func(j int) float64 {
		x := float64(j * (j + 1))
		return mwB0*x - mwD0*x*x + mwH0*x*x*x
	}
	return e(J+1) - e(J)
}

// TestEverydayMistakes: each mistake a new user makes with a microwave
// spectrum or with the command line, with the exit code and message bandwright
// answers it with (and nothing left behind when it fails).
func TestEverydayMistakes(t *testing.T) {
	dir := t.TempDir()
	in := func(name, content string) string {
		p := filepath.Join(dir, name)
		writeFile(t, p, []byte(content))
		return p
	}
	var mwLines, ghzPeaks, v01 strings.Builder
	mwLines.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,unit\n")
	ghzPeaks.WriteString("position\n")
	v01.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,unit\n")
	for J := 0; J < 12; J++ {
		fmt.Fprintf(&mwLines, "12C16O,0,%d,0,%d,%.4f,0.0001,MHz\n", J+1, J, coRotMHz(J))
		fmt.Fprintf(&ghzPeaks, "%.7f\n", coRotMHz(J)/1000)
		fmt.Fprintf(&v01, "12C16O,0,%d,0,%d,%.4f,0.0001,MHz\n", J+1, J, coRotMHz(J))
		// v = 1: B1 = B0 − αe, αe = 0.01750441 cm⁻¹ = 524.76 MHz (Huber &
		// Herzberg, from memory); D as in v = 0.
		x1, x0 := float64((J+1)*(J+2)), float64(J*(J+1))
		b1 := mwB0 - 524.76
		fmt.Fprintf(&v01, "12C16O,1,%d,1,%d,%.4f,0.0001,MHz\n", J+1, J, b1*(x1-x0)-mwD0*(x1*x1-x0*x0))
	}
	mw := in("co-mw.csv", mwLines.String())
	peaks := in("co-peaks-ghz.csv", ghzPeaks.String())
	rot01 := in("co-v01.csv", v01.String())
	bStart := in("b-only.toml", "unit = \"MHz\"\n[[species]]\nname = \"12C16O\"\nB_0 = 57600\n")
	// The first line of baseLines (1-0 R(0), row 2) given again as 2-1 R(5).
	first := strings.Split(row(baseLines, 2), ",")
	blend := in("blend.csv", baseLines+"12C16O,2,6,1,5,"+first[5]+",0.001,R,blend\n")
	ir := in("lines.csv", baseLines)
	allBad := in("bad.csv", strings.Replace(baseLines, ",0.001,", ",-0.001,", -1))
	out := func(name string) string { return filepath.Join(dir, "out", name) }
	rec := func() string {
		p := filepath.Join(dir, "ir.json")
		if _, err := os.Stat(p); err != nil {
			writeFile(t, p, record(t))
		}
		return p
	}

	for _, tc := range []struct {
		name   string
		args   []string
		code   int
		stdout []string // substrings of stdout
		stderr []string // substrings of stderr
		absent []string // nowhere in stdout or stderr
	}{
		{name: "fit of MHz lines shows MHz, kHz, Hz", args: []string{"fit", mw, "--model", "term-values", "--terms", "B,D,H", "--out", out("mw")},
			stdout: []string{"rms", " MHz\n"}},
		{name: "unknown unit", args: []string{"fit", mw, "--unit", "THz", "--out", out("thz")}, code: 1,
			stderr: []string{`bandwright fit: --unit "THz": use cm-1, MHz or GHz`}},
		{name: "pure rotation in v = 0 and v = 1, no band between them", args: []string{"fit", rot01, "--model", "term-values", "--out", out("v01")},
			stderr: []string{"warning: T_v1[12C16O] held at 0: no line connects v=1 to v=0 of 12C16O"}},
		{name: "assign a pure-rotation spectrum with B_0 alone", args: []string{"assign", peaks, "--start", bStart, "--bands", "0-0", "--spectrum", "rotation", "--unit", "GHz", "--out", out("as")},
			stdout: []string{"assign: 12 lines assigned, 0 peaks left over"}},
		{name: "B_0 alone for an infrared band", args: []string{"assign", peaks, "--start", bStart, "--bands", "1-0", "--out", out("as-ir")}, code: 1,
			stderr: []string{"bandwright assign: " + bStart + ":2: 12C16O: band 1-0 needs the equilibrium constants"}},
		{name: "a peak list in GHz without a unit", args: []string{"assign", peaks, "--start", bStart, "--bands", "0-0", "--spectrum", "rotation", "--out", out("as-cm")}, code: 2,
			stderr: []string{"bandwright assign: " + peaks + ": no band could be locked onto the peaks: the peaks look like GHz", "give --unit GHz"}},
		{name: "run on a peak list without the assign options", args: []string{"run", peaks, "--out", out("run-bare")}, code: 1,
			stderr: []string{"bandwright run: " + peaks + ": a peak list (a position column, no quantum numbers); to assign it, give the starting constants (--start START.toml or --constants constants.json) and the bands"}},
		{name: "run on a peak list with the assign options", args: []string{"run", peaks, "--start", bStart, "--bands", "0-0", "--spectrum", "rotation", "--unit", "GHz", "--out", out("run")},
			stdout: []string{"assign: 12 peaks assigned", "fit: term-values model, 12 lines", " GHz\n", "report: "}},
		{name: "one peak, two transitions", args: []string{"fit", blend, "--out", out("blend")},
			stderr: []string{"warning: " + blend + ":84: one peak assigned to two transitions: position " + first[5] + " cm-1 is also row 2's, assigned to 1-0 R(0), and here to 2-1 R(5)"}},
		{name: "a Q branch asked of an infrared band", args: []string{"predict", rec(), "--bands", "1-0", "--branches", "P,Q,R", "--jmax", "3", "--out", out("q.csv")},
			stderr: []string{"warning: band 1-0 of 12C16O: a ¹Σ–¹Σ band of an infrared spectrum has no Q branch"}},
		{name: "a band the record has no levels for", args: []string{"predict", rec(), "--bands", "0-0", "--species", "13C16O", "--out", out("x.csv")}, code: 1,
			stderr: []string{"bandwright predict: " + rec() + ": species 13C16O is not in the constants record"}, absent: []string{"fit:", "pipelines:"}},
		{name: "the same mistake in every row", args: []string{"fit", allBad, "--out", out("bad")}, code: 1,
			stderr: []string{"bandwright fit: " + allBad + ": 82 problems", allBad + ": ... and 79 more rows with the same problem in unc (rows 5–83)"}, absent: []string{"linelist:", "\n... and"}},
		{name: "a mistyped command", args: []string{"fti", ir}, code: 1, stderr: []string{`bandwright: unknown command "fti"; did you mean fit?`}},
		{name: "help after the arguments", args: []string{"fit", ir, "--help"}, stdout: []string{"bandwright fit - fit molecular constants", "--unit value"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, stdout, stderr := runCLI(tc.args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d\nstdout: %s\nstderr: %s", code, tc.code, stdout, stderr)
			}
			for _, w := range tc.stdout {
				if !strings.Contains(stdout, w) {
					t.Errorf("stdout lacks %q:\n%s", w, stdout)
				}
			}
			for _, w := range tc.stderr {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr lacks %q:\n%s", w, stderr)
				}
			}
			for _, w := range tc.absent {
				if strings.Contains(stdout+stderr, w) {
					t.Errorf("output holds %q:\n%s%s", w, stdout, stderr)
				}
			}
		})
	}
}
