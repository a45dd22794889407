package report

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Palette: the eight colours of Okabe & Ito, "Color Universal Design" (2002),
// chosen to stay distinct for the common forms of colour-vision deficiency.
// Every series also differs in glyph shape or dash pattern, so the plots read
// in greyscale print too.
var (
	okBlack         = color.RGBA{0x00, 0x00, 0x00, 0xff}
	okOrange        = color.RGBA{0xe6, 0x9f, 0x00, 0xff}
	okSkyBlue       = color.RGBA{0x56, 0xb4, 0xe9, 0xff}
	okBluishGreen   = color.RGBA{0x00, 0x9e, 0x73, 0xff}
	okYellow        = color.RGBA{0xf0, 0xe4, 0x42, 0xff}
	okBlue          = color.RGBA{0x00, 0x72, 0xb2, 0xff}
	okVermillion    = color.RGBA{0xd5, 0x5e, 0x00, 0xff}
	okReddishPurple = color.RGBA{0xcc, 0x79, 0xa7, 0xff}
	guideGrey       = color.RGBA{0x55, 0x55, 0x55, 0xff}
	gridGrey        = color.RGBA{0xdd, 0xdd, 0xdd, 0xff}
)

// paletteName is printed in the conventions section.
const paletteName = "Okabe–Ito (2002) colour-blind-safe palette; correlations on a blue–white–vermillion diverging scale built from it"

// seriesStyle is the look of one point series.
type seriesStyle struct {
	color color.Color
	shape draw.GlyphDrawer
}

// branchStyles: each branch its own colour and glyph.
var branchStyles = map[string]seriesStyle{
	"P": {okBlue, draw.CircleGlyph{}},
	"R": {okOrange, draw.PyramidGlyph{}},
	"Q": {okBluishGreen, draw.BoxGlyph{}},
	"O": {okReddishPurple, draw.RingGlyph{}},
	"S": {okSkyBlue, draw.SquareGlyph{}},
}

// fileStyles cycle over input files (vermillion is kept for rejected lines).
var fileStyles = []seriesStyle{
	{okBlue, draw.CircleGlyph{}},
	{okOrange, draw.PyramidGlyph{}},
	{okBluishGreen, draw.BoxGlyph{}},
	{okReddishPurple, draw.RingGlyph{}},
	{okSkyBlue, draw.SquareGlyph{}},
	{okBlack, draw.TriangleGlyph{}},
	{okYellow, draw.PlusGlyph{}},
}

var sansFont = font.Font{Typeface: "Liberation", Variant: "Sans"}

// Figure sizes (points).
const (
	figWidth  = 6.4 * vg.Inch
	figHeight = 3.0 * vg.Inch
)

// newPlot returns a plot in the report's look: sans-serif text, light grid.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := newBarePlot(title, xLabel, yLabel)
	g := plotter.NewGrid()
	g.Horizontal.Color, g.Vertical.Color = gridGrey, gridGrey
	g.Horizontal.Width, g.Vertical.Width = 0.5, 0.5
	p.Add(g)
	return p
}

// newBarePlot is newPlot without the grid.
func newBarePlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	for _, st := range []*text.Style{&p.Title.TextStyle, &p.X.Label.TextStyle, &p.Y.Label.TextStyle, &p.X.Tick.Label, &p.Y.Tick.Label, &p.Legend.TextStyle} {
		st.Font = font.From(sansFont, st.Font.Size)
	}
	p.Title.TextStyle.Font.Size = 11
	p.X.Label.TextStyle.Font.Size = 10
	p.Y.Label.TextStyle.Font.Size = 10
	p.Legend.TextStyle.Font.Size = 9
	p.X.Tick.Label.Font.Size = 9
	p.Y.Tick.Label.Font.Size = 9
	p.Legend.Top = true
	p.Legend.ThumbnailWidth = 0.3 * vg.Inch
	p.Legend.Padding = 2
	return p
}

// svgMarker is written into every SVG file of a report so that a rebuild
// recognises (and may remove) the figures of an older report.
const svgMarker = "<!-- bandwright report figure -->"

// render draws p as SVG. It returns the <svg> element alone (for inline use);
// a panic of the plotting library becomes an error, which the section shows.
func render(p *plot.Plot, w, h vg.Length) (svg []byte, err error) {
	defer func() {
		if r := recover(); r != nil {
			svg, err = nil, fmt.Errorf("the plotting library gave up: %v", r)
		}
	}()
	c := vgsvg.New(w, h)
	// A small margin keeps text inside the figure where a browser's font
	// runs a little wider than the metrics the layout used.
	dc := draw.Crop(draw.New(c), 6, -6, 4, -4)
	w -= 12
	// The legend goes into a strip right of the plot, where it hides no data.
	leg := p.Legend
	leg.Left, leg.Top = true, true
	r := leg.Rectangle(dc)
	lw := r.Max.X - r.Min.X
	if lw > 0 && lw < 0.4*w {
		strip := lw + 12
		p.Legend = plot.NewLegend()
		p.Draw(draw.Crop(dc, 0, -strip, 0, 0))
		top := vg.Length(0)
		if p.Title.Text != "" {
			top = p.Title.TextStyle.Rectangle(p.Title.Text).Size().Y + p.Title.Padding + 4
		}
		leg.Draw(draw.Crop(dc, w-strip+8, 0, 0, -top))
		p.Legend = leg
	} else {
		p.Draw(dc)
	}
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
	// Liberation Sans has the metrics of Arial: name it and the usual
	// fallbacks so that text keeps its place where Liberation is not installed.
	out = bytes.ReplaceAll(out, []byte("font-family:Liberation Sans;"), []byte("font-family:'Liberation Sans',Arial,Helvetica,sans-serif;"))
	return out, nil
}

// svgFile is an inline SVG element made into a standalone file.
func svgFile(svg []byte) []byte {
	var b bytes.Buffer
	b.Grow(len(svg) + 80)
	b.WriteString("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n")
	b.WriteString(svgMarker + "\n")
	b.Write(svg)
	return b.Bytes()
}

// xyCollector gathers finite points.
type xyCollector struct{ xy plotter.XYs }

func (c *xyCollector) add(x, y float64) {
	if finite(x) && finite(y) {
		c.xy = append(c.xy, plotter.XY{X: x, Y: y})
	}
}

// distinctX reports whether the points span a non-zero x range.
func distinctX(xy plotter.XYs) bool {
	if len(xy) < 2 {
		return false
	}
	lo, hi := xy[0].X, xy[0].X
	for _, p := range xy {
		lo, hi = math.Min(lo, p.X), math.Max(hi, p.X)
	}
	return hi > lo
}

func scatter(xy plotter.XYs, st seriesStyle, radius vg.Length) (*plotter.Scatter, error) {
	s, err := plotter.NewScatter(xy)
	if err != nil {
		return nil, err
	}
	s.GlyphStyle.Color = st.color
	s.GlyphStyle.Shape = st.shape
	s.GlyphStyle.Radius = radius
	return s, nil
}

func hline(y, x0, x1 float64, clr color.Color, dashed bool, width vg.Length) (*plotter.Line, error) {
	l, err := plotter.NewLine(plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}})
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = clr
	l.LineStyle.Width = width
	if dashed {
		l.LineStyle.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
	}
	return l, nil
}

// arrowGlyph marks a point that lies beyond the plotted range: a filled
// triangle pointing up (beyond the top) or down (beyond the bottom).
type arrowGlyph struct{ up bool }

func (a arrowGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.3
	s := vg.Length(1)
	if !a.up {
		s = -1
	}
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + s*r})
	p.Line(vg.Point{X: pt.X - r*0.8, Y: pt.Y - s*r*0.6})
	p.Line(vg.Point{X: pt.X + r*0.8, Y: pt.Y - s*r*0.6})
	p.Close()
	c.Fill(p)
}

// decimate thins a smooth curve for a figure: a point is kept when it lies
// at least 1/max of the x range (of log x when logX) beyond the last point
// kept; the first and the last points are always kept. The tables keep every
// row.
func decimate(xy plotter.XYs, max int, logX bool) plotter.XYs {
	if len(xy) <= max {
		return xy
	}
	tx := func(x float64) float64 {
		if logX {
			return math.Log(x)
		}
		return x
	}
	lo, hi := tx(xy[0].X), tx(xy[0].X)
	for _, p := range xy {
		lo, hi = math.Min(lo, tx(p.X)), math.Max(hi, tx(p.X))
	}
	step := (hi - lo) / float64(max)
	out := make(plotter.XYs, 0, max+2)
	out = append(out, xy[0])
	last := tx(xy[0].X)
	for _, p := range xy[1 : len(xy)-1] {
		if x := tx(p.X); math.Abs(x-last) >= step {
			out = append(out, p)
			last = x
		}
	}
	return append(out, xy[len(xy)-1])
}

// logTicks marks a logarithmic axis: a labelled tick at each power of ten
// (every n-th over many decades), unlabelled ticks at 2…9 times it over up
// to four decades, and labels at 2 and 5 times it when the axis spans at most
// two.
type logTicks struct{}

func (logTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) || !finite(lo) || !finite(hi) {
		return nil
	}
	e0, e1 := int(math.Floor(math.Log10(lo))), int(math.Ceil(math.Log10(hi)))
	decades := e1 - e0
	span := math.Log10(hi / lo)
	every := max(1, (decades+5)/6)
	var out []plot.Tick
	for e := e0; e <= e1; e++ {
		base := math.Pow10(e)
		for k := 1; k <= 9; k++ {
			if k > 1 && span > 4 {
				break
			}
			v := float64(k) * base
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if (k == 1 && (e-e0)%every == 0) || (span <= 2 && (k == 2 || k == 5)) {
				t.Label = strconv.FormatFloat(v, 'g', 3, 64)
			}
			out = append(out, t)
		}
	}
	return out
}

// fillBand returns a filled polygon between lo(x) and hi(x).
func fillBand(x, lo, hi []float64, clr color.Color) (*plotter.Polygon, error) {
	var ring plotter.XYs
	for i := range x {
		if finite(x[i]) && finite(hi[i]) && finite(lo[i]) {
			ring = append(ring, plotter.XY{X: x[i], Y: hi[i]})
		}
	}
	for i := len(x) - 1; i >= 0; i-- {
		if finite(x[i]) && finite(hi[i]) && finite(lo[i]) {
			ring = append(ring, plotter.XY{X: x[i], Y: lo[i]})
		}
	}
	if len(ring) < 4 {
		return nil, errors.New("too few points for a band")
	}
	pg, err := plotter.NewPolygon(ring)
	if err != nil {
		return nil, err
	}
	pg.Color = clr
	pg.LineStyle.Width = 0
	return pg, nil
}

// fileSafe turns a label into a file-name fragment.
func fileSafe(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '-':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	if b.Len() == 0 {
		return "x"
	}
	out := b.String()
	if len(out) > 40 {
		out = out[:40]
	}
	return out
}

// addRejected draws rejected lines as crosses, or as triangles on the edge of
// the range when they lie beyond ±yLim.
func addRejected(p *plot.Plot, xy plotter.XYs, yLim float64) error {
	var in, above, below plotter.XYs
	for _, q := range xy {
		switch {
		case q.Y > yLim:
			above = append(above, plotter.XY{X: q.X, Y: yLim * 0.96})
		case q.Y < -yLim:
			below = append(below, plotter.XY{X: q.X, Y: -yLim * 0.96})
		default:
			in = append(in, q)
		}
	}
	if len(in) > 0 {
		sc, err := scatter(in, seriesStyle{okVermillion, draw.CrossGlyph{}}, 3)
		if err != nil {
			return err
		}
		sc.GlyphStyle.Radius = 3
		p.Add(sc)
		p.Legend.Add("rejected", sc)
	}
	if len(above)+len(below) > 0 {
		var first *plotter.Scatter
		for _, set := range []struct {
			xy plotter.XYs
			up bool
		}{{above, true}, {below, false}} {
			if len(set.xy) == 0 {
				continue
			}
			sc, err := scatter(set.xy, seriesStyle{okVermillion, arrowGlyph{up: set.up}}, 3)
			if err != nil {
				return err
			}
			p.Add(sc)
			if first == nil {
				first = sc
			}
		}
		p.Legend.Add(sprintf("rejected, off scale (%d)", len(above)+len(below)), first)
	}
	return nil
}
