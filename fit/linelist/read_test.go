package linelist

import (
	"bytes"
	"crypto/sha256"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"testing/iotest"

	"github.com/gocarina/gocsv"

	"bandwright/fit/species"
)

const hdr = "species,v_up,J_up,v_lo,J_lo,position,unc\n"

// mustRead reads src named "t.csv" and fails the test on error.
func mustRead(t *testing.T, src string) *List {
	t.Helper()
	l, err := Read(strings.NewReader(src), "t.csv")
	if err != nil {
		t.Fatalf("Read: unexpected error:\n%v", err)
	}
	return l
}

// TestValidation checks that every kind of bad input is refused with a message naming
// the file, the physical row and the column. The expected texts are the format rules
// of this package (its package doc, "File format", and the README's line-list section).
func TestValidation(t *testing.T) {
	cases := []struct {
		name string
		src  string
		want []string // substrings of the error message
		rows []int    // expected Problem.Row values, in order
	}{
		{"missing required column",
			"species,v_up,J_up,v_lo,J_lo,position\n12C16O,1,1,0,0,2147.08\n",
			[]string{"t.csv:1: unc: required column missing"}, []int{1}},
		{"several missing columns",
			"species,J_up,J_lo,unc\n12C16O,1,0,0.001\n",
			[]string{"t.csv:1: v_up: required column missing", "t.csv:1: v_lo: required column missing", "t.csv:1: position: required column missing"}, []int{1, 1, 1}},
		{"missing column still checks other columns",
			"species,v_up,J_up,v_lo,J_lo,position\n12C16O,1,1,0,0,-2147.08\n",
			[]string{"t.csv:1: unc: required column missing", "t.csv:2: position: must be > 0, got -2147.08"}, []int{1, 2}},
		{"duplicate column names ignoring case",
			"species,v_up,J_up,v_lo,J_lo,position,unc,UNC\n12C16O,1,1,0,0,2147.08,0.001,0.002\n",
			[]string{"t.csv:1: UNC: duplicate column name (columns 7 and 8"}, []int{1}},
		{"duplicate pass-through column",
			hdr[:len(hdr)-1] + ",note,Note\n12C16O,1,1,0,0,2147.08,0.001,a,b\n",
			[]string{"t.csv:1: Note: duplicate column name"}, []int{1}},
		{"column without a name",
			hdr[:len(hdr)-1] + ",\n12C16O,1,1,0,0,2147.08,0.001,\n",
			[]string{"t.csv:1: column 8 has no name"}, []int{1}},
		{"empty file", "", []string{"t.csv: no lines: the file is empty"}, []int{0}},
		{"comments only", "# nothing\n\n", []string{"t.csv: no lines: the file is empty"}, []int{0}},
		{"header only", "# lines of nothing\n" + hdr + "\n# end\n", []string{"t.csv:2: no lines: the file has a header only"}, []int{2}},
		{"non-numeric position", hdr + "12C16O,1,1,0,0,abc,0.001\n",
			[]string{`t.csv:2: position: not a number: "abc"`}, []int{2}},
		{"empty cell", hdr + "12C16O,1,1,0,0,,0.001\n",
			[]string{`t.csv:2: position: missing value`}, []int{2}},
		{"NaN uncertainty", hdr + "12C16O,1,1,0,0,2147.08,NaN\n",
			[]string{"t.csv:2: unc: must be a finite number, got NaN"}, []int{2}},
		{"infinite position", hdr + "12C16O,1,1,0,0,+Inf,0.001\n",
			[]string{"t.csv:2: position: must be a finite number, got +Inf"}, []int{2}},
		{"overflowing position", hdr + "12C16O,1,1,0,0,1e999,0.001\n",
			[]string{"t.csv:2: position: 1e999 is out of the range of a 64-bit float"}, []int{2}},
		{"negative uncertainty", hdr + "12C16O,1,1,0,0,2147.08,-0.001\n",
			[]string{"t.csv:2: unc: must be > 0, got -0.001"}, []int{2}},
		{"zero uncertainty", hdr + "12C16O,1,1,0,0,2147.08,0\n",
			[]string{"t.csv:2: unc: must be > 0, got 0"}, []int{2}},
		{"zero position", hdr + "12C16O,1,1,0,0,0.0,0.001\n",
			[]string{"t.csv:2: position: must be > 0, got 0.0"}, []int{2}},
		{"negative v", hdr + "12C16O,-1,1,0,0,2147.08,0.001\n",
			[]string{"t.csv:2: v_up: must be >= 0, got -1"}, []int{2}},
		{"negative J", hdr + "12C16O,1,0,0,-1,2147.08,0.001\n",
			[]string{"t.csv:2: J_lo: must be >= 0, got -1"}, []int{2}},
		{"half-integer J with an integer J", hdr + "12C16O,1,3.5,0,2,2147.08,0.001\n",
			[]string{"t.csv:2: J_lo: J_up = 3.5 and J_lo = 2: both must be integers or both half-integers"}, []int{2}},
		{"non-integer J", hdr + "12C16O,1,3.7,0,3,2147.08,0.001\n",
			[]string{"t.csv:2: J_up: must be an integer or a half-integer (3 or 3.5), got 3.7"}, []int{2}},
		{"half-integer v is just not an integer", hdr + "12C16O,1,1,0.5,0,2147.08,0.001\n",
			[]string{"t.csv:2: v_lo: must be an integer, got 0.5"}, []int{2}},
		{"non-numeric J", hdr + "12C16O,1,two,0,1,2147.08,0.001\n",
			[]string{`t.csv:2: J_up: not a number: "two"`}, []int{2}},
		{"v above limit", hdr + "12C16O,101,1,100,0,2147.08,0.001\n",
			[]string{"t.csv:2: v_up: 101 exceeds the limit v <= 100"}, []int{2}},
		{"J above limit", hdr + "12C16O,1,1001,0,1000,2147.08,0.001\n",
			[]string{"t.csv:2: J_up: 1001 exceeds the limit J <= 1000"}, []int{2}},
		{"huge J written as float", hdr + "12C16O,1,1e300,0,0,2147.08,0.001\n",
			[]string{"t.csv:2: J_up: 1e300 exceeds the limit J <= 1000"}, []int{2}},
		{"unknown unit", "species,v_up,J_up,v_lo,J_lo,position,unc,unit\n12C16O,1,1,0,0,64.4,0.001,THz\n",
			[]string{`t.csv:2: unit: unknown unit "THz": use cm-1, MHz or GHz`}, []int{2}},
		{"unit spelling cm^-1 is not accepted", "species,v_up,J_up,v_lo,J_lo,position,unc,unit\n12C16O,1,1,0,0,2147.08,0.001,cm^-1\n",
			[]string{`t.csv:2: unit: unknown unit "cm^-1"`}, []int{2}},
		{"branch against dJ", "species,v_up,J_up,v_lo,J_lo,position,unc,branch\n12C16O,1,1,0,0,2147.08,0.001,P\n",
			[]string{"t.csv:2: branch: branch P needs J_up - J_lo = -1, but J_up - J_lo = +1"}, []int{2}},
		{"Raman S branch against dJ", "species,v_up,J_up,v_lo,J_lo,position,unc,branch\n14N14N,1,3,0,2,2340,0.01,S\n",
			[]string{"t.csv:2: branch: branch S needs J_up - J_lo = +2, but J_up - J_lo = +1"}, []int{2}},
		{"unknown branch", "species,v_up,J_up,v_lo,J_lo,position,unc,branch\n12C16O,1,1,0,0,2147.08,0.001,X\n",
			[]string{`t.csv:2: branch: unknown branch "X": use O, P, Q, R or S`}, []int{2}},
		{"dJ outside selection rules", hdr + "12C16O,1,5,0,2,2160,0.001\n",
			[]string{"t.csv:2: J_up: J_up - J_lo = +3 is outside the selection rules"}, []int{2}},
		{"dJ -3", hdr + "12C16O,1,0,0,3,2120,0.001\n",
			[]string{"t.csv:2: J_up: J_up - J_lo = -3 is outside"}, []int{2}},
		{"zero-frequency transition", hdr + "12C16O,0,4,0,4,1.5,0.001\n",
			[]string{"t.csv:2: v_up: upper level (v=0, J=4) equals the lower level: a zero-frequency transition"}, []int{2}},
		{"upper below lower in v", hdr + "12C16O,0,1,1,0,2147.08,0.001\n",
			[]string{"t.csv:2: v_up: upper level (v=0, J=1) lies below the lower level (v=1, J=0)"}, []int{2}},
		{"upper below lower in J", hdr + "12C16O,0,0,0,1,3.8,0.001\n",
			[]string{"t.csv:2: v_up: upper level (v=0, J=0) lies below the lower level (v=0, J=1)"}, []int{2}},
		{"unknown species", hdr + "Xx16O,1,1,0,0,2147.08,0.001\n",
			[]string{`t.csv:2: species: unknown isotopologue "Xx16O"`}, []int{2}},
		{"species without mass numbers", hdr + "CO,1,1,0,0,2147.08,0.001\n",
			[]string{`t.csv:2: species: unknown isotopologue "CO"`}, []int{2}},
		{"empty species", hdr + ",1,1,0,0,2147.08,0.001\n",
			[]string{`t.csv:2: species: missing value`}, []int{2}},
		{"semicolon-separated",
			"species;v_up;J_up;v_lo;J_lo;position;unc\n12C16O;1;1;0;0;2147,08;0,001\n",
			[]string{"t.csv:1: looks like semicolon-separated; bandwright reads comma-separated with a dot decimal separator"}, []int{1}},
		{"tab-separated",
			"species\tv_up\tJ_up\tv_lo\tJ_lo\tposition\tunc\n12C16O\t1\t1\t0\t0\t2147.08\t0.001\n",
			[]string{"t.csv:1: looks like tab-separated"}, []int{1}},
		{"quoted decimal comma", hdr + `12C16O,1,1,0,0,"2147,08",0.001` + "\n",
			[]string{`t.csv:2: position: not a number: "2147,08" (decimal comma? bandwright reads comma-separated with a dot decimal separator)`}, []int{2}},
		{"unquoted decimal commas", hdr + "12C16O,1,1,0,0,2147,08,0,001\n",
			[]string{"t.csv:2: row has 9 fields, header has 7 (quote text that contains commas; numbers take a dot as decimal separator)"}, []int{2}},
		{"too few fields", hdr + "12C16O,1,1,0,0,2147.08\n",
			[]string{"t.csv:2: row has 6 fields, header has 7"}, []int{2}},
		{"malformed quoting", hdr + "12C16O,1,1,0,0,21\"47,0.001\n12C16O,1,1,0,0,2147.08,-1\n",
			[]string{"t.csv:2: malformed CSV at character 18: bare \" in non-quoted-field", "t.csv:3: unc: must be > 0"}, []int{2, 3}},
		{"rows count physical lines with comments, blanks and CRLF",
			"# c1\r\n\r\n" + strings.ReplaceAll(hdr, "\n", "\r\n") + "  # c2\r\n12C16O,1,1,0,0,2147.08,0.001\r\n\r\n12C16O,1,1,0,0,2147.08,0\r\n",
			[]string{"t.csv:7: unc: must be > 0, got 0"}, []int{7}},
		{"every problem of a row and of the file",
			hdr + "12C16O,1,1,0,0,-1,0\n12C16O,1,1,0,0,2147.08,0.001\nXx,-1,1,0,0,2147.08,0.001\n",
			[]string{"t.csv:2: position: must be > 0, got -1", "t.csv:2: unc: must be > 0, got 0", "t.csv:4: species:", "t.csv:4: v_up: must be >= 0"},
			[]int{2, 2, 4, 4}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			l, err := Read(strings.NewReader(tc.src), "t.csv")
			if err == nil {
				t.Fatalf("no error; read %d lines", len(l.Lines))
			}
			if l != nil {
				t.Errorf("a list was returned with the error")
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, "linelist: ") {
				t.Errorf("message does not start with the package name: %q", msg)
			}
			for _, w := range tc.want {
				if !strings.Contains(msg, w) {
					t.Errorf("message lacks %q:\n%s", w, msg)
				}
			}
			var le *Error
			if !errors.As(err, &le) {
				t.Fatalf("error is %T, not *linelist.Error", err)
			}
			var rows []int
			for _, p := range le.Problems {
				rows = append(rows, p.Row)
				if p.File != "t.csv" {
					t.Errorf("problem file %q", p.File)
				}
			}
			if !reflect.DeepEqual(rows, tc.rows) {
				t.Errorf("problem rows %v, want %v\n%s", rows, tc.rows, msg)
			}
		})
	}
}

// TestSpeciesErrorWrapped checks that the species package's error is reachable.
func TestSpeciesErrorWrapped(t *testing.T) {
	_, err := Read(strings.NewReader(hdr+"12C99O,1,1,0,0,2147.08,0.001\n"), "t.csv")
	var pe *species.ParseError
	if !errors.As(err, &pe) {
		t.Fatalf("error %v does not wrap a *species.ParseError", err)
	}
	if strings.Contains(err.Error(), "species: species:") {
		t.Errorf("stuttering message: %v", err)
	}
}

func TestProblemCap(t *testing.T) {
	var b strings.Builder
	b.WriteString(hdr)
	for i := 0; i < MaxProblems+10; i++ {
		b.WriteString("12C16O,1,1,0,0,2147.08,0\n")
	}
	_, err := Read(strings.NewReader(b.String()), "t.csv")
	var le *Error
	if !errors.As(err, &le) {
		t.Fatalf("error %v", err)
	}
	if len(le.Problems) != MaxProblems || le.Omitted != 10 {
		t.Errorf("kept %d, omitted %d; want %d and 10", len(le.Problems), le.Omitted, MaxProblems)
	}
	msg := err.Error()
	// The same mistake in every row: the first few listed, the rest — kept
	// or only counted — summed up with their rows.
	if !strings.HasPrefix(msg, "linelist: 60 problems\n") || !strings.HasSuffix(msg, "\nt.csv: ... and 57 more rows with the same problem in unc (rows 5–61)") {
		t.Errorf("message head/tail wrong:\n%s", msg)
	}
	if !strings.Contains(msg, "t.csv:4: unc:") || strings.Contains(msg, "t.csv:5: unc:") {
		t.Errorf("wrong rows listed:\n%s", msg)
	}
	if n := strings.Count(msg, "\n"); n > ShownProblems+3 {
		t.Errorf("message of %d lines:\n%s", n+1, msg)
	}
}

// TestProblemsOfManyKinds: different mistakes are each listed (up to the
// cap), the numbers a reason quotes do not make it a kind of its own.
func TestProblemsOfManyKinds(t *testing.T) {
	var probs []Problem
	for i := 0; i < 6; i++ {
		probs = append(probs, Problem{File: "a.csv", Row: 2 + i, Field: "unc", Reason: fmt.Sprintf("must be > 0, got -%d", i)})
		probs = append(probs, Problem{File: "a.csv", Row: 2 + i, Field: "J_up", Reason: fmt.Sprintf("must be >= 0, got -%d", i)})
	}
	probs = append(probs, Problem{File: "b.csv", Field: "position", Reason: "required column missing"})
	msg := FormatProblems("linelist", probs, 0)
	for _, want := range []string{
		"linelist: 13 problems\n", "a.csv:4: unc: must be > 0, got -2", "a.csv:4: J_up: must be >= 0, got -2",
		"b.csv: position: required column missing",
		"a.csv: ... and 3 more rows with the same problem in unc (rows 5–7)",
		"a.csv: ... and 3 more rows with the same problem in J_up (rows 5–7)",
	} {
		if !strings.Contains(msg, want) {
			t.Errorf("message lacks %q:\n%s", want, msg)
		}
	}
}

func TestGoodFile(t *testing.T) {
	l, err := ReadFile("testdata/co_fundamental.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(l.Lines) != 6 || len(l.Extra) != 0 {
		t.Fatalf("%d lines, extra %q", len(l.Lines), l.Extra)
	}
	first := l.Lines[0]
	want := Line{File: "testdata/co_fundamental.csv", Row: 4, Species: "12C16O", VUp: 1, JUp: 1, VLo: 0, JLo: 0,
		Position: 2147.0812, Unc: 0.0005, Unit: Wavenumber, Branch: "R", Comment: "R(0)"}
	if !reflect.DeepEqual(first, want) {
		t.Errorf("first line\n got %+v\nwant %+v", first, want)
	}
	last := l.Lines[5]
	if last.Row != 9 || last.Branch != "P" || last.DeltaJ() != -1 || last.JLo != 3 {
		t.Errorf("last line %+v", last)
	}
}

// TestMixedFile reads a file with a byte-order mark, CRLF line endings, mixed-case and
// padded header names in another order, MHz and cm-1 rows, an indented comment holding
// a quote, a blank line and pass-through columns.
func TestMixedFile(t *testing.T) {
	l, err := ReadFile("testdata/mixed_crlf.csv")
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"Observer", "Scan"}; !reflect.DeepEqual(l.Extra, want) {
		t.Errorf("extra %q, want %q", l.Extra, want)
	}
	if len(l.Lines) != 3 {
		t.Fatalf("%d lines", len(l.Lines))
	}
	type row struct {
		row                int
		unit               Unit
		vUp, jUp, vLo, jLo int
		branch             string
		extra              []string
	}
	want := []row{
		{4, MHz, 0, 1, 0, 0, "R", []string{"A. N. Other", "s1"}},
		{7, MHz, 0, 2, 0, 1, "", []string{"Other, A. N.", "s1"}},
		{8, Wavenumber, 2, 3, 1, 2, "R", []string{"", `=HYPERLINK("x")`}},
	}
	for i, w := range want {
		g := l.Lines[i]
		got := row{g.Row, g.Unit, g.VUp, g.JUp, g.VLo, g.JLo, g.Branch, g.Extra}
		if !reflect.DeepEqual(got, w) {
			t.Errorf("line %d: got %+v, want %+v", i, got, w)
		}
	}
}

// TestCaseInsensitiveHeaders: names are matched ignoring case and surrounding spaces.
func TestCaseInsensitiveHeaders(t *testing.T) {
	l := mustRead(t, " SPECIES,V_Up ,j_UP,\tv_lo,J_LO,Position,UNC,Unit,BRANCH,Comment\n12C16O,1,1,0,0,2147.08,0.001,CM-1,r, note \n")
	g := l.Lines[0]
	if g.Species != "12C16O" || g.JUp != 1 || g.Unit != Wavenumber || g.Branch != "r" || g.Comment != "note" || len(l.Extra) != 0 {
		t.Errorf("got %+v, extra %q", g, l.Extra)
	}
}

// TestCanonicalSpecies: labels are stored in the canonical form of species.Parse, and
// List.Species keeps the order of first appearance.
func TestCanonicalSpecies(t *testing.T) {
	l := mustRead(t, hdr+
		"D35Cl,1,1,0,0,2100,0.01\n"+
		"14N2,1,2,0,0,2340,0.01\n"+
		"12C16O,1,1,0,0,2147.08,0.001\n"+
		" 2H35Cl ,1,0,0,1,2080,0.01\n"+
		"14N14N,1,0,0,2,2320,0.01\n")
	want := []string{"2H35Cl", "14N14N", "12C16O"}
	if got := l.Species(); !reflect.DeepEqual(got, want) {
		t.Errorf("Species() = %q, want %q", got, want)
	}
	if l.Lines[3].Species != "2H35Cl" {
		t.Errorf("line 4 species %q", l.Lines[3].Species)
	}
}

// TestCommentsAndBlankLines: '#' lines (also indented) and blank lines are skipped and
// rows keep their physical numbers; a quoted cell spanning lines, one of which starts
// with '#', is text, not a comment.
func TestCommentsAndBlankLines(t *testing.T) {
	src := "\n# top\n   \n" + "species,v_up,J_up,v_lo,J_lo,position,unc,comment\n" +
		"\t# indented, with \"odd quote\n" +
		"12C16O,1,1,0,0,2147.08,0.001,\"two\n# lines\"\n" +
		"\n   \t\n" +
		"12C16O,1,0,0,1,2139.43,0.001,# not a comment\n" +
		"# trailing comment without newline"
	l := mustRead(t, src)
	if len(l.Lines) != 2 {
		t.Fatalf("%d lines", len(l.Lines))
	}
	if l.Lines[0].Row != 6 || l.Lines[0].Comment != "two\n# lines" {
		t.Errorf("line 1: row %d comment %q", l.Lines[0].Row, l.Lines[0].Comment)
	}
	if l.Lines[1].Row != 10 || l.Lines[1].Comment != "# not a comment" {
		t.Errorf("line 2: row %d comment %q", l.Lines[1].Row, l.Lines[1].Comment)
	}
}

// TestLongCommentLine: a comment longer than the read buffer is skipped whole.
func TestLongCommentLine(t *testing.T) {
	long := "# " + strings.Repeat("x,\"", 50000) + "\n"
	l := mustRead(t, long+hdr+long+"12C16O,1,1,0,0,2147.08,0.001\n")
	if len(l.Lines) != 1 || l.Lines[0].Row != 4 {
		t.Fatalf("lines %+v", l.Lines)
	}
}

// TestIntegralFloatQuantumNumbers: "3.0" and "3e0" are the integer 3.
func TestIntegralFloatQuantumNumbers(t *testing.T) {
	l := mustRead(t, hdr+"12C16O,1.0,3e0,0,2.00,2154.6,0.001\n")
	g := l.Lines[0]
	if g.VUp != 1 || g.JUp != 3 || g.JLo != 2 {
		t.Errorf("got %+v", g)
	}
}

// TestSelectionRulesAccepted: every ΔJ of the supported spectra is accepted.
func TestSelectionRulesAccepted(t *testing.T) {
	l := mustRead(t, "species,v_up,J_up,v_lo,J_lo,position,unc,branch\n"+
		"14N14N,1,0,0,2,2320,0.01,O\n"+
		"12C16O,1,0,0,1,2139.43,0.001,P\n"+
		"14N14N,1,4,0,4,2329,0.01,Q\n"+
		"12C16O,1,1,0,0,2147.08,0.001,R\n"+
		"14N14N,1,4,0,2,2345,0.01,S\n"+
		"12C16O,0,1,0,0,3.845,1e-7,R\n"+
		"14N14N,0,2,0,0,11.9,0.001,S\n")
	for i, g := range l.Lines {
		if BranchLetter(g.DeltaJ()) != g.Branch {
			t.Errorf("line %d: dJ %d branch %s", i, g.DeltaJ(), g.Branch)
		}
	}
}

// TestPassThroughUnion: pass-through columns of several files are merged by name
// (ignoring case), in order of first appearance, and each line's values are aligned.
func TestPassThroughUnion(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a.csv")
	b := filepath.Join(dir, "b.csv")
	write(t, a, hdr[:len(hdr)-1]+",obs,scan\n12C16O,1,1,0,0,2147.08,0.001,AB,s1\n")
	write(t, b, "scan,"+hdr[:len(hdr)-1]+",note\ns2,12C16O,1,0,0,1,2139.43,0.001,hot\ns3,12C16O,1,2,0,1,2150.86,0.001,\n")
	l, err := ReadFiles(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"obs", "scan", "note"}; !reflect.DeepEqual(l.Extra, want) {
		t.Fatalf("extra %q, want %q", l.Extra, want)
	}
	want := [][]string{{"AB", "s1", ""}, {"", "s2", "hot"}, {"", "s3", ""}}
	files := []string{a, b, b}
	rows := []int{2, 2, 3}
	for i, g := range l.Lines {
		if !reflect.DeepEqual(g.Extra, want[i]) || g.File != files[i] || g.Row != rows[i] {
			t.Errorf("line %d: extra %q file %s row %d", i, g.Extra, g.File, g.Row)
		}
	}
}

func write(t *testing.T, path, s string) {
	t.Helper()
	if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestReadFilesErrors: the problems of all files are collected with their file names;
// a file given twice (under another path too) and a missing file are errors.
func TestReadFilesErrors(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a.csv")
	b := filepath.Join(dir, "b.csv")
	write(t, a, hdr+"12C16O,1,1,0,0,2147.08,0\n")
	write(t, b, hdr+"12C16O,1,1,0,0,2147.08,0.001\n12C16O,1,1,0,0,-3,0.001\n")
	_, err := ReadFiles(a, b)
	for _, w := range []string{a + ":2: unc: must be > 0", b + ":3: position: must be > 0"} {
		if err == nil || !strings.Contains(err.Error(), w) {
			t.Errorf("error %v lacks %q", err, w)
		}
	}

	good := filepath.Join(dir, "good.csv")
	write(t, good, hdr+"12C16O,1,1,0,0,2147.08,0.001\n")
	other := filepath.Join(dir, ".", "sub", "..", "good.csv")
	if err := os.Mkdir(filepath.Join(dir, "sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	_, err = ReadFiles(good, other)
	if err == nil || !strings.Contains(err.Error(), other+": the same file is given twice (also as file 1") {
		t.Errorf("same file twice: error %v", err)
	}
	link := filepath.Join(dir, "link.csv")
	if os.Symlink(good, link) == nil {
		_, err = ReadFiles(good, link)
		if err == nil || !strings.Contains(err.Error(), "the same file is given twice") {
			t.Errorf("file and symlink: error %v", err)
		}
	}

	_, err = ReadFiles(good, filepath.Join(dir, "none.csv"))
	if !errors.Is(err, fs.ErrNotExist) || !strings.Contains(err.Error(), "none.csv: cannot open:") {
		t.Errorf("missing file: error %v", err)
	}
	if _, err := ReadFiles(); err == nil {
		t.Errorf("no files: no error")
	}
}

// TestReadFileLeavesFileAlone: reading does not change the file's bytes or times.
func TestReadFileLeavesFileAlone(t *testing.T) {
	p := filepath.Join(t.TempDir(), "l.csv")
	data, err := os.ReadFile("testdata/mixed_crlf.csv")
	if err != nil {
		t.Fatal(err)
	}
	write(t, p, string(data))
	before, _ := os.Stat(p)
	if _, err := ReadFile(p); err != nil {
		t.Fatal(err)
	}
	after, _ := os.Stat(p)
	data2, _ := os.ReadFile(p)
	if sha256.Sum256(data) != sha256.Sum256(data2) || !before.ModTime().Equal(after.ModTime()) || before.Mode() != after.Mode() {
		t.Errorf("file changed")
	}
}

// TestSemicolonFile reads the seed file with semicolons and decimal commas.
func TestSemicolonFile(t *testing.T) {
	_, err := ReadFile("testdata/semicolon.csv")
	if err == nil || !strings.Contains(err.Error(), "semicolon.csv:1: looks like semicolon-separated") {
		t.Errorf("error %v", err)
	}
}

// TestProblemsFile checks the seed file that has one or more problems on every row.
func TestProblemsFile(t *testing.T) {
	_, err := ReadFile("testdata/problems.csv")
	var le *Error
	if !errors.As(err, &le) {
		t.Fatalf("error %v", err)
	}
	seen := map[int]bool{}
	for _, p := range le.Problems {
		seen[p.Row] = true
	}
	for row := 3; row <= 11; row++ {
		if !seen[row] {
			t.Errorf("no problem reported on row %d:\n%v", row, err)
		}
	}
}

// TestHeaderTags: the csv tags gocsv maps onto are the lower-case standard names, in
// column order, so mapHeader's column indices line up with columnNames.
func TestHeaderTags(t *testing.T) {
	ty := reflect.TypeOf(headerRow{})
	if ty.NumField() != int(nColumns) {
		t.Fatalf("headerRow has %d fields", ty.NumField())
	}
	for i := 0; i < ty.NumField(); i++ {
		if tag := ty.Field(i).Tag.Get("csv"); tag != strings.ToLower(columnNames[i]) {
			t.Errorf("field %d tag %q, column %q", i, tag, columnNames[i])
		}
	}
	col, err := mapHeader([]string{"note", "unc", "j_up", "species"})
	if err != nil {
		t.Fatal(err)
	}
	if col[colUnc] != 1 || col[colJUp] != 2 || col[colSpecies] != 3 || col[colPosition] != -1 {
		t.Errorf("mapHeader = %v", col)
	}
}

func TestBytesReaderAndBOMOnly(t *testing.T) {
	_, err := Read(bytes.NewReader([]byte("\xEF\xBB\xBF")), "bom.csv")
	if err == nil || !strings.Contains(err.Error(), "bom.csv: no lines: the file is empty") {
		t.Errorf("error %v", err)
	}
}

// TestGocsvSwitches: gocsv's package-wide switches, which another package may set, do
// not change how a header is mapped.
func TestGocsvSwitches(t *testing.T) {
	defer func(a, b bool) { gocsv.FailIfUnmatchedStructTags, gocsv.FailIfDoubleHeaderNames = a, b }(
		gocsv.FailIfUnmatchedStructTags, gocsv.FailIfDoubleHeaderNames)
	gocsv.FailIfUnmatchedStructTags, gocsv.FailIfDoubleHeaderNames = true, true
	l := mustRead(t, hdr[:len(hdr)-1]+",note\n12C16O,1,1,0,0,2147.08,0.001,x\n")
	if len(l.Lines) != 1 || l.Lines[0].Extra[0] != "x" {
		t.Errorf("lines %+v", l.Lines)
	}
	_, err := Read(strings.NewReader(hdr[:len(hdr)-1]+",,\n12C16O,1,1,0,0,2147.08,0.001,,\n"), "t.csv")
	if err == nil || !strings.Contains(err.Error(), "t.csv:1: column 8 has no name") || !strings.Contains(err.Error(), "column 9 has no name") {
		t.Errorf("error %v", err)
	}
}

// TestLargeInputs reads inputs past the point where Read reserves room for the lines,
// from a file, from a sized reader, from a reader of unknown size, and with a size
// estimate that is far too low (long comment-free rows first, short rows after).
func TestLargeInputs(t *testing.T) {
	data := genLines(3*estimateAfter + 17)
	p := filepath.Join(t.TempDir(), "big.csv")
	write(t, p, string(data))
	var b strings.Builder
	b.WriteString(hdr[:len(hdr)-1] + ",comment\n")
	for i := 0; i < estimateAfter+5; i++ {
		b.WriteString("12C16O,1,1,0,0,2147.08,0.001," + strings.Repeat("c", 400) + "\n")
	}
	for i := 0; i < 5*estimateAfter; i++ {
		b.WriteString("12C16O,1,1,0,0,2147.08,0.001,\n")
	}
	skewed := b.String()
	for _, tc := range []struct {
		name string
		read func() (*List, error)
		n    int
	}{
		{"file", func() (*List, error) { return ReadFile(p) }, 3*estimateAfter + 17},
		{"bytes", func() (*List, error) { return Read(bytes.NewReader(data), "b") }, 3*estimateAfter + 17},
		{"unsized", func() (*List, error) { return Read(io.MultiReader(bytes.NewReader(data)), "u") }, 3*estimateAfter + 17},
		{"skewed", func() (*List, error) { return Read(strings.NewReader(skewed), "s") }, 6*estimateAfter + 5},
	} {
		l, err := tc.read()
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if len(l.Lines) != tc.n {
			t.Fatalf("%s: %d lines, want %d", tc.name, len(l.Lines), tc.n)
		}
		for i, g := range l.Lines {
			if g.Row != i+2 {
				t.Fatalf("%s: line %d has row %d", tc.name, i, g.Row)
			}
		}
	}
}

// TestReadErrorMidway: an error of the underlying reader is reported, not lost.
func TestReadErrorMidway(t *testing.T) {
	boom := errors.New("device gone")
	r := io.MultiReader(strings.NewReader(hdr+"12C16O,1,1,0,0,2147.08,0.001\n"), iotest.ErrReader(boom))
	_, err := Read(r, "t.csv")
	if !errors.Is(err, boom) || !strings.Contains(err.Error(), "t.csv: read error: device gone") {
		t.Errorf("error %v", err)
	}
}

// TestZeroWidthInHeader: zero-width characters some spreadsheets leave in names are ignored.
func TestZeroWidthInHeader(t *testing.T) {
	l := mustRead(t, "\u200bspecies,v_up,J_up,v_lo,J_lo,position,unc\u200d\n12C16O,1,1,0,0,2147.08,0.001\n")
	if len(l.Lines) != 1 || len(l.Extra) != 0 {
		t.Errorf("lines %+v extra %q", l.Lines, l.Extra)
	}
}

// TestSizeLimit: a file above MaxFileBytes is refused before it is parsed,
// whether its size is known (a file) or not (a stream, cut at the limit).
func TestSizeLimit(t *testing.T) {
	c := &capped{r: strings.NewReader("abcdef"), left: 4}
	b, err := io.ReadAll(c)
	if string(b) != "abcd" || !errors.Is(err, tooLarge) {
		t.Errorf("a stream of 6 bytes capped at 4: %q, %v", b, err)
	}
	c = &capped{r: strings.NewReader("abcd"), left: 4}
	if b, err := io.ReadAll(c); string(b) != "abcd" || err != nil {
		t.Errorf("a stream of 4 bytes capped at 4: %q, %v", b, err)
	}
	p := filepath.Join(t.TempDir(), "big.csv")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.WriteString(hdr); err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(MaxFileBytes + 1); err != nil { // sparse: no disk used
		t.Fatal(err)
	}
	f.Close()
	_, err = ReadFile(p)
	if err == nil || !strings.Contains(err.Error(), "big.csv: the file is larger than 512 MiB, the limit for a CSV file") {
		t.Errorf("a file of 512 MiB + 1 byte: %v", err)
	}
}
