package fit

import (
	"bytes"
	"encoding/csv"
	"math"
	"sort"
	"strconv"
	"strings"
	"testing"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/csvcell"
	"bandwright/units"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestWriteResidualsCSV writes residuals.csv for lines with awkward text
// (commas, quotes, line breaks, leading blanks, formula-like cells, the \.
// marker) and an MHz line, and compares the bytes with what the standard
// library's encoding/csv writes for the same cells (the reference
// implementation of RFC 4180 quoting here).
func TestWriteResidualsCSV(t *testing.T) {
	all, y := noisyCO(81, 1e-3)
	var lines []linelist.Line
	for i := 0; i < len(all); i += 12 {
		lines = append(lines, all[i]) // every band, fewer lines
	}
	texts := []string{"P(3), weak", `say "blend"`, "two\nlines", " leading blank", "=1+2", `\.`, "", "plain", "tab\tinside", "-0.5"}
	for i := range lines {
		lines[i].Comment = texts[i%len(texts)]
		lines[i].Extra = []string{texts[(i+3)%len(texts)], strconv.Itoa(i)}
	}
	lines[5].Unit = linelist.MHz
	lines[5].Position *= units.MHzPerWavenumber
	lines[5].Unc *= units.MHzPerWavenumber
	lines[7].Position += 1 // rejected
	lines[9].File = "dir with, comma/a.csv"
	extra := []string{"intensity, rel", "=HYPERLINK()"}
	m, err := BuildModel(lines, ModelSpec{Kind: model.KindDunham, Terms: y.terms()})
	if err != nil {
		t.Fatal(err)
	}
	r, err := Fit(Problem{Lines: lines, Model: m}, Settings{Reject: DefaultReject})
	if err != nil {
		t.Fatal(err)
	}
	if r.Lines[7].Used {
		t.Fatal("the line 1 cm⁻¹ off was not rejected")
	}
	var got bytes.Buffer
	if err := WriteResiduals(&got, Problem{Lines: lines, Model: m}, r, extra); err != nil {
		t.Fatal(err)
	}

	var want bytes.Buffer
	cw := csv.NewWriter(&want)
	n := csvcell.Neutralise
	head := []string{"file", "row", "species", "v_up", "J_up", "v_lo", "J_lo", "branch", "unit", "obs", "unc", "calc", "o_minus_c", "o_minus_c_over_unc", "status", "note", "comment"}
	for _, e := range extra {
		head = append(head, n(e))
	}
	cw.Write(head)
	for i, l := range lines {
		lr := r.Lines[i]
		status := "used"
		if !lr.Used {
			status = "rejected"
		}
		// Everything in the display unit (cm-1, Settings' zero value); the
		// MHz line converted.
		conv := func(x float64) float64 { return x }
		if l.Unit == linelist.MHz {
			conv = func(x float64) float64 { return x / units.MHzPerWavenumber }
		}
		rec := []string{n(l.File), strconv.Itoa(l.Row), l.Species, strconv.Itoa(l.VUp), strconv.Itoa(l.JUp), strconv.Itoa(l.VLo), strconv.Itoa(l.JLo),
			linelist.BranchLetter(l.DeltaJ()), "cm-1",
			strconv.FormatFloat(conv(l.Position), 'g', -1, 64), strconv.FormatFloat(conv(l.Unc), 'g', -1, 64),
			strconv.FormatFloat(conv(lr.Calc), 'g', 12, 64), strconv.FormatFloat(conv(lr.OmC), 'g', 6, 64), strconv.FormatFloat(lr.Norm, 'f', 3, 64),
			status, n(lr.Reason), n(l.Comment), n(l.Extra[0]), n(l.Extra[1])}
		cw.Write(rec)
	}
	cw.Flush()
	if !bytes.Equal(got.Bytes(), want.Bytes()) {
		g, w := strings.Split(got.String(), "\n"), strings.Split(want.String(), "\n")
		for i := range min(len(g), len(w)) {
			if g[i] != w[i] {
				t.Fatalf("line %d differs:\n got %q\nwant %q", i+1, g[i], w[i])
			}
		}
		t.Fatalf("outputs differ in length: %d vs %d lines", len(g), len(w))
	}
	// And it reads back: one record per line plus the header.
	recs, err := csv.NewReader(bytes.NewReader(got.Bytes())).ReadAll()
	if err != nil || len(recs) != len(lines)+1 {
		t.Fatalf("read back %d records, err %v", len(recs), err)
	}
	if recs[5][16] != "'=1+2" || recs[0][18] != "'=HYPERLINK()" {
		t.Errorf("formula cells %q, %q not neutralised", recs[5][16], recs[0][18])
	}
	// The MHz line's calc is in the display unit, cm-1.
	if c, _ := strconv.ParseFloat(recs[6][11], 64); math.Abs(c-lines[5].Wavenumber()) > 5*lines[5].UncWavenumber() {
		t.Errorf("MHz line calc %g cm-1, position %g cm-1", c, lines[5].Wavenumber())
	}
	// With the display unit MHz, every row is in MHz and the MHz line is
	// written exactly as read.
	r.Unit = linelist.MHz
	got.Reset()
	if err := WriteResiduals(&got, Problem{Lines: lines, Model: m}, r, extra); err != nil {
		t.Fatal(err)
	}
	recs, err = csv.NewReader(bytes.NewReader(got.Bytes())).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for i, rec := range recs[1:] {
		obs, _ := strconv.ParseFloat(rec[9], 64)
		if rec[8] != "MHz" || !scalar.EqualWithinAbsOrRel(obs, lines[i].Wavenumber()*units.MHzPerWavenumber, 0, 1e-15) {
			t.Errorf("row %d: %s %s, want %.12g MHz", i+1, rec[9], rec[8], lines[i].Wavenumber()*units.MHzPerWavenumber)
		}
	}
	if recs[6][9] != strconv.FormatFloat(lines[5].Position, 'g', -1, 64) {
		t.Errorf("MHz line written %s, read %v", recs[6][9], lines[5].Position)
	}
}

// TestLargestResiduals checks the partial selection against a full stable sort.
func TestLargestResiduals(t *testing.T) {
	rng := newRNG(9)
	for _, n := range []int{0, 1, 5, 15, 16, 200} {
		ls := make([]LineResult, n)
		for i := range ls {
			ls[i].Norm = math.Round(rng.NormFloat64()*4) / 2 // many ties
		}
		idx := make([]int, n)
		for i := range idx {
			idx[i] = i
		}
		sort.SliceStable(idx, func(a, b int) bool { return math.Abs(ls[idx[a]].Norm) > math.Abs(ls[idx[b]].Norm) })
		want := idx[:min(n, 15)]
		got := largestResiduals(ls, 15)
		if len(got) != len(want) {
			t.Fatalf("n=%d: %d indices, want %d", n, len(got), len(want))
		}
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("n=%d: %v, want %v", n, got, want)
			}
		}
	}
}

// TestResidualsPassThroughNames: a pass-through column that repeats a column
// of residuals.csv (lines.csv of assign carries its own o_minus_c) is written
// as input_NAME, so no header name appears twice.
func TestResidualsPassThroughNames(t *testing.T) {
	taken := []string{"file", "o_minus_c", "status"}
	got := passThroughNames([]string{"o_minus_c", " Status ", "truth", "input_truth", "truth"}, taken)
	want := []string{"input_o_minus_c", "input_Status", "truth", "input_truth", "input_input_truth"}
	if strings.Join(got, ",") != strings.Join(want, ",") {
		t.Errorf("names %q, want %q", got, want)
	}
}
