// Package svgfig holds what every figure of bandwright's reports shares: the
// colour palette, the typeface and the step from a gonum/plot drawing to an
// inline <svg> element.
//
// Palette: the colours of Okabe & Ito, "Color Universal Design" (2002),
// chosen to stay distinct for the common forms of colour-vision deficiency.
// Markers and lines use only those with at least 3:1 contrast against white
// (WCAG 2.1, non-text contrast): Blue, BluishGreen, Vermillion, Black. Orange
// and SkyBlue (about 2.2:1) only fill bands.
package svgfig

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// The Okabe–Ito colours.
var (
	Black       = color.RGBA{0x00, 0x00, 0x00, 0xff}
	Orange      = color.RGBA{0xe6, 0x9f, 0x00, 0xff}
	SkyBlue     = color.RGBA{0x56, 0xb4, 0xe9, 0xff}
	BluishGreen = color.RGBA{0x00, 0x9e, 0x73, 0xff}
	Blue        = color.RGBA{0x00, 0x72, 0xb2, 0xff}
	Vermillion  = color.RGBA{0xd5, 0x5e, 0x00, 0xff}
)

// Sans is the typeface of figure text. Liberation Sans has the metrics of
// Arial, so the layout holds where a browser substitutes it (see Render).
var Sans = font.Font{Typeface: "Liberation", Variant: "Sans"}

// Render draws a figure of w × h points with fn and returns the <svg>
// element alone (for inline use), its text set in Liberation Sans with Arial,
// Helvetica and sans-serif as fallbacks. A panic of the plotting library
// becomes an error.
func Render(w, h vg.Length, fn func(c draw.Canvas)) (svg []byte, err error) {
	defer func() {
		if r := recover(); r != nil {
			svg, err = nil, fmt.Errorf("the plotting library gave up: %v", r)
		}
	}()
	c := vgsvg.New(w, h)
	fn(draw.New(c))
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, err
	}
	out := b.Bytes()
	i := bytes.Index(out, []byte("<svg"))
	if i < 0 {
		return nil, errors.New("the SVG canvas wrote no <svg> element")
	}
	out = out[i:]
	return bytes.ReplaceAll(out, []byte("font-family:Liberation Sans;"), []byte("font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")), nil
}

// Luminance is the relative luminance of c (WCAG 2.1: sRGB channels
// linearised, weighted 0.2126, 0.7152, 0.0722), 0 for black, 1 for white. The
// contrast of c against white is 1.05/(Luminance(c) + 0.05).
func Luminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 {
		x := float64(v) / 65535
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}
