package nightly

import (
	"fmt"
	"html/template"
	"image/color"
	"math"
	"strconv"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandwright/internal/svgfig"
	"bandwright/internal/typeset"
)

// trend is the figure of one key constant over the archive's history.
type trend struct {
	Name, Unit string
	SVG        template.HTML // gonum/plot's SVG canvas escapes every text it draws
	Caption    string
}

// Colours of the trend figures (Okabe–Ito, at least 3:1 against white):
// results in blue, flagged results in vermillion.
var (
	trendBlue  = svgfig.Blue
	trendAlert = svgfig.Vermillion
)

// maxTrendPoints is the most results a trend figure shows: the latest.
const maxTrendPoints = 200

// trends draws, for every key-constant column, its values ± 1σ against the
// time they were recorded over the whole history, flagged results marked.
func trends(cols []sumCol, all []histRow, threshold float64) []trend {
	var out []trend
	for _, c := range cols {
		var ok, bad plotter.XYs
		var okErr, badErr plotter.YErrors
		var first, last string
		k := 0
		for _, h := range all {
			if h.name != c.Name || h.unit != c.Unit || math.IsNaN(h.value) {
				continue
			}
			k++
			if first == "" {
				first = h.finished
			}
			last = h.finished
			pt := plotter.XY{X: float64(k), Y: h.value}
			e := struct{ Low, High float64 }{h.sigma, h.sigma}
			if h.flagged {
				bad, badErr = append(bad, pt), append(badErr, e)
			} else {
				ok, okErr = append(ok, pt), append(okErr, e)
			}
		}
		n := len(ok) + len(bad)
		if n < 2 {
			continue
		}
		if len(ok) > maxTrendPoints {
			ok, okErr = ok[len(ok)-maxTrendPoints:], okErr[len(okErr)-maxTrendPoints:]
		}
		svg, err := trendSVG(c, ok, okErr, bad, badErr)
		if err != nil {
			continue
		}
		out = append(out, trend{Name: c.Name, Unit: c.Unit, SVG: template.HTML(svg),
			Caption: fmt.Sprintf("The %d results of the history in the order they were recorded (%s to %s; the latest %d shown), each ± 1σ: blue circles, and vermillion crosses for the flagged ones (more than %g combined σ from the weighted mean of the results before it).", n, dateOf(first), dateOf(last), min(n, maxTrendPoints+len(bad)), threshold)})
	}
	return out
}

// errPoints are points with vertical error bars.
type errPoints struct {
	plotter.XYs
	plotter.YErrors
}

// trendSVG draws one trend figure.
func trendSVG(c sumCol, ok plotter.XYs, okErr plotter.YErrors, bad plotter.XYs, badErr plotter.YErrors) (svg []byte, err error) {
	p := plot.New()
	for _, st := range []*text.Style{&p.X.Label.TextStyle, &p.Y.Label.TextStyle, &p.X.Tick.Label, &p.Y.Tick.Label, &p.Legend.TextStyle} {
		st.Font = font.From(svgfig.Sans, 10)
	}
	p.X.Label.Text = "result, in the order recorded"
	p.Y.Label.Text = typeset.Unit(c.Unit)
	p.X.Tick.Marker = plot.TickerFunc(countTicks)
	p.Y.Tick.Marker = plot.TickerFunc(valueTicks)
	for _, set := range []struct {
		xy   plotter.XYs
		e    plotter.YErrors
		clr  color.Color
		glyp draw.GlyphDrawer
	}{{ok, okErr, trendBlue, draw.CircleGlyph{}}, {bad, badErr, trendAlert, draw.CrossGlyph{}}} {
		if len(set.xy) == 0 {
			continue
		}
		eb, err := plotter.NewYErrorBars(errPoints{set.xy, set.e})
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color = set.clr
		sc, err := plotter.NewScatter(set.xy)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: set.clr, Shape: set.glyp, Radius: 2.5}
		p.Add(eb, sc)
	}
	if len(ok)+len(bad) > 0 {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, q := range append(append(plotter.XYs{}, ok...), bad...) {
			lo, hi = math.Min(lo, q.X), math.Max(hi, q.X)
		}
		p.X.Min, p.X.Max = lo-0.5, hi+0.5
	}
	return svgfig.Render(4.6*vg.Inch, 2.2*vg.Inch, func(dc draw.Canvas) {
		p.Draw(draw.Crop(dc, 4, -8, 2, -4))
	})
}

// dateOf is the date of an RFC 3339 time ("" when it is not one).
func dateOf(s string) string {
	t, err := time.Parse(time.RFC3339, s)
	if err != nil {
		return ""
	}
	return t.Format("2006-01-02")
}

// countTicks marks the result number at integer steps.
func countTicks(lo, hi float64) []plot.Tick {
	step := math.Max(1, roundStep((hi-lo)/8))
	var out []plot.Tick
	for v := math.Ceil(lo/step) * step; v <= hi; v += step {
		out = append(out, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', 0, 64)})
	}
	return out
}

// valueTicks marks a value axis at round steps with typeset labels.
func valueTicks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return []plot.Tick{{Value: lo, Label: typeset.Number(strconv.FormatFloat(lo, 'g', 6, 64))}}
	}
	step := roundStep((hi - lo) / 4)
	var out []plot.Tick
	for v := math.Ceil(lo/step) * step; v <= hi+step*1e-9; v += step {
		if math.Abs(v) < step*1e-9 {
			v = 0
		}
		out = append(out, plot.Tick{Value: v, Label: typeset.Number(strconv.FormatFloat(v, 'g', 8, 64))})
	}
	return out
}

// roundStep is the smallest of 1, 2, 5 times a power of ten at least x.
func roundStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5} {
		if m*p >= x*(1-1e-9) {
			return m * p
		}
	}
	return 10 * p
}
