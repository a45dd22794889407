package report

import (
	"image/color"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandwright/constants"
	"bandwright/internal/typeset"
)

// thermoSection shows the thermodynamic table: an excerpt with σ_total,
// Q(T) and Cp°(T) with their statistical and total ±2σ bands, the
// closed-form comparison, and the caution beside them.
func thermoSection(d *document, f *folder) {
	th := f.thermo
	s := d.section("thermo", "Partition function and thermodynamic functions")
	T := th.get("T_K")
	tMin, tMax := math.Inf(1), math.Inf(-1)
	for _, t := range T {
		if finite(t) {
			tMin, tMax = math.Min(tMin, t), math.Max(tMax, t)
		}
	}
	if th.n == 0 {
		s.para("thermo.csv holds no rows.")
		return
	}
	if sp := thermoSpecies(th); sp != "" {
		of := ""
		if f.record != nil && len(f.record.Species) > 1 {
			of = sprintf(", one of the %d isotopologues of the fit (thermo --species chooses which)", len(f.record.Species))
		}
		s.para("The table is for %s%s.", typeset.SpeciesText(sp), of)
	}
	_, hasTotal := totalOrStat(th, "Cp")
	if hasTotal {
		s.para("thermo.csv holds %d temperatures from %s K to %s K; below, an excerpt (the file has every row). Each value is given with its total 1σ in parentheses and rounded to it; σ_total = √(σ² + σ_model²) adds to the statistical σ of the fit (column \"σ fit\") a model part for what the lines did not observe, from named alternatives recomputed against the table (thermo.json lists them per temperature). Its conventions (energy zero, nuclear spin, standard pressure) are listed under Conventions.", th.n, num(tMin, 6), num(tMax, 6))
	} else {
		s.para("thermo.csv holds %d temperatures from %s K to %s K; below, an excerpt with the statistical 1σ of the fit in parentheses (the file has every row; it has no model part of the uncertainty). Its conventions (energy zero, nuclear spin, standard pressure) are listed under Conventions.", th.n, num(tMin, 6), num(tMax, 6))
	}
	s.para("Caution: these numbers are only as good as the model behind them; for safety analysis or process design use reviewed reference data and defer to local codes and licensed engineering practice.")
	var others []string
	for _, n := range []string{constants.ThermoJSONFile, constants.NASA7File} {
		if f.has(n) {
			others = append(others, n)
		}
	}
	if len(others) > 0 {
		s.para("Also in this folder from the thermo stage: %s (machine-readable; not reproduced here).", strings.Join(others, ", "))
	}
	rows := excerptRows(T)
	excerptTables(d, s, th, rows)
	// Linear against Monte Carlo σ, when the table has both.
	mc := []struct{ key, lin, mc string }{{"Q", "Q_sigma", "Q_sigma_mc"}, {"Cp°", "Cp_sigma", "Cp_sigma_mc"}, {"S°", "S_sigma", "S_sigma_mc"}}
	mt := &table{Caption: "1σ by linear propagation and by Monte Carlo, at the same temperatures.", Head: []string{"T / K"}, Numeric: []bool{true}}
	var mcCols []int
	for k, m := range mc {
		if th.get(m.lin) != nil && th.get(m.mc) != nil {
			mcCols = append(mcCols, k)
			mt.Head = append(mt.Head, "σ "+m.key+" linear", "σ "+m.key+" Monte Carlo")
			mt.Numeric = append(mt.Numeric, true, true)
		}
	}
	if len(mcCols) > 0 {
		for _, i := range rows {
			row := []string{num(T[i], 8)}
			for _, k := range mcCols {
				row = append(row, num(th.get(mc[k].lin)[i], 3), num(th.get(mc[k].mc)[i], 3))
			}
			mt.Rows = append(mt.Rows, row)
		}
		d.table(s, mt)
	}
	qTot, _ := totalOrStat(th, "Q")
	cpTot, _ := totalOrStat(th, "Cp")
	d.figure(s, bandPlot(T, th.get("Q"), th.get("Q_sigma"), qTot, th.get("Q_closed_form"),
		"report-thermo-q.svg", "Partition function", "Q", "Q(T), internal partition function", "level sum"))
	d.figure(s, bandPlot(T, th.get("Cp"), th.get("Cp_sigma"), cpTot, nil,
		"report-thermo-cp.svg", "Heat capacity", "Cp° / "+typeset.Unit("J mol-1 K-1"), "Cp°(T), ideal gas at the standard pressure", "Cp°"))
	if th.get("Q_closed_form") != nil {
		d.figure(s, closedFormFigure(T, th.get("Q"), th.get("Q_closed_form")))
	}
	d.figure(s, widthFigure(th))
}

// excerptTables writes the excerpt of thermo.csv at the rows: each function
// as value(σ_total) rounded to σ_total, with the statistical σ of the fit
// beside it (value(σ) alone when the file has no total), then the closed
// form; in tables of at most three functions, so that an excerpt fits the
// width of a printed page.
func excerptTables(d *document, s *section, th *thermoTable, rows []int) {
	T := th.get("T_K")
	type col struct {
		head string
		cell func(i int) string
	}
	var cols [][]col // one group per quantity
	jmk, kjm := " / "+typeset.Unit("J mol-1 K-1"), " / "+typeset.Unit("kJ mol-1")
	units := map[string]string{"Q": "", "Cp": jmk, "S": jmk, "H_minus_H0": kjm, "H_minus_H298": kjm, "gef": jmk}
	for _, fn := range thermoFunctions {
		v := th.get(fn.key)
		if v == nil {
			continue
		}
		sig, hasTotal := totalOrStat(th, fn.key)
		stat := th.get(fn.key + "_sigma")
		g := []col{{fn.name + units[fn.key], func(i int) string {
			if sig == nil {
				return num(v[i], 8)
			}
			return paren(v[i], sig[i])
		}}}
		if hasTotal && stat != nil {
			g = append(g, col{"σ fit", func(i int) string { return num(stat[i], 2) }})
		}
		cols = append(cols, g)
	}
	if cf := th.get("Q_closed_form"); cf != nil {
		cols = append(cols, []col{{"Q, closed form", func(i int) string { return num(cf[i], 8) }}})
	}
	if ce := th.get("Q_closed_form_error"); ce != nil {
		cols = append(cols, []col{{"closed-form error (as in thermo.csv)", func(i int) string { return num(ce[i], 3) }}})
	}
	const perTable = 3
	parts := (len(cols) + perTable - 1) / perTable
	for part := 0; part < parts; part++ {
		caption := "Excerpt of thermo.csv."
		if parts > 1 {
			caption = sprintf("Excerpt of thermo.csv, part %d of %d.", part+1, parts)
		}
		t := &table{Caption: caption, Head: []string{"T / K"}, Numeric: []bool{true}}
		group := cols[part*perTable : min(len(cols), part*perTable+perTable)]
		for _, g := range group {
			for _, c := range g {
				t.Head = append(t.Head, c.head)
				t.Numeric = append(t.Numeric, true)
			}
		}
		for _, i := range rows {
			row := []string{num(T[i], 8)}
			for _, g := range group {
				for _, c := range g {
					row = append(row, c.cell(i))
				}
			}
			t.Rows = append(t.Rows, row)
		}
		d.table(s, t)
	}
}

// excerptRows picks the rows of the usual table temperatures, plus the first
// and the last; a short table is shown whole.
func excerptRows(T []float64) []int {
	if len(T) <= 20 {
		out := make([]int, len(T))
		for i := range out {
			out[i] = i
		}
		return out
	}
	// Temperatures of common tabulations (common practice: JANAF-style grids).
	std := []float64{100, 200, 298.15, 300, 400, 500, 600, 800, 1000, 1500, 2000, 2500, 3000, 4000, 5000, 6000}
	pick := map[int]bool{0: true, len(T) - 1: true}
	for _, ts := range std {
		for i, t := range T {
			if math.Abs(t-ts) < 1e-6*ts {
				pick[i] = true
				break
			}
		}
	}
	if len(pick) < 6 {
		step := (len(T) - 1) / 11
		for i := 0; i < len(T); i += max(step, 1) {
			pick[i] = true
		}
	}
	var out []int
	for i := range pick {
		out = append(out, i)
	}
	sort.Ints(out)
	return out
}

const maxCurvePoints = 800

// bandPlot draws y(T) with a ±2σ_total band (when tot differs from sig) under
// the ±2σ statistical band and, when cf is given, the closed form.
func bandPlot(T, y, sig, tot, cf []float64, name, title, yLabel, what, curve string) *figure {
	twoBands := tot != nil && sig != nil && !sameSlice(tot, sig)
	fig := &figure{Name: name, Alt: what + " with its ±2σ band"}
	if twoBands {
		fig.Alt = what + " with its ±2σ statistical and ±2σ total bands"
	}
	var c xyCollector
	for i := range T {
		c.add(T[i], y[i])
	}
	fig.Caption = what + "."
	if !distinctX(c.xy) {
		fig.Missing = sprintf("Not plotted: %s has %d finite value(s); a plot needs at least two temperatures.", what, len(c.xy))
		return fig
	}
	p := newPlot(title, "T / K", yLabel)
	if twoBands {
		addBand(p, T, y, tot, withAlpha(okOrange, 0x60), "±2σ total")
	}
	if sig != nil {
		addBand(p, T, y, sig, withAlpha(okSkyBlue, 0x80), map[bool]string{true: "±2σ fit", false: "±2σ"}[twoBands])
	}
	line, err := plotter.NewLine(decimate(c.xy, maxCurvePoints, false))
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	line.LineStyle.Color, line.LineStyle.Width = okBlue, 1.4
	p.Add(line)
	p.Legend.Add(curve, line)
	if cf != nil {
		var cc xyCollector
		for i := range T {
			cc.add(T[i], cf[i])
		}
		if len(cc.xy) >= 2 {
			l, err := plotter.NewLine(decimate(cc.xy, maxCurvePoints, false))
			if err == nil {
				l.LineStyle.Color, l.LineStyle.Width = okVermillion, 1.2
				l.LineStyle.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
				p.Add(l)
				p.Legend.Add("closed form", l)
				fig.Caption += " Dashed: the closed high-temperature form of thermo.csv."
			}
		}
	}
	svg, err := render(p, figWidth, figHeight)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	switch {
	case twoBands:
		fig.Caption += sprintf(" The inner band is ±2σ of the fit (statistical; at its widest ±%s of the value), the outer band ±2σ_total, which adds what the lines did not observe (at its widest ±%s); either may be thinner than the line.", relPercent(widest(y, sig)), relPercent(widest(y, tot)))
	case sig != nil:
		fig.Caption += sprintf(" The shaded band is ±2σ; at its widest it spans ±%s of the value, so it may be thinner than the line.", relPercent(widest(y, sig)))
	}
	return fig
}

// addBand adds the band y ± 2σ in colour c with a legend entry.
func addBand(p *plot.Plot, T, y, sig []float64, c color.Color, label string) {
	k := max(1, len(T)/maxCurvePoints)
	var bx, blo, bhi []float64
	for i := range T {
		if i%k == 0 || i == len(T)-1 {
			bx, blo, bhi = append(bx, T[i]), append(blo, y[i]-2*sig[i]), append(bhi, y[i]+2*sig[i])
		}
	}
	if band, err := fillBand(bx, blo, bhi, c); err == nil {
		p.Add(band)
		p.Legend.Add(label, band)
	}
}

func sameSlice(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// relPercent writes a relative size in percent or ppm.
func relPercent(x float64) string {
	switch {
	case !finite(x):
		return dash
	case x >= 1e-3:
		return num(100*x, 3) + " %"
	default:
		return num(1e6*x, 3) + " ppm"
	}
}

func withAlpha(c color.RGBA, a uint8) color.Color {
	// Premultiplied, as image/color expects.
	f := float64(a) / 255
	return color.RGBA{uint8(float64(c.R) * f), uint8(float64(c.G) * f), uint8(float64(c.B) * f), a}
}

// closedFormFigure plots (Q_closed_form − Q)/Q against T; when it spans more
// than two decades, its absolute value on logarithmic axes.
func closedFormFigure(T, q, cf []float64) *figure {
	fig := &figure{Name: "report-thermo-closed-form.svg", Alt: "relative difference of the closed-form Q from the level sum"}
	var c xyCollector
	for i := range T {
		if q[i] != 0 {
			c.add(T[i], (cf[i]-q[i])/q[i])
		}
	}
	fig.Caption = "Relative difference (Q_closed form − Q)/Q between the closed high-temperature form and the level sum, computed here from the two columns of thermo.csv."
	if !distinctX(c.xy) {
		fig.Missing = "Not plotted: fewer than two temperatures have both Q and its closed form."
		return fig
	}
	// Log axes when the difference spans decades and T does too.
	aLo, aHi := math.Inf(1), 0.0
	tLo, tHi := math.Inf(1), 0.0
	for _, p := range c.xy {
		if a := math.Abs(p.Y); a > 0 {
			aLo, aHi = math.Min(aLo, a), math.Max(aHi, a)
		}
		tLo, tHi = math.Min(tLo, p.X), math.Max(tHi, p.X)
	}
	logY := aHi > 100*aLo
	logX := logY && tLo > 0 && tHi > 30*tLo
	yLabel := "(Q_closed form − Q)/Q"
	xy := c.xy
	if logY {
		yLabel = "|Q_closed form − Q|/Q"
		xy = nil
		for _, p := range c.xy {
			if a := math.Abs(p.Y); a > 0 && (!logX || p.X > 0) {
				xy = append(xy, plotter.XY{X: p.X, Y: a})
			}
		}
		fig.Caption += " Absolute value on a logarithmic scale"
		if logX {
			fig.Caption += ", temperature too"
		}
		fig.Caption += "."
	}
	// gonum/plot centres a y label on the linear midpoint of the range,
	// which on a log axis pushes it off the top: there the quantity goes into
	// the title.
	title := "Closed form against level sum"
	if logY {
		title += ": " + yLabel
		yLabel = ""
	}
	p := newPlot(title, "T / K", yLabel)
	if logY {
		p.Y.Scale, p.Y.Tick.Marker = plot.LogScale{}, logTicks{}
	} else if zero, err := hline(0, tLo, tHi, guideGrey, false, 0.6); err == nil {
		p.Add(zero)
	}
	if logX {
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, logTicks{}
	}
	l, err := plotter.NewLine(decimate(xy, maxCurvePoints, logX))
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	l.LineStyle.Color, l.LineStyle.Width = okVermillion, 1.4
	p.Add(l)
	svg, err := render(p, figWidth, figHeight*0.85)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	return fig
}

// widthFigure plots the relative 2σ of Q, Cp° and S° against T on a log scale.
func widthFigure(th *thermoTable) *figure {
	fig := &figure{Name: "report-thermo-sigma.svg", Alt: "relative 2σ of Q, Cp° and S° against temperature",
		Caption: "Relative width 2σ/value of Q, Cp° and S° against T (log scale): where the uncertainty inherited from the fit grows, and (Cp° total) where the model part of the budget takes over."}
	T := th.get("T_K")
	// Lines for the linear σ, solid or clearly dashed; Monte Carlo σ as
	// markers on the line of its linear σ, so no two series share a pattern.
	series := []struct {
		key, sig, label string
		st              seriesStyle
		dash            []vg.Length
		width           vg.Length
	}{
		{"Q", "Q_sigma", "Q", seriesStyle{color: okBlue}, nil, 1.4},
		{"Cp", "Cp_sigma", "Cp°", seriesStyle{color: okBlack}, []vg.Length{vg.Points(7), vg.Points(3)}, 1.3},
		{"S", "S_sigma", "S°", seriesStyle{color: okBluishGreen}, []vg.Length{vg.Points(2), vg.Points(2.5)}, 1.6},
		{"Cp", "Cp_sigma_total", "Cp° total", seriesStyle{color: okVermillion}, []vg.Length{vg.Points(9), vg.Points(2.5), vg.Points(2), vg.Points(2.5)}, 1.6},
		{"Q", "Q_sigma_mc", "Q (Monte Carlo)", seriesStyle{okBlue, draw.RingGlyph{}}, nil, 0},
		{"Cp", "Cp_sigma_mc", "Cp° (Monte Carlo)", seriesStyle{okBlack, draw.SquareGlyph{}}, nil, 0},
	}
	p := newPlot("Relative uncertainty 2σ/value (log scale)", "T / K", "")
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = logTicks{}
	drawn := 0
	yMin, yMax := math.Inf(1), math.Inf(-1)
	for _, sr := range series {
		v, s := th.get(sr.key), th.get(sr.sig)
		if v == nil || s == nil {
			continue
		}
		var c xyCollector
		for i := range T {
			if r := 2 * s[i] / math.Abs(v[i]); r > 0 && finite(r) {
				c.add(T[i], r)
				yMin, yMax = math.Min(yMin, r), math.Max(yMax, r)
			}
		}
		if !distinctX(c.xy) {
			continue
		}
		if sr.st.shape != nil {
			sc, err := scatter(decimate(c.xy, 24, false), sr.st, 2.2)
			if err != nil {
				continue
			}
			p.Add(sc)
			p.Legend.Add(sr.label, sc)
			drawn++
			continue
		}
		l, err := plotter.NewLine(decimate(c.xy, maxCurvePoints, false))
		if err != nil {
			continue
		}
		l.LineStyle.Color, l.LineStyle.Width, l.LineStyle.Dashes = sr.st.color, sr.width, sr.dash
		p.Add(l)
		p.Legend.Add(sr.label, l)
		drawn++
	}
	if drawn == 0 {
		fig.Missing = "Not plotted: thermo.csv has no positive σ at two or more temperatures."
		return fig
	}
	// Whole decades, so that a labelled tick stands at each end and no curve
	// runs along the frame.
	p.Y.Min, p.Y.Max = math.Pow(10, math.Floor(math.Log10(yMin))), math.Pow(10, math.Ceil(math.Log10(yMax)))
	if p.Y.Max <= yMax*(1+1e-9) {
		p.Y.Max *= 10
	}
	svg, err := render(p, figWidth, figHeight*0.85)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	return fig
}

// thermoSpecies returns the isotopologue thermo.csv is for, from its first
// comment line ("" when the file does not say).
func thermoSpecies(th *thermoTable) string {
	for _, c := range th.comments {
		if sp, ok := strings.CutPrefix(c, constants.ThermoHeading); ok {
			return strings.TrimSpace(sp)
		}
	}
	return ""
}
