package report

import (
	"image/color"
	"math"
	"sort"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"bandwright/constants"
)

// thermoSection shows the thermodynamic table: an excerpt, Q(T) and Cp°(T)
// with ±2σ bands, and the closed-form comparison.
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
	s.para("thermo.csv holds %d temperatures from %s K to %s K; below, an excerpt with 1σ in parentheses (the file has every row). Its conventions (energy zero, nuclear spin, standard pressure) are listed under Conventions.", th.n, num(tMin, 6), num(tMax, 6))
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
	type col struct{ key, sig, head string }
	cols := []col{
		{"Q", "Q_sigma", "Q"},
		{"Cp", "Cp_sigma", "Cp° / J mol⁻¹ K⁻¹"},
		{"S", "S_sigma", "S° / J mol⁻¹ K⁻¹"},
		{"H_minus_H0", "H_minus_H0_sigma", "H°(T) − H°(0) / kJ mol⁻¹"},
		{"H_minus_H298", "H_minus_H298_sigma", "H°(T) − H°(298.15 K) / kJ mol⁻¹"},
		{"gef", "gef_sigma", "−[G°(T) − H°(298.15 K)]/T / J mol⁻¹ K⁻¹"},
		{"Q_closed_form", "", "Q, closed form"},
		{"Q_closed_form_error", "", "closed-form error (as in thermo.csv)"},
	}
	// Two tables of at most four quantities each, so that an excerpt fits the
	// width of a printed page.
	var present []col
	for _, c := range cols {
		if th.get(c.key) != nil {
			present = append(present, c)
		}
	}
	for part := 0; part*4 < len(present); part++ {
		cs := present[part*4 : min(len(present), part*4+4)]
		caption := "Excerpt of thermo.csv."
		if len(present) > 4 {
			caption = sprintf("Excerpt of thermo.csv, part %d of %d.", part+1, (len(present)+3)/4)
		}
		t := &table{Caption: caption, Head: []string{"T / K"}, Numeric: []bool{true}}
		for _, c := range cs {
			t.Head = append(t.Head, c.head)
			t.Numeric = append(t.Numeric, true)
		}
		for _, i := range rows {
			row := []string{num(T[i], 8)}
			for _, c := range cs {
				v := th.get(c.key)[i]
				switch {
				case c.sig != "" && th.get(c.sig) != nil:
					row = append(row, paren(v, th.get(c.sig)[i]))
				case c.key == "Q_closed_form_error":
					row = append(row, num(v, 3))
				default:
					row = append(row, num(v, 8))
				}
			}
			t.Rows = append(t.Rows, row)
		}
		d.table(s, t)
	}
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
	d.figure(s, bandPlot(T, th.get("Q"), th.get("Q_sigma"), th.get("Q_closed_form"),
		"report-thermo-q.svg", "Partition function", "Q", "Q(T), internal partition function", "level sum"))
	d.figure(s, bandPlot(T, th.get("Cp"), th.get("Cp_sigma"), nil,
		"report-thermo-cp.svg", "Heat capacity", "Cp° / J mol⁻¹ K⁻¹", "Cp°(T), ideal gas at the standard pressure", "Cp°"))
	if th.get("Q_closed_form") != nil {
		d.figure(s, closedFormFigure(T, th.get("Q"), th.get("Q_closed_form")))
	}
	d.figure(s, widthFigure(th))
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

// bandPlot draws y(T) with a ±2σ band and, when cf is given, the closed form.
func bandPlot(T, y, sig, cf []float64, name, title, yLabel, what, curve string) *figure {
	fig := &figure{Name: name, Alt: what + " with its ±2σ band"}
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
	widest := 0.0
	if sig != nil {
		lo := make([]float64, len(T))
		hi := make([]float64, len(T))
		var bx []float64
		k := max(1, len(T)/maxCurvePoints)
		var blo, bhi []float64
		for i := range T {
			lo[i], hi[i] = y[i]-2*sig[i], y[i]+2*sig[i]
			if finite(sig[i]) && finite(y[i]) && y[i] != 0 {
				widest = math.Max(widest, 2*sig[i]/math.Abs(y[i]))
			}
			if i%k == 0 || i == len(T)-1 {
				bx, blo, bhi = append(bx, T[i]), append(blo, lo[i]), append(bhi, hi[i])
			}
		}
		if band, err := fillBand(bx, blo, bhi, withAlpha(okSkyBlue, 0x80)); err == nil {
			p.Add(band)
			p.Legend.Add("±2σ", band)
		}
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
	if sig != nil {
		fig.Caption += sprintf(" The shaded band is ±2σ; at its widest it spans ±%s of the value, so it may be thinner than the line.", relPercent(widest))
	}
	return fig
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
		Caption: "Relative width 2σ/value of Q, Cp° and S° against T (log scale): where the uncertainty inherited from the fit grows."}
	T := th.get("T_K")
	series := []struct {
		key, sig, label string
		st              seriesStyle
		dash            []vg.Length
	}{
		{"Q", "Q_sigma", "Q", seriesStyle{color: okBlue}, nil},
		{"Cp", "Cp_sigma", "Cp°", seriesStyle{color: okOrange}, []vg.Length{vg.Points(6), vg.Points(3)}},
		{"S", "S_sigma", "S°", seriesStyle{color: okBluishGreen}, []vg.Length{vg.Points(2), vg.Points(2)}},
		{"Q", "Q_sigma_mc", "Q (Monte Carlo)", seriesStyle{color: okReddishPurple}, []vg.Length{vg.Points(1), vg.Points(3)}},
		{"Cp", "Cp_sigma_mc", "Cp° (Monte Carlo)", seriesStyle{color: okBlack}, []vg.Length{vg.Points(8), vg.Points(2), vg.Points(2), vg.Points(2)}},
	}
	p := newPlot("Relative uncertainty 2σ/value (log scale)", "T / K", "")
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = logTicks{}
	drawn := 0
	for _, sr := range series {
		v, s := th.get(sr.key), th.get(sr.sig)
		if v == nil || s == nil {
			continue
		}
		var c xyCollector
		for i := range T {
			if r := 2 * s[i] / math.Abs(v[i]); r > 0 {
				c.add(T[i], r)
			}
		}
		if !distinctX(c.xy) {
			continue
		}
		l, err := plotter.NewLine(decimate(c.xy, maxCurvePoints, false))
		if err != nil {
			continue
		}
		l.LineStyle.Color, l.LineStyle.Width, l.LineStyle.Dashes = sr.st.color, 1.3, sr.dash
		p.Add(l)
		p.Legend.Add(sr.label, l)
		drawn++
	}
	if drawn == 0 {
		fig.Missing = "Not plotted: thermo.csv has no positive σ at two or more temperatures."
		return fig
	}
	svg, err := render(p, figWidth, figHeight*0.85)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
		return fig
	}
	fig.SVG = svg
	return fig
}
