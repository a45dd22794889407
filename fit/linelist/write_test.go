package linelist

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/units"
)

// sameFloat reports bit-for-bit equality: the round trip through text must be exact,
// which is the one place where a tolerance would hide the fault under test.
func sameFloat(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

// TestRoundTrip writes lines and reads them back: every value, including floats that
// need all 17 significant digits and the extremes, comes back bit for bit. Each
// uncertainty is its position times 2⁻²⁰ (an exact scaling, so as many digits),
// since the reader refuses an uncertainty not smaller than its position or
// below the float resolution at it (and with it positions like 1e-300).
func TestRoundTrip(t *testing.T) {
	tricky := []float64{
		2147.0812, 0.1, 1.0 / 3, math.Nextafter(2143.27, 3000), 1.0000000000000002e-5, 5e-10,
		math.MaxFloat64, 115271.2018, 2.0000000000000004, 123456789012345678,
	}
	extra := []string{"obs", "Quoted, name"}
	var lines []Line
	for i, x := range tricky {
		u := Unit(i % 2)
		if x >= MaxWavenumber {
			u = MHz // Read refuses a position in cm-1 beyond every dissociation energy
		}
		// A band each: the tricky values are no band's positions.
		l := Line{Species: "12C16O", VUp: i + 1, JUp: i + 1, VLo: i, JLo: i, Position: x, Unc: x / (1 << 20),
			Unit: u, Branch: "R", Comment: "c" + string(rune('a'+i)), Extra: []string{"o", "x,\"y\"\nz"}}
		lines = append(lines, l)
	}
	lines = append(lines, Line{Species: "2H35Cl", VUp: 2, JUp: 3, VLo: 1, JLo: 5, Position: 2000, Unc: 0.5, Branch: "O",
		Comment: " padded ", Extra: []string{"only one"}})
	lines[len(lines)-1].Comment = "padded" // Read trims comments

	var buf bytes.Buffer
	if err := Write(&buf, lines, extra); err != nil {
		t.Fatal(err)
	}
	if first, _, _ := strings.Cut(buf.String(), "\n"); first != `species,v_up,J_up,v_lo,J_lo,position,unc,unit,branch,comment,obs,"Quoted, name"` {
		t.Errorf("header %q", first)
	}
	got, err := Read(&buf, "rt.csv")
	if err != nil {
		t.Fatal(err)
	}
	if !equalStrings(got.Extra, extra) || len(got.Lines) != len(lines) {
		t.Fatalf("extra %q, %d lines", got.Extra, len(got.Lines))
	}
	for i, w := range lines {
		g := got.Lines[i]
		if len(w.Extra) < len(extra) {
			w.Extra = append(w.Extra, make([]string, len(extra)-len(w.Extra))...)
		}
		if g.Row != 2+2*i || g.File != "rt.csv" { // each row before the last spans two physical lines
			t.Errorf("line %d: row %d file %s", i, g.Row, g.File)
		}
		if !sameFloat(g.Position, w.Position) || !sameFloat(g.Unc, w.Unc) {
			t.Errorf("line %d: position %v unc %v, want %v %v", i, g.Position, g.Unc, w.Position, w.Unc)
		}
		if g.Species != w.Species || g.VUp != w.VUp || g.JUp != w.JUp || g.VLo != w.VLo || g.JLo != w.JLo ||
			g.Unit != w.Unit || g.Branch != w.Branch || g.Comment != w.Comment || !equalStrings(g.Extra, w.Extra) {
			t.Errorf("line %d:\n got %+v\nwant %+v", i, g, w)
		}
	}
}

func equalStrings(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// TestMHzConversion checks the MHz to cm-1 conversion.
func TestMHzConversion(t *testing.T) {
	// 1 cm-1 = c × 100 m⁻¹ → 299 792 458 m/s × 100 /m = 29 979.2458 MHz; c is exact by
	// the definition of the metre (SI Brochure, 9th edition, 2019).
	if !scalar.EqualWithinAbsOrRel(units.MHzPerWavenumber, 29979.2458, 0, 1e-15) {
		t.Errorf("units.MHzPerWavenumber = %.10f", units.MHzPerWavenumber)
	}
	l, err := ReadFile("testdata/mixed_crlf.csv")
	if err != nil {
		t.Fatal(err)
	}
	co10 := l.Lines[0] // 12C16O J = 1 <- 0 at 115271.2018 MHz (from memory)
	// The same line from the ground-state constants of docs/references.md (Huber & Herzberg
	// 1979, from memory): nu = 2 B0 - 4 De, B0 = Be - alpha_e/2. The constants and the
	// frequency are both recalled, so the check allows 1e-6 relative.
	const be, alphaE, de = 1.93128087, 0.01750441, 6.12147e-6
	want := 2*(be-alphaE/2) - 4*de
	if got := co10.Wavenumber(); !scalar.EqualWithinAbsOrRel(got, want, 0, 1e-6) {
		t.Errorf("CO J=1-0: %.8f cm-1, want %.8f", got, want)
	}
	if got := co10.UncWavenumber(); !scalar.EqualWithinAbsOrRel(got*units.MHzPerWavenumber, 0.0005, 0, 1e-14) {
		t.Errorf("unc %g cm-1", got)
	}
	// cm-1 lines are not converted.
	if hot := l.Lines[2]; hot.Wavenumber() != hot.Position || hot.UncWavenumber() != hot.Unc {
		t.Errorf("cm-1 line converted: %v %v", hot.Wavenumber(), hot.UncWavenumber())
	}
}

func TestUnit(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want Unit
		ok   bool
	}{
		{"cm-1", Wavenumber, true}, {" CM-1 ", Wavenumber, true}, {"MHz", MHz, true}, {"mhz", MHz, true},
		{"GHz", GHz, true}, {"ghz", GHz, true}, {"THz", 0, false}, {"cm^-1", 0, false}, {"1/cm", 0, false}, {"wavenumber", 0, false}, {"", 0, false},
	} {
		u, err := ParseUnit(tc.in)
		if (err == nil) != tc.ok || (tc.ok && u != tc.want) {
			t.Errorf("ParseUnit(%q) = %v, %v", tc.in, u, err)
		}
		if !tc.ok && (err == nil || !strings.HasPrefix(err.Error(), "linelist: unknown unit \""+tc.in+"\"")) {
			t.Errorf("ParseUnit(%q) error %v", tc.in, err)
		}
	}
	if Wavenumber.String() != "cm-1" || MHz.String() != "MHz" || GHz.String() != "GHz" || Unit(7).String() != "Unit(7)" {
		t.Errorf("String: %s %s %s %s", Wavenumber, MHz, GHz, Unit(7))
	}
	// 1 cm-1 = 29 979.2458 MHz exactly (defined speed of light, common practice).
	for _, tc := range []struct {
		u    Unit
		want float64
	}{{Wavenumber, 1}, {MHz, 29979.2458}, {GHz, 29.9792458}} {
		if got := tc.u.FromWavenumber(1); !scalar.EqualWithinAbsOrRel(got, tc.want, 0, 1e-15) {
			t.Errorf("1 cm-1 in %s = %v, want %v", tc.u, got, tc.want)
		}
		if got := tc.u.ToWavenumber(tc.want); !scalar.EqualWithinAbsOrRel(got, 1, 0, 1e-15) {
			t.Errorf("%v %s = %v cm-1, want 1", tc.want, tc.u, got)
		}
	}
}

func TestBranchLetter(t *testing.T) {
	want := map[int]string{-3: "", -2: "O", -1: "P", 0: "Q", 1: "R", 2: "S", 3: ""}
	for dJ, w := range want {
		if got := BranchLetter(dJ); got != w {
			t.Errorf("BranchLetter(%d) = %q, want %q", dJ, got, w)
		}
		if w != "" {
			if d, ok := BranchDeltaJ(w); !ok || d != dJ {
				t.Errorf("BranchDeltaJ(%q) = %d, %v", w, d, ok)
			}
		}
	}
}

// TestWriteNeutralises: Write applies csvcell.Neutralise to text cells only.
func TestWriteNeutralises(t *testing.T) {
	lines := []Line{{Species: "12C16O", VUp: 1, JUp: 1, Position: 2147.08, Unc: 0.001, Comment: "=cmd()", Extra: []string{"-1.5", "@x"}},
		{Species: "12C16O", VUp: 1, JUp: 0, JLo: 1, Position: 2139.43, Unc: 0.001, Comment: "-1.5"}}
	var buf bytes.Buffer
	if err := Write(&buf, lines, []string{"=a", "b"}); err != nil {
		t.Fatal(err)
	}
	want := "species,v_up,J_up,v_lo,J_lo,position,unc,unit,branch,comment,'=a,b\n" +
		"12C16O,1,1,0,0,2147.08,0.001,cm-1,,'=cmd(),-1.5,'@x\n" +
		"12C16O,1,0,0,1,2139.43,0.001,cm-1,,-1.5,,\n"
	if buf.String() != want {
		t.Errorf("got\n%s\nwant\n%s", buf.String(), want)
	}
}

type failWriter struct{}

var errDisk = errors.New("disk full")

func (failWriter) Write([]byte) (int, error) { return 0, errDisk }

func TestWriteErrors(t *testing.T) {
	one := []Line{{Species: "12C16O", VUp: 1, JUp: 1, Position: 2147.08, Unc: 0.001, Extra: []string{"a", "b"}}}
	for _, tc := range []struct {
		extra []string
		want  string
	}{
		{[]string{"x"}, "has 2 pass-through values for 1 pass-through columns"},
		{[]string{"x", " Species "}, `pass-through column " Species " repeats a column name`},
		{[]string{"x", "X"}, `pass-through column "X" repeats a column name`},
		{[]string{"x", " "}, "empty pass-through column name"},
	} {
		err := Write(&bytes.Buffer{}, one, tc.extra)
		if err == nil || !strings.HasPrefix(err.Error(), "linelist: write: ") || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("extra %q: error %v", tc.extra, err)
		}
	}
	if err := Write(failWriter{}, one, []string{"x", "y"}); !errors.Is(err, errDisk) {
		t.Errorf("failing writer: error %v", err)
	}
}

// TestGHzReadAsMHz: a position in GHz is the same line as that position ×1000
// in MHz (the 12C16O J=1-0 line, 115 271.2018 MHz, from memory).
func TestGHzReadAsMHz(t *testing.T) {
	src := "species,v_up,J_up,v_lo,J_lo,position,unc,unit\n" +
		"12C16O,0,1,0,0,115271.2018,0.0005,MHz\n" +
		"12C16O,0,1,0,0,115.2712018,0.0000005,GHz\n"
	l, err := Read(strings.NewReader(src), "t.csv")
	if err != nil {
		t.Fatal(err)
	}
	a, b := l.Lines[0], l.Lines[1]
	if b.Unit != GHz {
		t.Fatalf("unit %v, want GHz", b.Unit)
	}
	if !scalar.EqualWithinAbsOrRel(a.Wavenumber(), b.Wavenumber(), 0, 1e-15) || !scalar.EqualWithinAbsOrRel(a.UncWavenumber(), b.UncWavenumber(), 0, 1e-12) {
		t.Errorf("MHz %v ± %v cm-1, GHz %v ± %v cm-1", a.Wavenumber(), a.UncWavenumber(), b.Wavenumber(), b.UncWavenumber())
	}
}
