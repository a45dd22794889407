package report

import (
	"math"
	"path/filepath"
	"sort"
	"strings"

	"gonum.org/v1/plot/plotter"

	"bandwright/fit/linelist"
	"bandwright/internal/typeset"
)

// positionSection shows the lines against their positions, per unit: the
// Fortrat diagram of the assignment, and (o − c)/unc against position by
// input file.
func positionSection(d *document, f *folder) {
	s := d.section("positions", "Lines against position")
	s.para("For each unit of the line lists: the Fortrat diagram — every line at its observed position against its running number m, one colour and glyph per band — where each branch of a band draws a smooth curve, so that a gap marks a line not found and a point off its curve a doubtful assignment; and (o − c)/unc against the observed position, one colour and glyph per input file, where an offset or a slope between files points to a difference in calibration.")
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
		d.figure(s, fortratFigure(f, u, idx))
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

// runningNumber is the m of a line in a Fortrat diagram: J″ + 1 in the R
// branch (ΔJ = +1), −J″ in the P branch, J″ in the Q branch; J″ + 2 (S) and
// −J″ + 1 (O) for the Raman branches (common practice).
func runningNumber(r residual) float64 {
	switch d := r.jUp - r.jLo; {
	case d > 1.5:
		return r.jLo + 2
	case d > 0.5:
		return r.jLo + 1
	case d < -1.5:
		return -r.jLo + 1
	case d < -0.5:
		return -r.jLo
	}
	return r.jLo
}

// fortratFigure draws the lines of one unit at their observed position
// against their running number m, one series per band.
func fortratFigure(f *folder, unit string, idx []int) *figure {
	un := unitName(unit)
	fig := &figure{Name: "report-fortrat-" + fileSafe(unit) + ".svg", Alt: "Fortrat diagram: running number m against observed position in " + un}
	keys, groups := groupBands(f)
	inUnit := map[int]bool{}
	for _, i := range idx {
		inUnit[i] = true
	}
	p := newPlot("Fortrat diagram ("+un+")", "observed position / "+un, "m")
	p.Y.Tick.Marker = intTicks{}
	var all plotter.XYs
	var rej xyCollector
	nb := 0
	for _, k := range keys {
		var c xyCollector
		for _, i := range groups[k] {
			if !inUnit[i] {
				continue
			}
			r := f.residuals[i]
			if r.used {
				c.add(r.obs, runningNumber(r))
			} else {
				rej.add(r.obs, runningNumber(r))
			}
		}
		if len(c.xy) == 0 {
			continue
		}
		sc, err := scatter(c.xy, fileStyles[nb%len(fileStyles)], 2)
		if err != nil {
			fig.Missing = "Not plotted: " + err.Error()
			return fig
		}
		p.Add(sc)
		if nb < maxLegendSeries {
			p.Legend.Add(bandTitleShort(k), sc)
		}
		nb++
		all = append(all, c.xy...)
	}
	all = append(all, rej.xy...)
	fig.Caption = sprintf("Fortrat diagram (%s): %d lines of %d band(s) at their observed position against m = J″ + 1 (R branch), −J″ (P), J″ (Q); rejected lines as vermillion crosses.", un, len(all), nb)
	if !distinctX(all) {
		fig.Missing = sprintf("Not plotted: %d line(s) in %s at a single position; a plot needs at least two.", len(all), un)
		return fig
	}
	if len(rej.xy) > 0 {
		if err := addRejected(p, rej.xy, nil, 0); err != nil {
			fig.Missing = "Not plotted: " + err.Error()
			return fig
		}
	}
	svg, err := render(p, figWidth, figHeight)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	if nb > maxLegendSeries {
		fig.Caption += sprintf(" The legend names the first %d bands.", maxLegendSeries)
	}
	return fig
}

// maxLegendSeries is the most series a legend names.
const maxLegendSeries = 12

// bandTitleShort names a band in a legend: "12C16O 1-0".
func bandTitleShort(k bandKey) string { return typesetSpecies(bandName(k), k.species) }

// ocPositionFigure draws (o − c)/unc against the observed position, one
// series per input file.
func ocPositionFigure(f *folder, unit string, idx []int, files []string) *figure {
	un := unitName(unit)
	fig := &figure{Name: "report-oc-position-" + fileSafe(unit) + ".svg", Alt: "(o − c)/unc against observed position in " + un + ", by input file"}
	perFile := map[int]*xyCollector{}
	var rej []labelled
	yMax := 0.0
	for _, i := range idx {
		r := f.residuals[i]
		if !r.used {
			if finite(r.obs) && finite(r.norm) {
				rej = append(rej, labelled{plotter.XY{X: r.obs, Y: r.norm}, bandName(bandKey{r.species, r.vUp, r.vLo, r.stUp, r.stLo}) + " " + branchLabel(r)})
			}
			continue
		}
		if perFile[r.fileIndex] == nil {
			perFile[r.fileIndex] = &xyCollector{}
		}
		perFile[r.fileIndex].add(r.obs, r.norm)
		if finite(r.norm) {
			yMax = math.Max(yMax, math.Abs(r.norm))
		}
	}
	var all plotter.XYs
	for _, c := range perFile {
		all = append(all, c.xy...)
	}
	for _, q := range rej {
		all = append(all, q.XY)
	}
	fig.Caption = sprintf("(o − c)/unc against observed position (%s), one colour and glyph per input file (%d file(s)).", un, len(perFile))
	if !distinctX(all) {
		fig.Missing = sprintf("Not plotted: %d line(s) in %s at a single position; a plot needs at least two.", len(all), un)
		return fig
	}
	yLim := 1.3 * math.Max(yMax, residualGuide)
	p := newPlot("(o − c)/unc against position ("+un+")", "observed position / "+un, "(o − c)/unc")
	p.Y.Min, p.Y.Max = -yLim, yLim
	xMin, xMax := math.Inf(1), math.Inf(-1)
	for _, q := range all {
		xMin, xMax = math.Min(xMin, q.X), math.Max(xMax, q.X)
	}
	if err := addGuides(p, xMin, xMax); err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	for k := range files {
		c := perFile[k]
		if c == nil || len(c.xy) == 0 {
			continue
		}
		sc, err := scatter(c.xy, fileStyles[k%len(fileStyles)], 2)
		if err != nil {
			fig.Missing = "Not plotted: " + err.Error()
			return fig
		}
		p.Add(sc)
		if k < maxLegendSeries {
			p.Legend.Add(filepath.Base(files[k]), sc)
		}
	}
	fig.drawResiduals(p, rej, yLim)
	if fig.SVG != nil && len(files) > maxLegendSeries {
		fig.Caption += sprintf(" The legend names the first %d files.", maxLegendSeries)
	}
	return fig
}

// typesetSpecies writes the isotopologue label of a band's name with its
// mass numbers as superscripts, for the text of a figure.
func typesetSpecies(name, species string) string {
	return strings.Replace(name, species, typeset.SpeciesText(species), 1)
}
