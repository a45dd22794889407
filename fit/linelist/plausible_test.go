package linelist

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bandwright/units"
)

// coRows returns a line list of n R lines of the 12C16O fundamental, positions in
// cm-1 from the Huber & Herzberg (1979) constants (from memory) to a few 0.01 cm-1 —
// close enough for the unit checks under test — with every mhzEvery-th row in MHz
// (0: none), and a unit column when withUnit.
func coRows(n int, mhzEvery int, withUnit bool) string {
	var b strings.Builder
	b.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc")
	if withUnit {
		b.WriteString(",unit")
	}
	b.WriteString("\n")
	for j := 0; j < n; j++ {
		// R(J) of 1-0: ν ≈ 2143.27 + 3.83 (J+1) − 0.0175 (J+1)²
		m := float64(j + 1)
		nu, unc := 2143.27+3.83*m-0.0175*m*m, 0.001
		unit := "cm-1"
		if mhzEvery > 0 && j%mhzEvery == mhzEvery-1 {
			nu, unc, unit = nu*units.MHzPerWavenumber, unc*units.MHzPerWavenumber, "MHz"
		}
		fmt.Fprintf(&b, "12C16O,1,%d,0,%d,%.6f,%.6g", j+1, j, nu, unc)
		if withUnit {
			b.WriteString("," + unit)
		}
		b.WriteString("\n")
	}
	return b.String()
}

func problemsOf(t *testing.T, err error) []Problem {
	t.Helper()
	var le *Error
	if !errors.As(err, &le) {
		t.Fatalf("error %T %v, want *Error", err, err)
	}
	return le.Problems
}

// TestUnitsWithoutUnitColumn: positions in MHz written without a unit column are
// refused with a hint, whether the whole file or a part of a band is in MHz, and
// the same rows with a unit column read.
func TestUnitsWithoutUnitColumn(t *testing.T) {
	// Every row in MHz, no unit column: each row is beyond any dissociation energy.
	_, err := Read(strings.NewReader(coRows(6, 1, false)), "mhz.csv")
	ps := problemsOf(t, err)
	if len(ps) != 6 {
		t.Fatalf("all-MHz: %v", err)
	}
	for _, p := range ps {
		if p.Field != "position" || !strings.Contains(p.Reason, "dissociation energy") || !strings.Contains(p.Reason, "add a unit column") {
			t.Errorf("all-MHz: %v", p)
		}
	}

	// Every third row in MHz within one band, no unit column: one problem naming the mix.
	_, err = Read(strings.NewReader(coRows(9, 3, false)), "mixed.csv")
	ps = problemsOf(t, err)
	if len(ps) != 1 || ps[0].Field != "position" || !strings.Contains(ps[0].Reason, "mix cm-1 and MHz") ||
		!strings.Contains(ps[0].Reason, "12C16O 1-0") || !strings.Contains(ps[0].String(), "mixed.csv:") {
		t.Errorf("mixed: %v", err)
	}

	// The same rows with a unit column are fine.
	l, err := Read(strings.NewReader(coRows(9, 3, true)), "units.csv")
	if err != nil || len(l.Lines) != 9 {
		t.Fatalf("with units: %v", err)
	}
	for _, x := range l.Lines {
		if w := x.Wavenumber(); w < 2140 || w > 2200 {
			t.Errorf("row %d: %v cm-1", x.Row, w)
		}
	}
}

// TestPureRotationInMHz: a CO pure-rotation line J=1-0 in MHz written without a unit
// (115 271 MHz, its measured millimetre-wave frequency, from memory) is refused: as cm-1 it would be
// beyond every dissociation energy; a heavy molecule's low-J line in MHz, below that
// bound, is still refused because it implies a rotational constant no molecule has.
func TestPureRotationInMHz(t *testing.T) {
	_, err := Read(strings.NewReader("species,v_up,J_up,v_lo,J_lo,position,unc\n12C16O,0,1,0,0,115271.2018,0.0005\n"), "rot.csv")
	if ps := problemsOf(t, err); len(ps) != 1 || !strings.Contains(ps[0].Reason, "dissociation energy") {
		t.Errorf("CO J=1-0 in MHz: %v", err)
	}
	// 79Br81Br (B ≈ 0.082 cm-1 ≈ 2.4 GHz, from memory): J=3-2 at about 14.7 GHz.
	_, err = Read(strings.NewReader("species,v_up,J_up,v_lo,J_lo,position,unc\n79Br81Br,0,3,0,2,14700,0.01\n"), "br2.csv")
	if ps := problemsOf(t, err); len(ps) != 1 || ps[0].Row != 2 || !strings.Contains(ps[0].Reason, "rotational constant of 2450 cm-1") {
		t.Errorf("Br2 J=3-2 in MHz: %v", err)
	}
	// The same line in cm-1 (0.49 cm-1) and in MHz with its unit read.
	for _, in := range []string{"79Br81Br,0,3,0,2,0.49,0.0001\n", "79Br81Br,0,3,0,2,14700,0.01,MHz\n"} {
		hdr := "species,v_up,J_up,v_lo,J_lo,position,unc"
		if strings.Count(in, ",") == 7 {
			hdr += ",unit"
		}
		if _, err := Read(strings.NewReader(hdr+"\n"+in), "ok.csv"); err != nil {
			t.Errorf("%q: %v", in, err)
		}
	}
}

// TestDuplicateLinesWarn: a line pasted twice reads, with a warning naming both rows;
// the same transition measured at two positions is no duplicate.
func TestDuplicateLinesWarn(t *testing.T) {
	in := "species,v_up,J_up,v_lo,J_lo,position,unc\n" +
		"12C16O,1,1,0,0,2147.0812,0.001\n" +
		"12C16O,1,2,0,1,2150.8560,0.001\n" +
		"12C16O,1,1,0,0,2147.0812,0.002\n" + // same line, other unc: a duplicate
		"12C16O,1,2,0,1,2150.8570,0.001\n" // same transition, other position: a second measurement
	l, err := Read(strings.NewReader(in), "dup.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(l.Lines) != 4 || len(l.Warnings) != 1 {
		t.Fatalf("%d lines, warnings %v", len(l.Lines), l.Warnings)
	}
	w := l.Warnings[0]
	if w.File != "dup.csv" || w.Row != 4 || !strings.Contains(w.Reason, "row 2") || !strings.Contains(w.String(), "dup.csv:4:") {
		t.Errorf("warning %v", w)
	}
}

// TestSharedPeakWarns: one peak (the same position in one file) assigned to
// two transitions reads, with a warning naming both rows and transitions;
// the same position in two files is two measurements.
func TestSharedPeakWarns(t *testing.T) {
	in := "species,v_up,J_up,v_lo,J_lo,position,unc\n" +
		"12C16O,1,1,0,0,2147.0812,0.001\n" +
		"12C16O,2,6,1,5,2147.0812,0.001\n"
	l, err := Read(strings.NewReader(in), "blend.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(l.Lines) != 2 || len(l.Warnings) != 1 {
		t.Fatalf("%d lines, warnings %v", len(l.Lines), l.Warnings)
	}
	want := "blend.csv:3: one peak assigned to two transitions: position 2147.0812 cm-1 is also row 2's, assigned to 1-0 R(0), and here to 2-1 R(5)"
	if !strings.HasPrefix(l.Warnings[0].String(), want) {
		t.Errorf("warning %q, want %q", l.Warnings[0], want)
	}
	l, err = ReadFiles(writeTemp(t, "a.csv", in[:strings.LastIndex(in[:len(in)-1], "\n")+1]), writeTemp(t, "b.csv", "species,v_up,J_up,v_lo,J_lo,position,unc\n12C16O,2,6,1,5,2147.0812,0.001\n"))
	if err != nil {
		t.Fatal(err)
	}
	if len(l.Warnings) != 0 {
		t.Errorf("warnings across files: %v", l.Warnings)
	}
}

// writeTemp writes content to a file name in a temporary folder and returns
// its path.
func writeTemp(t *testing.T, name, content string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// TestInvalidUTF8 names the row and the field of a cell that is not UTF-8 text
// (here "café" in Latin-1), in a standard and in a pass-through column and in the
// header.
func TestInvalidUTF8(t *testing.T) {
	cases := []struct{ in, where string }{
		{"species,v_up,J_up,v_lo,J_lo,position,unc,comment\n12C16O,1,1,0,0,2147.0812,0.001,caf\xe9\n", "u.csv:2: comment: not UTF-8 text: byte 0xE9 at character 4"},
		{"species,v_up,J_up,v_lo,J_lo,position,unc,observer\n12C16O,1,1,0,0,2147.0812,0.001,caf\xe9\n", "u.csv:2: observer: not UTF-8"},
		{"species,v_up,J_up,v_lo,J_lo,position,unc,caf\xe9\n12C16O,1,1,0,0,2147.0812,0.001,x\n", "u.csv:1: column 8: name is not UTF-8"},
		{"species,v_up,J_up,v_lo,J_lo,position,unc\n12C16\xffO,1,1,0,0,2147.0812,0.001\n", "u.csv:2: species: not UTF-8"},
	}
	for _, c := range cases {
		_, err := Read(strings.NewReader(c.in), "u.csv")
		if err == nil || !strings.Contains(err.Error(), c.where) {
			t.Errorf("%q: %v, want %q", c.in, err, c.where)
		}
	}
}
