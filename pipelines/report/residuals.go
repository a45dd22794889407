package report

import (
	"errors"
	"math"
	"path/filepath"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg/draw"

	"bandwright/fit/linelist"
	"bandwright/internal/typeset"
)

// bandKey identifies a band of one isotopologue in residuals.csv.
type bandKey struct {
	species    string
	vUp, vLo   int
	stUp, stLo string // electronic states; empty: the ground state
}

// groupBands groups residual rows by band, in record species order then by
// lower and upper v.
func groupBands(f *folder) ([]bandKey, map[bandKey][]int) {
	order := map[string]int{}
	for i, s := range f.record.Species {
		order[s] = i
	}
	groups := map[bandKey][]int{}
	var keys []bandKey
	for i, r := range f.residuals {
		k := bandKey{r.species, r.vUp, r.vLo, r.stUp, r.stLo}
		if _, ok := groups[k]; !ok {
			keys = append(keys, k)
		}
		groups[k] = append(groups[k], i)
	}
	rank := func(s string) int {
		if r, ok := order[s]; ok {
			return r
		}
		return len(order)
	}
	sort.SliceStable(keys, func(a, b int) bool {
		ka, kb := keys[a], keys[b]
		if rank(ka.species) != rank(kb.species) {
			return rank(ka.species) < rank(kb.species)
		}
		if ka.species != kb.species {
			return ka.species < kb.species
		}
		if ka.vLo != kb.vLo {
			return ka.vLo < kb.vLo
		}
		return ka.vUp < kb.vUp
	})
	return keys, groups
}

func bandName(k bandKey) string {
	if k.stUp != k.stLo {
		return k.species + " " + linelist.Band{VUp: k.vUp, VLo: k.vLo, StateUp: k.stUp, StateLo: k.stLo}.String()
	}
	if k.vUp == k.vLo {
		return sprintf("%s pure rotation v=%d", k.species, k.vUp)
	}
	return k.species + " " + linelist.Band{VUp: k.vUp, VLo: k.vLo, StateUp: k.stUp, StateLo: k.stLo}.String()
}

// residualSection plots o−c against J for each band and lists the lines that
// need a look.
func residualSection(d *document, f *folder) {
	s := d.section("residuals", "Residuals by band")
	s.para("One figure per band. Horizontal axis: J″, the rotational quantum number of the lower level. Vertical axis: (o − c)/unc, the residual (observed minus calculated) divided by the line's stated uncertainty unc, the quantity every o − c figure of this report shows, with dashed guides at ±3. Each branch has its own colour and glyph; rejected lines are vermillion crosses, and those beyond the plotted range are vermillion arrows on its edge with their value beside them.")
	keys, groups := groupBands(f)
	for _, k := range keys {
		d.figure(s, bandFigure(f, k, groups[k]))
	}
	// The used lines with the largest normalised residuals.
	var used []int
	for i, r := range f.residuals {
		if r.used && finite(r.norm) {
			used = append(used, i)
		}
	}
	sort.SliceStable(used, func(a, b int) bool {
		return math.Abs(f.residuals[used[a]].norm) > math.Abs(f.residuals[used[b]].norm)
	})
	if len(used) > 0 {
		t := lineTable("Used lines with the largest |o − c|/unc.")
		for _, i := range used[:min(len(used), 12)] {
			t.Rows = append(t.Rows, lineRow(f.residuals[i]))
		}
		d.table(s, t)
	}
	// Rejected lines and every line that carries a note or a comment.
	var flagged []int
	for i, r := range f.residuals {
		if !r.used || r.note != "" || r.comment != "" {
			flagged = append(flagged, i)
		}
	}
	if len(flagged) == 0 {
		s.para("No line was rejected and none carries a note or comment.")
		return
	}
	const maxRows = 200
	t := lineTable("Rejected lines and lines with a note or comment.")
	for _, i := range flagged[:min(len(flagged), maxRows)] {
		t.Rows = append(t.Rows, lineRow(f.residuals[i]))
	}
	if len(flagged) > maxRows {
		t.Note = sprintf("%d more such lines are in residuals.csv.", len(flagged)-maxRows)
	}
	d.table(s, t)
}

func lineTable(caption string) *table {
	return &table{Caption: caption,
		Head:    []string{"file:row", "species", "transition", "observed", "o − c", "unit", "(o − c)/unc", "status", "note", "comment"},
		Numeric: []bool{false, false, false, true, true, false, true, false, false, false},
		Kind:    []cellKind{cellText, cellSpecies, cellText, cellText, cellText, cellUnit}}
}

func lineRow(r residual) []string {
	status := "used"
	if !r.used {
		status = "rejected"
	}
	br := r.branch
	if br == "" {
		br = "?"
	}
	return []string{
		sprintf("%s:%d", filepath.Base(r.file), r.row), r.species,
		linelist.Band{VUp: r.vUp, VLo: r.vLo, StateUp: r.stUp, StateLo: r.stLo}.String() + sprintf(" %s(%g)", br, r.jLo),
		num(r.obs, 12), num(r.oc, 4), orDefault(r.unit, linelist.DefaultUnit.String()), fixed(r.norm, 2), status, r.note, r.comment,
	}
}

// bandFigure draws the residuals (o − c)/unc of one band against J″: one
// series per branch, rejected lines as crosses or, off scale, as arrows with
// their value (see addRejected), a zero line and dashed guides at ±3.
func bandFigure(f *folder, k bandKey, idx []int) *figure {
	state := func(st string) string {
		if st == "" {
			return ""
		}
		return fileSafe(st) + "."
	}
	name := sprintf("report-residuals-%s-%s%d-%s%d.svg", fileSafe(k.species), state(k.stUp), k.vUp, state(k.stLo), k.vLo)
	fig := &figure{Name: name, Alt: "residuals of " + bandName(k) + " against J″"}
	pts := collectBand(f.residuals, idx)
	all := pts.all()
	fig.Caption = sprintf("Residuals (o − c)/unc of %s against J″ (%d lines used, %d rejected).", bandName(k), pts.nUsed, pts.nRejected)
	if !distinctX(all) {
		fig.Missing = sprintf("Not plotted: %s has %d line(s) with a finite residual at a single J″; a plot needs at least two.", bandName(k), len(all))
		return fig
	}
	yLim := 1.3 * math.Max(pts.yMax(), residualGuide)
	p := newPlot(bandTitle(k), "J″ (lower level)", "(o − c)/unc")
	p.X.Tick.Marker = intTicks{}
	xMin, xMax := math.Inf(1), math.Inf(-1)
	for _, q := range all {
		xMin, xMax = math.Min(xMin, q.X), math.Max(xMax, q.X)
	}
	p.X.Min, p.X.Max = xMin-0.5, xMax+0.5
	p.Y.Min, p.Y.Max = -yLim, yLim
	if err := addGuides(p, p.X.Min, p.X.Max); err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	if err := pts.addBranches(p); err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.drawResiduals(p, pts.rejected, yLim)
	return fig
}

// drawResiduals finishes a figure of (o − c)/unc: it adds the rejected lines
// (those beyond ±yLim as off-scale markers at the edge), renders the SVG and
// gives the off-scale values in the caption. When plotting fails, Missing
// says why and SVG stays nil.
func (fig *figure) drawResiduals(p *plot.Plot, rejected []labelled, yLim float64) {
	in, off := splitOffScale(rejected, yLim)
	if err := addRejected(p, in, off, yLim); err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return
	}
	svg, err := render(p, figWidth, figHeight)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return
	}
	fig.SVG = svg
	fig.Caption += offScaleCaption(off, "(o − c)/unc")
}

// residualGuide is the height of the guides of the residual figures: 3 in
// units of the line's uncertainty, the usual rejection threshold
// (fit.DefaultReject).
const residualGuide = 3

// addGuides adds the zero line and the dashed guides at ±residualGuide.
func addGuides(p *plot.Plot, x0, x1 float64) error {
	zero, err := hline(0, x0, x1, guideGrey, false, 0.6)
	if err != nil {
		return err
	}
	up, err1 := hline(residualGuide, x0, x1, guideGrey, true, 1)
	dn, err2 := hline(-residualGuide, x0, x1, guideGrey, true, 1)
	if err1 != nil || err2 != nil {
		return errors.New("the ±3 guides could not be drawn")
	}
	p.Add(zero, up, dn)
	p.Legend.Add("±3", up)
	return nil
}

// labelled is a point with the name of its line.
type labelled struct {
	plotter.XY
	label string
}

// splitOffScale splits rejected points into those within ±yLim and those
// beyond it.
func splitOffScale(pts []labelled, yLim float64) (plotter.XYs, []offScale) {
	var in plotter.XYs
	var off []offScale
	for _, q := range pts {
		if math.Abs(q.Y) > yLim {
			off = append(off, offScale{q.X, q.Y, q.label})
		} else {
			in = append(in, q.XY)
		}
	}
	return in, off
}

// bandTitle is the title of a band's residual figure.
func bandTitle(k bandKey) string {
	sp := typeset.SpeciesText(k.species)
	if k.stUp != k.stLo {
		return sp + "   " + linelist.Band{VUp: k.vUp, VLo: k.vLo, StateUp: k.stUp, StateLo: k.stLo}.String()
	}
	if k.vUp == k.vLo {
		return sprintf("%s   pure rotation, v=%d", sp, k.vUp)
	}
	return sprintf("%s   v′=%d ← v″=%d", sp, k.vUp, k.vLo)
}

// bandPoints are the finite points of a band's figure, used lines by branch
// letter ("?" for none or an unknown one), with the counts of all its lines.
type bandPoints struct {
	byBranch         map[string]*xyCollector
	rejected         []labelled
	nUsed, nRejected int
}

// branchOrder is the order of the branch series in a figure's legend.
var branchOrder = []string{"P", "Q", "R", "O", "S", "?"}

func collectBand(rs []residual, idx []int) *bandPoints {
	pts := &bandPoints{byBranch: map[string]*xyCollector{}}
	for _, i := range idx {
		r := rs[i]
		if !r.used {
			pts.nRejected++
			if finite(r.jLo) && finite(r.norm) {
				pts.rejected = append(pts.rejected, labelled{plotter.XY{X: r.jLo, Y: r.norm}, branchLabel(r)})
			}
			continue
		}
		pts.nUsed++
		b := strings.ToUpper(r.branch)
		if _, ok := branchStyles[b]; !ok {
			b = "?"
		}
		if pts.byBranch[b] == nil {
			pts.byBranch[b] = &xyCollector{}
		}
		pts.byBranch[b].add(r.jLo, r.norm)
	}
	return pts
}

// branchLabel names a line by branch and J″: "R(23)".
func branchLabel(r residual) string {
	br := r.branch
	if br == "" {
		br = "?"
	}
	return sprintf("%s(%g)", br, r.jLo)
}

// all returns every point, used then rejected.
func (pts *bandPoints) all() plotter.XYs {
	var all plotter.XYs
	for _, c := range pts.byBranch {
		all = append(all, c.xy...)
	}
	for _, q := range pts.rejected {
		all = append(all, q.XY)
	}
	return all
}

// yMax is the largest |y| of the used lines, or of the rejected ones when no
// line was used: the rejected lines beyond it go to the edge of the plot.
func (pts *bandPoints) yMax() float64 {
	yMax := 0.0
	for _, c := range pts.byBranch {
		for _, p := range c.xy {
			yMax = math.Max(yMax, math.Abs(p.Y))
		}
	}
	if pts.nUsed == 0 {
		for _, p := range pts.rejected {
			yMax = math.Max(yMax, math.Abs(p.Y))
		}
	}
	return yMax
}

// addBranches adds the used lines to p, one series and legend entry per branch.
func (pts *bandPoints) addBranches(p *plot.Plot) error {
	for _, b := range branchOrder {
		c := pts.byBranch[b]
		if c == nil || len(c.xy) == 0 {
			continue
		}
		st, ok := branchStyles[b]
		if !ok {
			st = seriesStyle{darkPurple, draw.RingGlyph{}}
		}
		sc, err := scatter(c.xy, st, 2.4)
		if err != nil {
			return err
		}
		p.Add(sc)
		lbl := b + " branch"
		if b == "?" {
			lbl = "branch not given"
		}
		p.Legend.Add(lbl, sc)
	}
	return nil
}
