package assign_test

import (
	"bytes"
	"errors"
	"fmt"
	"runtime"
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/fit/linelist"
)

func TestReadPeaks(t *testing.T) {
	in := "\uFEFF# picked by hand\r\nSNR, Unit ,Position,INTENSITY,unc\r\n" +
		"12,cm-1, 2147.081400 ,-0.5,0.0004\r\n" +
		"\r\n   # a comment line\r\n" +
		"40,mhz,115271.2018,-3e-1,\r\n" +
		"7,,2.14e3,,0.001\r\n"
	pl, err := assign.ReadPeaks(strings.NewReader(in), "p.csv", linelist.Wavenumber)
	if err != nil {
		t.Fatal(err)
	}
	if len(pl.Peaks) != 3 || len(pl.Extra) != 1 || pl.Extra[0] != "SNR" || !pl.HasIntensity {
		t.Fatalf("got %+v", pl)
	}
	p := pl.Peaks
	// The text of the position is kept exactly (trimmed).
	if p[0].Text != "2147.081400" || p[0].Row != 3 || p[0].Index != 1 || p[0].Unc != 0.0004 || p[0].Intensity != 0.5 || p[0].Extra[0] != "12" {
		t.Errorf("peak 1: %+v", p[0])
	}
	if p[1].Unit != linelist.MHz || p[1].Row != 6 || p[1].Unc != 0 || p[1].Intensity != 0.3 {
		t.Errorf("peak 2: %+v", p[1])
	}
	if p[2].Text != "2.14e3" || p[2].Position != 2140 || p[2].Unit != linelist.Wavenumber || p[2].Intensity != 0 {
		t.Errorf("peak 3: %+v", p[2])
	}
	// 1 cm-1 = 29 979.2458 MHz exactly (defined speed of light).
	if !near(p[1].Wavenumber(), 115271.2018/29979.2458, 1e-12) {
		t.Errorf("MHz conversion: %v", p[1].Wavenumber())
	}
}

// TestReadPeaksDuplicate: a peak given twice reads, with a warning naming both rows.
func TestReadPeaksDuplicate(t *testing.T) {
	pl, err := assign.ReadPeaks(strings.NewReader("position,unc\n2143.2,0.001\n2147.08,0.001\n2143.2,0.002\n2143.20001,0.001\n"), "p.csv", linelist.Wavenumber)
	if err != nil {
		t.Fatal(err)
	}
	if len(pl.Peaks) != 4 || len(pl.Warnings) != 1 || pl.Warnings[0].Row != 4 || !strings.Contains(pl.Warnings[0].String(), "p.csv:4: position: duplicate peak: the same position as row 2") {
		t.Errorf("%d peaks, warnings %v", len(pl.Peaks), pl.Warnings)
	}
	// With a unit, the same number in MHz and in cm-1 is not a duplicate.
	pl, err = assign.ReadPeaks(strings.NewReader("position,unit\n2143.2,cm-1\n2143.2,MHz\n"), "p.csv", linelist.Wavenumber)
	if err != nil || len(pl.Warnings) != 0 {
		t.Errorf("%v %v", err, pl.Warnings)
	}
}

func TestReadPeaksErrors(t *testing.T) {
	cases := []struct{ name, in, want string }{
		{"empty", "", "p.csv: no peaks: the file is empty"},
		{"header only", "position\n", "p.csv:1: no peaks"},
		{"no position", "pos,unc\n1,2\n", "p.csv:1: position: required column missing"},
		{"semicolon", "position;unc\n1;2\n", "semicolon-separated"},
		{"bad number", "position,unc\n2143.2,0.001\nabc,0.001\n", "p.csv:3: position: not a number: \"abc\""},
		{"decimal comma", "position,unc\n\"2143,2\",0.001\n", "p.csv:2: position: not a number: \"2143,2\" (decimal comma?"},
		{"negative", "position\n-3\n", "p.csv:2: position: must be > 0, got -3"},
		{"zero unc", "position,unc\n2143,0\n", "p.csv:2: unc: must be > 0, got 0"},
		{"nan", "position\nNaN\n", "p.csv:2: position: must be a finite number"},
		{"unit", "position,unit\n2143,nm\n", "p.csv:2: unit: unknown unit \"nm\""},
		{"signs", "position,intensity\n2143,1\n2144,-1\n", "p.csv:3: intensity: -1 has the opposite sign of the intensities above (row 2)"},
		{"zero intensity", "position,intensity\n2143,0\n", "p.csv:2: intensity: must not be zero"},
		{"fields", "position,unc\n2143,0.1,5\n", "p.csv:2: row has 3 fields, header has 2"},
		{"duplicate", "position,Position\n1,2\n", "p.csv:1: Position: duplicate column name"},
		{"missing", "position,unc\n,0.1\n", "p.csv:2: position: missing value"},
		{"not UTF-8", "position,observer\n2143,caf\xe9\n", "p.csv:2: observer: not UTF-8 text: byte 0xE9 at character 4"},
		{"header not UTF-8", "position,caf\xe9\n2143,x\n", "p.csv:1: column 2: name is not UTF-8"},
		// 115 271 MHz (CO J=1-0) without a unit: no transition within one
		// electronic state of a diatomic reaches 1e5 cm-1.
		{"MHz without unit", "position\n2143.2\n115271.2018\n", "p.csv:3: position: 115271.2018 cm-1 is beyond the dissociation energy"},
		{"MHz hint", "position\n115271.2018\n", "add a unit column (cm-1 or MHz) or give --unit MHz"},
		{"MHz unit column", "position,unit\n115271.2018,cm-1\n", "is the row's unit MHz?"},
	}
	for _, c := range cases {
		_, err := assign.ReadPeaks(strings.NewReader(c.in), "p.csv", linelist.Wavenumber)
		var ie *assign.InputError
		if err == nil || !errors.As(err, &ie) || !strings.HasPrefix(err.Error(), "assign: ") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: got %v, want %q", c.name, err, c.want)
		}
	}
}

// FuzzReadPeaks: ReadPeaks never panics; a failure is an *InputError whose
// problems name the file; a success keeps positive finite positions whose text
// reads back to the same number.
func FuzzReadPeaks(f *testing.F) {
	for _, s := range []string{
		"position,unc,intensity,unit\n2147.0814,0.0004,0.5,cm-1\n",
		"\uFEFF# c\nPosition;unc\n1;2\n",
		"position,x\n\"1\n2\",\"a,b\"\n3,\"=1\"\n",
		"unit,position\nMHz,115271.2\n,2e3\n",
		"position\n2143.2\n115271.2\n2143.2\n",
		"position,x\n2143.2,caf\xe9\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		pl, err := assign.ReadPeaks(bytes.NewReader(data), "f.csv", linelist.Wavenumber)
		if err != nil {
			var ie *assign.InputError
			if !errors.As(err, &ie) || len(ie.Problems) == 0 {
				t.Fatalf("error %T %v", err, err)
			}
			for _, p := range ie.Problems {
				if p.File != "f.csv" || p.Reason == "" {
					t.Fatalf("problem %+v", p)
				}
			}
			return
		}
		if len(pl.Peaks) == 0 {
			t.Fatal("success without peaks")
		}
		for _, p := range pl.Peaks {
			if !(p.Position > 0) || p.Unc < 0 || p.Intensity < 0 || len(p.Extra) != len(pl.Extra) {
				t.Fatalf("peak %+v", p)
			}
			q, err := assign.ReadPeaks(strings.NewReader("position\n"+p.Text+"\n"), "g.csv", p.Unit)
			if err != nil || q.Peaks[0].Position != p.Position {
				t.Fatalf("text %q does not read back: %v", p.Text, err)
			}
		}
	})
}

// TestUnitHint: peaks in GHz or MHz read as cm⁻¹ lock onto nothing; the
// error says which unit makes them fall where the bands are predicted and
// names --unit. Positions from B_0 of 12C16O (57 635.968 MHz) and B of
// 79Br19F (about 0.3558 cm⁻¹), both from memory.
func TestUnitHint(t *testing.T) {
	for _, tc := range []struct {
		name, start string
		peaks       []float64
		want        string
	}{
		{"CO in GHz", "[[species]]\nname = \"12C16O\"\nB_0 = 1.92\n", []float64{115.27120, 230.53800, 345.79599, 461.04077, 576.26793, 691.47308}, "the peaks look like GHz: read as GHz, 6 of 6 fall where the bands are predicted"},
		{"BrF in MHz", "[[species]]\nname = \"79Br19F\"\nB_0 = 0.3558\n", []float64{21333.1, 42666.0, 63998.4, 85330.3}, "the peaks look like MHz"},
	} {
		var b strings.Builder
		b.WriteString("position\n")
		for _, p := range tc.peaks {
			fmt.Fprintf(&b, "%g\n", p)
		}
		pl, err := assign.ReadPeaks(strings.NewReader(b.String()), "p.csv", linelist.Wavenumber)
		if err != nil {
			t.Fatal(err)
		}
		st, err := assign.ReadStart(strings.NewReader(tc.start), "s.toml")
		if err != nil {
			t.Fatal(err)
		}
		_, err = assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: []linelist.Band{{VUp: 0, VLo: 0}}, Spectrum: assign.Rotation}, assign.Settings{})
		var le *assign.LockError
		if !errors.As(err, &le) || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "give --unit") {
			t.Errorf("%s: got %v, want a lock error saying %q", tc.name, err, tc.want)
		}
	}
	// Peaks in cm⁻¹ that simply do not match get no unit hint.
	pl, _ := assign.ReadPeaks(strings.NewReader("position\n3.1\n7.0\n9.9\n13.3\n"), "p.csv", linelist.Wavenumber)
	st, _ := assign.ReadStart(strings.NewReader("[[species]]\nname = \"12C16O\"\nB_0 = 1.92\n"), "s.toml")
	_, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: []linelist.Band{{VUp: 0, VLo: 0}}, Spectrum: assign.Rotation}, assign.Settings{})
	if err != nil && strings.Contains(err.Error(), "look like") {
		t.Errorf("hint for peaks in the right unit: %v", err)
	}
}

// TestFlatIntensitiesIgnored: a peak list whose intensity column holds the
// same number everywhere (a program that measured none) is assigned as if it
// had none, with a warning — compared with the predicted intensities it would
// only count against the right pattern. Lines of 12C16O J+1←J, J = 0…24,
// in MHz from its ground-state constants (57 635.968 MHz, 183.5 kHz; from
// memory).
func TestFlatIntensitiesIgnored(t *testing.T) {
	var b strings.Builder
	b.WriteString("position,intensity\n")
	for J := 0; J < 25; J++ {
		x1, x0 := float64((J+1)*(J+2)), float64(J*(J+1))
		fmt.Fprintf(&b, "%.4f,1\n", 57635.96828*(x1-x0)-0.1835055*(x1*x1-x0*x0))
	}
	pl, err := assign.ReadPeaks(strings.NewReader(b.String()), "p.csv", linelist.MHz)
	if err != nil {
		t.Fatal(err)
	}
	st, err := assign.ReadStart(strings.NewReader("unit = \"MHz\"\n[[species]]\nname = \"12C16O\"\nB_0 = 57500\n"), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: []linelist.Band{{VUp: 0, VLo: 0}}, Spectrum: assign.Rotation}, assign.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Lines) != 25 {
		t.Errorf("%d lines assigned, want 25", len(res.Lines))
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.HasPrefix(w, "every peak with an intensity has the same one (25 peaks)")
	}
	if !found {
		t.Errorf("no warning about the flat intensities: %q", res.Warnings)
	}
}

// BenchmarkReadPeaksMemory measures the memory the peak-list reader needs per
// MB of input, for the README's promises: peak lists of about 1, 10 and
// 100 MB (position, unc, intensity, unit). alloc-MB/MB is what a read
// allocates in all, live-MB/MB what stays in use with the result held.
func BenchmarkReadPeaksMemory(b *testing.B) {
	for _, mb := range []int{1, 10, 100} {
		var buf bytes.Buffer
		buf.WriteString("position,unc,intensity,unit\n")
		for i := 0; buf.Len() < mb<<20; i++ {
			fmt.Fprintf(&buf, "%.6f,0.0005,%.4g,cm-1\n", 1900+float64(i%400000)*0.001, 0.5+float64(i%97)/100)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("%dMB", mb), func(b *testing.B) {
			var alloc, live float64
			for b.Loop() {
				runtime.GC()
				var m0, m1 runtime.MemStats
				runtime.ReadMemStats(&m0)
				pl, err := assign.ReadPeaks(bytes.NewReader(data), "bench.csv", linelist.Wavenumber)
				if err != nil {
					b.Fatal(err)
				}
				runtime.ReadMemStats(&m1)
				alloc = float64(m1.TotalAlloc-m0.TotalAlloc) / (1 << 20)
				runtime.GC()
				runtime.ReadMemStats(&m1)
				live = (float64(m1.HeapAlloc) - float64(m0.HeapAlloc)) / (1 << 20)
				runtime.KeepAlive(pl)
			}
			b.ReportMetric(alloc/float64(mb), "alloc-MB/MB")
			b.ReportMetric(live/float64(mb), "live-MB/MB")
		})
	}
}
