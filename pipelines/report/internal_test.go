package report

import (
	"image/color"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"

	"bandwright/internal/svgfig"
)

// No NaN or Inf is ever printed.
func TestNumberFormatting(t *testing.T) {
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		for _, s := range []string{num(x, 4), fixed(x, 2), paren(x, 0.1), paren(1, x), relPercent(x)} {
			if strings.Contains(strings.ToLower(s), "nan") || strings.Contains(strings.ToLower(s), "inf") {
				t.Errorf("non-finite printed as %q", s)
			}
		}
	}
	// Parenthetical notation from constants.FormatParen; 1.922529(3) means
	// 1.922529 ± 0.000003 (the README's conventions).
	if got := paren(1.922529, 0.000003); got != "1.922529(3)" {
		t.Errorf("paren = %q", got)
	}
	if got := paren(2.5, 0); got != "2.5" {
		t.Errorf("a value without σ = %q", got)
	}
	if got := fixed(-0.0001, 2); got != "0.00" {
		t.Errorf("fixed(-0.0001, 2) = %q, want 0.00", got)
	}
}

// decimate keeps the ends and thins a curve to about max points, spaced in
// x or in log x.
func TestDecimate(t *testing.T) {
	var xy plotter.XYs
	for i := 1; i <= 6000; i++ {
		xy = append(xy, plotter.XY{X: float64(i), Y: float64(i * i)})
	}
	for _, logX := range []bool{false, true} {
		d := decimate(xy, 500, logX)
		if len(d) > 502 || (!logX && len(d) < 450) {
			t.Errorf("logX=%v: %d points kept", logX, len(d))
		}
		if d[0] != xy[0] || d[len(d)-1] != xy[len(xy)-1] {
			t.Errorf("logX=%v: ends not kept", logX)
		}
		for i := 1; i < len(d); i++ {
			if d[i].X <= d[i-1].X {
				t.Fatalf("logX=%v: order lost at %d", logX, i)
			}
		}
	}
	// On a log axis the first decade is not thinned away.
	d := decimate(xy, 500, true)
	n := 0
	for _, p := range d {
		if p.X <= 10 {
			n++
		}
	}
	if n != 10 {
		t.Errorf("log decimation kept %d of the points 1…10 K, want all 10", n)
	}
}

// logTicks labels powers of ten exactly (no 9.999999e-06).
func TestLogTicks(t *testing.T) {
	ts := logTicks{}.Ticks(3e-7, 2e-5)
	var labels []string
	for _, tk := range ts {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	want := "5×10⁻⁷ 1×10⁻⁶ 2×10⁻⁶ 5×10⁻⁶ 1×10⁻⁵ 2×10⁻⁵"
	if got := strings.Join(labels, " "); got != want {
		t.Errorf("labels %q, want %q", got, want)
	}
	wide := logTicks{}.Ticks(1e-12, 1)
	for _, tk := range wide {
		if tk.Label != "" && strings.Contains(tk.Label, "99999") {
			t.Errorf("label %q", tk.Label)
		}
	}
	if len(logTicks{}.Ticks(0, 1)) != 0 {
		t.Error("ticks for a range starting at 0")
	}
}

// The excerpt picks the usual table temperatures present, plus the ends.
func TestExcerptRows(t *testing.T) {
	var T []float64
	for i := 10; i <= 3000; i += 10 {
		T = append(T, float64(i))
		if i == 290 {
			T = append(T, 298.15)
		}
	}
	rows := excerptRows(T)
	var got []float64
	for _, i := range rows {
		got = append(got, T[i])
	}
	want := []float64{10, 100, 200, 298.15, 300, 400, 500, 600, 800, 1000, 1500, 2000, 2500, 3000}
	if len(got) != len(want) {
		t.Fatalf("rows at %v, want %v", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("rows at %v, want %v", got, want)
		}
	}
}

func TestFileSafe(t *testing.T) {
	for in, want := range map[string]string{"12C16O": "12C16O", "cm-1": "cm-1", "../x y": "___x_y", "": "x"} {
		if got := fileSafe(in); got != want {
			t.Errorf("fileSafe(%q) = %q, want %q", in, got, want)
		}
	}
}

// The diverging scale: white at 0, Okabe–Ito blue at −1 and vermillion at +1.
func TestDiverging(t *testing.T) {
	for _, c := range []struct {
		rho  float64
		want [3]uint8
	}{{0, [3]uint8{255, 255, 255}}, {-1, [3]uint8{0x00, 0x72, 0xb2}}, {1, [3]uint8{0xd5, 0x5e, 0x00}}, {2, [3]uint8{0xd5, 0x5e, 0x00}}} {
		r, g, b, _ := diverging(c.rho).RGBA()
		if got := [3]uint8{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8)}; got != c.want {
			t.Errorf("diverging(%g) = %v, want %v", c.rho, got, c.want)
		}
	}
}

// TestJText: the bands and levels of an open-shell record carry J − ½ with
// the half-integer flag; the report writes J itself.
func TestJText(t *testing.T) {
	for _, c := range []struct {
		j    int
		half bool
		want string
	}{{0, false, "0"}, {47, false, "47"}, {0, true, "0.5"}, {47, true, "47.5"}} {
		if got := jText(c.j, c.half); got != c.want {
			t.Errorf("jText(%d, %v) = %q, want %q", c.j, c.half, got, c.want)
		}
	}
}

// Marker and line colours keep at least 3:1 contrast against white (WCAG
// 2.1, success criterion 1.4.11, non-text contrast); orange (#E69F00) of
// Okabe–Ito has about 2.0:1 and is used for shaded bands only.
func TestMarkerContrast(t *testing.T) {
	contrast := func(c color.Color) float64 { return 1.05 / (svgfig.Luminance(c) + 0.05) }
	for b, st := range branchStyles {
		if r := contrast(st.color); r < 3 {
			t.Errorf("branch %s: contrast %.2f:1", b, r)
		}
	}
	for i, st := range append(fileStyles, rejectedStyle) {
		if r := contrast(st.color); r < 3 {
			t.Errorf("style %d: contrast %.2f:1", i, r)
		}
	}
	if r := contrast(okOrange); r > 2.5 {
		t.Errorf("orange has %.2f:1, the test's premise is wrong", r)
	}
}

// Ticks at round steps, integers on counting axes.
func TestTicks(t *testing.T) {
	labels := func(ts []plot.Tick) string {
		var out []string
		for _, tk := range ts {
			out = append(out, tk.Label)
		}
		return strings.Join(out, " ")
	}
	if got := labels(intTicks{}.Ticks(-0.5, 25.5)); got != "0 5 10 15 20 25" {
		t.Errorf("J ticks %q", got)
	}
	if got := labels(intTicks{}.Ticks(5.5, 9.5)); got != "6 7 8 9" {
		t.Errorf("short J ticks %q", got)
	}
	if got := labels(niceTicks{}.Ticks(100, 3000)); got != "500 1000 1500 2000 2500 3000" {
		t.Errorf("T ticks %q", got)
	}
	if got := labels(niceTicks{}.Ticks(-3.9, 3.9)); got != "−2 0 2" {
		t.Errorf("residual ticks %q", got)
	}
}
