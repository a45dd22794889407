package svgfig

import (
	"bytes"
	"image/color"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestRender: the element alone, with the fallback fonts named; a panic of
// the drawing becomes an error.
func TestRender(t *testing.T) {
	p := plot.New()
	p.X.Label.Text = "J″"
	p.X.Label.TextStyle.Font = font.From(Sans, 10)
	svg, err := Render(3*vg.Inch, 2*vg.Inch, func(c draw.Canvas) { p.Draw(c) })
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.HasPrefix(svg, []byte("<svg")) || !bytes.HasSuffix(bytes.TrimSpace(svg), []byte("</svg>")) {
		t.Errorf("not a lone <svg> element: %.80q … %.40q", svg, svg[max(0, len(svg)-40):])
	}
	if !strings.Contains(string(svg), "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;") || strings.Contains(string(svg), "font-family:Liberation Sans;") {
		t.Error("the figure text lacks the fallback fonts")
	}
	if _, err := Render(vg.Inch, vg.Inch, func(draw.Canvas) { panic("no room") }); err == nil || !strings.Contains(err.Error(), "no room") {
		t.Errorf("a panic while drawing gave %v", err)
	}
}

// TestContrast: the colours for markers and lines have at least 3:1
// contrast against white, Orange and SkyBlue less (WCAG 2.1 relative
// luminance; the Okabe–Ito values of their 2002 page, common practice); white
// has luminance 1.
func TestContrast(t *testing.T) {
	for _, c := range []struct {
		name   string
		c      color.Color
		strong bool
	}{
		{"Black", Black, true}, {"Blue", Blue, true}, {"BluishGreen", BluishGreen, true},
		{"Vermillion", Vermillion, true}, {"Orange", Orange, false}, {"SkyBlue", SkyBlue, false},
	} {
		if ratio := 1.05 / (Luminance(c.c) + 0.05); (ratio >= 3) != c.strong {
			t.Errorf("%s: contrast %.2f:1 against white", c.name, ratio)
		}
	}
	if l := Luminance(color.White); math.Abs(l-1) > 1e-12 {
		t.Errorf("white has luminance %g", l)
	}
}
