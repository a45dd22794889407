package report

import (
	"bandwright/fit/linelist"
	"math"
	"path/filepath"
	"sort"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg/draw"
)

// positionSection compares observed and calculated positions, per unit.
func positionSection(d *document, f *folder) {
	s := d.section("positions", "Observed and calculated positions")
	s.para("For each unit of the line lists: the calculated position against the observed one, on the line of equality, and o − c against the observed position with one colour and glyph per input file; an offset or a slope between files points to a difference in calibration.")
	units := map[string][]int{}
	var order []string
	for i, r := range f.residuals {
		u := orDefault(r.unit, linelist.DefaultUnit.String())
		if _, ok := units[u]; !ok {
			order = append(order, u)
		}
		units[u] = append(units[u], i)
	}
	sort.Strings(order)
	files := distinctFiles(f.residuals)
	for _, u := range order {
		idx := units[u]
		d.figure(s, obsCalcFigure(f, u, idx))
		d.figure(s, ocPositionFigure(f, u, idx, files))
	}
}

func distinctFiles(rs []residual) []string {
	var out []string
	seen := map[int]bool{}
	for _, r := range rs {
		if !seen[r.fileIndex] {
			seen[r.fileIndex] = true
			out = append(out, r.file)
		}
	}
	return out
}

func obsCalcFigure(f *folder, unit string, idx []int) *figure {
	un := unitName(unit)
	fig := &figure{Name: "report-obs-calc-" + fileSafe(unit) + ".svg", Alt: "calculated against observed positions in " + un}
	var used, rej xyCollector
	for _, i := range idx {
		r := f.residuals[i]
		if r.used {
			used.add(r.obs, r.calc)
		} else {
			rej.add(r.obs, r.calc)
		}
	}
	all := append(append(plotter.XYs{}, used.xy...), rej.xy...)
	fig.Caption = sprintf("Calculated against observed positions (%s), %d lines; the line is calculated = observed.", un, len(all))
	if !distinctX(all) {
		fig.Missing = sprintf("Not plotted: %d line(s) in %s at a single position; a plot needs at least two.", len(all), un)
		return fig
	}
	p := newPlot("Calculated against observed ("+un+")", "observed / "+un, "calculated / "+un)
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, q := range all {
		lo, hi = math.Min(lo, math.Min(q.X, q.Y)), math.Max(hi, math.Max(q.X, q.Y))
	}
	eq, err := plotter.NewLine(plotter.XYs{{X: lo, Y: lo}, {X: hi, Y: hi}})
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	eq.LineStyle.Color, eq.LineStyle.Width = guideGrey, 0.8
	p.Add(eq)
	p.Legend.Add("calculated = observed", eq)
	if len(used.xy) > 0 {
		sc, err := scatter(used.xy, seriesStyle{okBlue, draw.CircleGlyph{}}, 2)
		if err != nil {
			fig.Missing = "Not plotted: " + err.Error()
			return fig
		}
		p.Add(sc)
		p.Legend.Add("used", sc)
	}
	if len(rej.xy) > 0 {
		sc, err := scatter(rej.xy, seriesStyle{okVermillion, draw.CrossGlyph{}}, 3)
		if err != nil {
			fig.Missing = "Not plotted: " + err.Error()
			return fig
		}
		p.Add(sc)
		p.Legend.Add("rejected", sc)
	}
	svg, err := render(p, figWidth, figHeight)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	return fig
}

func ocPositionFigure(f *folder, unit string, idx []int, files []string) *figure {
	un := unitName(unit)
	fig := &figure{Name: "report-oc-position-" + fileSafe(unit) + ".svg", Alt: "o − c against observed position in " + un + ", by input file"}
	perFile := map[int]*xyCollector{}
	var rej xyCollector
	yMax := 0.0
	for _, i := range idx {
		r := f.residuals[i]
		if !r.used {
			rej.add(r.obs, r.oc)
			continue
		}
		if perFile[r.fileIndex] == nil {
			perFile[r.fileIndex] = &xyCollector{}
		}
		perFile[r.fileIndex].add(r.obs, r.oc)
		if finite(r.oc) {
			yMax = math.Max(yMax, math.Abs(r.oc))
		}
	}
	var all plotter.XYs
	for _, c := range perFile {
		all = append(all, c.xy...)
	}
	all = append(all, rej.xy...)
	fig.Caption = sprintf("o − c (%s) against observed position, one colour and glyph per input file (%d file(s)).", un, len(perFile))
	if !distinctX(all) {
		fig.Missing = sprintf("Not plotted: %d line(s) in %s at a single position; a plot needs at least two.", len(all), un)
		return fig
	}
	if yMax == 0 {
		for _, q := range rej.xy {
			yMax = math.Max(yMax, math.Abs(q.Y))
		}
	}
	yLim := 1.3 * yMax
	if !(yLim > 0) {
		yLim = 1
	}
	p := newPlot("o − c against position ("+un+")", "observed / "+un, "o − c / "+un)
	p.Y.Min, p.Y.Max = -yLim, yLim
	xMin, xMax := math.Inf(1), math.Inf(-1)
	for _, q := range all {
		xMin, xMax = math.Min(xMin, q.X), math.Max(xMax, q.X)
	}
	zero, err := hline(0, xMin, xMax, guideGrey, false, 0.6)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	p.Add(zero)
	for k := range files {
		c := perFile[k]
		if c == nil || len(c.xy) == 0 {
			continue
		}
		sc, err := scatter(c.xy, fileStyles[k%len(fileStyles)], 2.2)
		if err != nil {
			fig.Missing = "Not plotted: " + err.Error()
			return fig
		}
		p.Add(sc)
		if k < 12 {
			p.Legend.Add(filepath.Base(files[k]), sc)
		}
	}
	if err := addRejected(p, rej.xy, yLim); err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	svg, err := render(p, figWidth, figHeight)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	if len(files) > 12 {
		fig.Caption += " The legend names the first 12 files."
	}
	return fig
}
