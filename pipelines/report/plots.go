package report

import (
	"bytes"
	"errors"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandwright/internal/svgfig"
)

// Palette: the Okabe–Ito colours of package svgfig (markers and lines only
// in those with at least 3:1 contrast against white; see TestMarkerContrast).
// Every series also differs in glyph shape or dash pattern, so the plots read
// in greyscale too.
var (
	okBlack       = svgfig.Black
	okOrange      = svgfig.Orange
	okSkyBlue     = svgfig.SkyBlue
	okBluishGreen = svgfig.BluishGreen
	okBlue        = svgfig.Blue
	okVermillion  = svgfig.Vermillion
	// darkPurple is the reddish purple of Okabe–Ito (#CC79A7, 2.9:1)
	// darkened to 4.9:1.
	darkPurple = color.RGBA{0xa8, 0x4d, 0x86, 0xff}
	guideGrey  = color.RGBA{0x55, 0x55, 0x55, 0xff}
	gridGrey   = color.RGBA{0xdd, 0xdd, 0xdd, 0xff}
)

// paletteName is printed in the conventions section.
const paletteName = "Okabe–Ito (2002) colour-blind-safe palette (markers and lines in blue, bluish green, vermillion and black; orange and sky blue only as shaded bands); correlations on a blue–white–vermillion diverging scale built from it"

// seriesStyle is the look of one point series.
type seriesStyle struct {
	color color.Color
	shape draw.GlyphDrawer
}

// branchStyles: each branch its own colour and glyph. Triangles are kept
// for the marker of a rejected line beyond the plotted range (offScaleGlyph),
// crosses for rejected lines.
var branchStyles = map[string]seriesStyle{
	"P": {okBlue, draw.CircleGlyph{}},
	"R": {okBluishGreen, draw.BoxGlyph{}},
	"Q": {okBlack, diamondGlyph{}},
	"O": {darkPurple, draw.RingGlyph{}},
	"S": {okBlack, draw.SquareGlyph{}},
}

// rejectedStyle is the look of a rejected line.
var rejectedStyle = seriesStyle{okVermillion, draw.CrossGlyph{}}

// fileStyles cycle over input files and bands (vermillion is kept for
// rejected lines).
var fileStyles = []seriesStyle{
	{okBlue, draw.CircleGlyph{}},
	{okBluishGreen, draw.BoxGlyph{}},
	{okBlack, diamondGlyph{}},
	{darkPurple, draw.RingGlyph{}},
	{okBlue, draw.SquareGlyph{}},
	{okBlack, draw.PlusGlyph{}},
	{okBluishGreen, draw.RingGlyph{}},
}

var sansFont = svgfig.Sans

// Figure size (points) and text sizes. A figure is shown at most 36rem
// (576 px) wide and scales down with the column; at a phone's column of
// about 350 px it is shown at 350/480 of its size, where 10 pt tick labels
// are 9.7 px high (the report keeps text at 9 px or more).
const (
	figWidth  = 5.0 * vg.Inch
	figHeight = 2.8 * vg.Inch

	titleSize = 11.5
	labelSize = 10.5
	tickSize  = 10
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
	p.Title.TextStyle.Font.Size = titleSize
	p.X.Label.TextStyle.Font.Size = labelSize
	p.Y.Label.TextStyle.Font.Size = labelSize
	p.Legend.TextStyle.Font.Size = tickSize
	p.X.Tick.Label.Font.Size = tickSize
	p.Y.Tick.Label.Font.Size = tickSize
	p.X.Tick.Marker, p.Y.Tick.Marker = niceTicks{}, niceTicks{}
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
	return svgfig.Render(w, h, func(c draw.Canvas) {
		// A small margin keeps text inside the figure where a browser's font
		// runs a little wider than the metrics the layout used.
		dc := draw.Crop(c, 6, -6, 4, -4)
		w := w - 12
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
	})
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

// offScaleGlyph marks a rejected line beyond the plotted range: an arrow
// (a stem and a head) pointing up (beyond the top) or down, a shape no series
// uses.
type offScaleGlyph struct{ up bool }

func (a offScaleGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.6
	s := vg.Length(1)
	if !a.up {
		s = -1
	}
	var head vg.Path
	head.Move(vg.Point{X: pt.X, Y: pt.Y + s*r})
	head.Line(vg.Point{X: pt.X - r*0.6, Y: pt.Y + s*r*0.2})
	head.Line(vg.Point{X: pt.X + r*0.6, Y: pt.Y + s*r*0.2})
	head.Close()
	c.Fill(head)
	c.StrokeLine2(draw.LineStyle{Color: sty.Color, Width: 1.2}, pt.X, pt.Y+s*r*0.3, pt.X, pt.Y-s*r)
}

// diamondGlyph is a filled diamond.
type diamondGlyph struct{}

func (diamondGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius * 1.25
	var p vg.Path
	p.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	p.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	p.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	p.Line(vg.Point{X: pt.X - r, Y: pt.Y})
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
				t.Label = num(v, 3)
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

// offScale is a rejected line beyond the plotted range: where it is (x),
// its value and its name.
type offScale struct {
	x, y  float64
	label string
}

// addRejected draws rejected lines as crosses; those beyond ±yLim as arrows
// on the edge of the range with their value written beside them (at most
// maxOffScaleLabels; the caption lists every one).
func addRejected(p *plot.Plot, in plotter.XYs, off []offScale, yLim float64) error {
	if len(in) > 0 {
		sc, err := scatter(in, rejectedStyle, 3)
		if err != nil {
			return err
		}
		p.Add(sc)
		p.Legend.Add("rejected", sc)
	}
	if len(off) == 0 {
		return nil
	}
	var first *plotter.Scatter
	var labels plotter.XYLabels
	for _, up := range []bool{true, false} {
		var xy plotter.XYs
		for _, o := range off {
			if (o.y > 0) == up {
				y := yLim * 0.9
				if !up {
					y = -y
				}
				xy = append(xy, plotter.XY{X: o.x, Y: y})
				if len(labels.XYs) < maxOffScaleLabels {
					labels.XYs = append(labels.XYs, plotter.XY{X: o.x, Y: y})
					labels.Labels = append(labels.Labels, num(o.y, 3))
				}
			}
		}
		if len(xy) == 0 {
			continue
		}
		sc, err := scatter(xy, seriesStyle{okVermillion, offScaleGlyph{up: up}}, 3)
		if err != nil {
			return err
		}
		p.Add(sc)
		if first == nil {
			first = sc
		}
	}
	p.Legend.Add(sprintf("rejected, off scale (%d)", len(off)), first)
	lb, err := plotter.NewLabels(labels)
	if err != nil {
		return err
	}
	for i := range lb.TextStyle {
		lb.TextStyle[i].Font = font.From(sansFont, tickSize)
		lb.TextStyle[i].Color = okVermillion
		lb.TextStyle[i].XAlign = draw.XLeft
		lb.TextStyle[i].YAlign = draw.YCenter
	}
	lb.Offset = vg.Point{X: 6}
	p.Add(lb)
	return nil
}

// maxOffScaleLabels is the most off-scale values written in a figure.
const maxOffScaleLabels = 6

// offScaleCaption lists the off-scale lines of a figure for its caption.
func offScaleCaption(off []offScale, quantity string) string {
	if len(off) == 0 {
		return ""
	}
	var parts []string
	for _, o := range off {
		parts = append(parts, o.label+": "+num(o.y, 4))
	}
	return sprintf(" Off scale (arrows at the edge, value beside them), %s: %s.", quantity, strings.Join(parts, "; "))
}

// niceTicks marks a linear axis at round steps (1, 2 or 5 times a power of
// ten, 4–8 labelled ticks), labelled with the decimals the step needs and a
// true minus; integer steps when the axis counts something (J, T).
type niceTicks struct{}

func (niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !finite(lo) || !finite(hi) || !(hi > lo) {
		return nil
	}
	step := niceStep((hi - lo) / 6)
	dec := max(0, -int(math.Floor(math.Log10(step)+1e-9)))
	var out []plot.Tick
	for v := math.Ceil(lo/step-1e-9) * step; v <= hi+step*1e-9; v += step {
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		label := fixed(v, dec)
		if math.Abs(v) >= 1e6 || (v != 0 && math.Abs(v) < 1e-4) {
			label = num(v, 3)
		}
		out = append(out, plot.Tick{Value: v, Label: label})
	}
	return out
}

// niceStep returns the smallest of 1, 2, 5 times a power of ten at least x.
func niceStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x*(1-1e-9) {
			return m * p
		}
	}
	return 10 * p
}

// intTicks marks an axis of integers (J, m) at integer steps of 1, 2, 5,
// 10, … with at most 10 labelled ticks.
type intTicks struct{}

func (intTicks) Ticks(lo, hi float64) []plot.Tick {
	if !finite(lo) || !finite(hi) || !(hi > lo) {
		return nil
	}
	step := math.Max(1, niceStep((hi-lo)/8))
	var out []plot.Tick
	for v := math.Ceil(lo/step) * step; v <= hi; v += step {
		out = append(out, plot.Tick{Value: v, Label: fixed(v, 0)})
	}
	return out
}
