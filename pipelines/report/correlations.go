package report

import (
	"image/color"
	"math"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandwright/internal/svgfig"
)

// correlations shows the correlation matrix of the fitted parameters.
func correlations(d *document, f *folder) {
	rec := f.record
	s := d.section("correlations", "Parameter correlations")
	var names []string
	for _, p := range rec.Parameters {
		if !p.Fixed {
			names = append(names, p.ID())
		}
	}
	n := len(names)
	if n != len(rec.Correlation) {
		s.para("constants.json holds a correlation matrix of %d rows for %d fitted parameters; it is not shown.", len(rec.Correlation), n)
		return
	}
	if n < 2 {
		s.para("Only %d parameter was fitted: there is no correlation to show.", n)
		return
	}
	s.para("Correlation coefficients ρ_ij = C_ij/(σ_i σ_j) of the %d fitted parameters, from the covariance in constants.json. Blue is negative, vermillion positive; |ρ| close to 1 means the data hardly tell the two parameters apart.", n)
	fig := &figure{Name: "report-correlation.svg", Alt: "correlation matrix of the fitted parameters as a heat map",
		Caption: sprintf("Correlation matrix of the %d fitted parameters (row i, column j), from −1 (blue) through 0 (white) to +1 (vermillion).", n), Square: true}
	p := newBarePlot("Correlation of the fitted parameters", "", "")
	p.Add(&corrHeat{r: rec.Correlation, labels: n <= maxLabelledCells, style: cellStyle(p, n)})
	p.NominalX(names...)
	rev := make([]string, n)
	for i := range names {
		rev[n-1-i] = names[i]
	}
	p.NominalY(rev...)
	p.X.Tick.Label.Rotation = math.Pi / 2
	p.X.Tick.Label.XAlign = draw.XRight
	p.X.Tick.Label.YAlign = draw.YCenter
	side := vg.Length(math.Min(6, 2.2+0.36*float64(n))) * vg.Inch
	svg, err := render(p, side+0.8*vg.Inch, side)
	if err != nil {
		fig.Missing = "Not plotted: " + err.Error()
	} else {
		fig.SVG = svg
	}
	d.figure(s, fig)
	type pair struct {
		a, b int
		r    float64
	}
	var strong []pair
	for i := range n {
		for j := i + 1; j < n; j++ {
			if r := rec.Correlation[i][j]; finite(r) && math.Abs(r) >= 0.95 {
				strong = append(strong, pair{i, j, r})
			}
		}
	}
	sort.SliceStable(strong, func(a, b int) bool { return math.Abs(strong[a].r) > math.Abs(strong[b].r) })
	if len(strong) == 0 {
		s.para("No pair of fitted parameters has |ρ| ≥ 0.95.")
	} else {
		var items []string
		for _, q := range strong[:min(len(strong), 20)] {
			items = append(items, sprintf("%s and %s: ρ = %s", names[q.a], names[q.b], fixed(q.r, 4)))
		}
		if len(strong) > 20 {
			items = append(items, sprintf("and %d more pairs", len(strong)-20))
		}
		s.para("Pairs with |ρ| ≥ 0.95:")
		s.list(items)
	}
	if n <= 16 {
		t := &table{Caption: "Correlation matrix.", Head: append([]string{"ρ"}, names...), Kind: []cellKind{cellName}}
		t.Numeric = make([]bool, n+1)
		for j := 1; j <= n; j++ {
			t.Numeric[j] = true
		}
		for i := range n {
			row := []string{names[i]}
			for j := range n {
				row = append(row, fixed(rec.Correlation[i][j], 3))
			}
			t.Rows = append(t.Rows, row)
		}
		d.table(s, t)
	} else {
		s.para("The matrix has %d rows; its numbers are in constants.json (correlation).", n)
	}
}

// corrHeat draws a correlation matrix as coloured cells, row 0 at the top,
// with the value written in each cell when the matrix is small, and a colour
// key to the right of the matrix.
type corrHeat struct {
	r      [][]float64
	labels bool
	style  text.Style
}

// diverging maps ρ ∈ [−1, 1] to Okabe–Ito blue (−1) through white (0) to
// vermillion (+1), linear in sRGB.
func diverging(rho float64) color.Color {
	if !finite(rho) {
		return color.RGBA{0xbb, 0xbb, 0xbb, 0xff}
	}
	rho = math.Max(-1, math.Min(1, rho))
	end := okVermillion
	if rho < 0 {
		end, rho = okBlue, -rho
	}
	mix := func(a uint8) uint8 { return uint8(math.Round(255 + (float64(a)-255)*rho)) }
	return color.RGBA{mix(end.R), mix(end.G), mix(end.B), 0xff}
}

func (h *corrHeat) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	n := len(h.r)
	rect := func(x0, x1, y0, y1 float64) []vg.Point {
		return []vg.Point{{X: trX(x0), Y: trY(y0)}, {X: trX(x1), Y: trY(y0)}, {X: trX(x1), Y: trY(y1)}, {X: trX(x0), Y: trY(y1)}}
	}
	for i := range n {
		for j := range n {
			v := h.r[i][j]
			y := float64(n - 1 - i)
			col := diverging(v)
			c.FillPolygon(col, rect(float64(j)-0.5, float64(j)+0.5, y-0.5, y+0.5))
			if h.labels && finite(v) {
				st := h.style
				st.Color = okBlack
				if svgfig.Luminance(col) < 0.3 {
					st.Color = color.White
				}
				c.FillText(st, vg.Point{X: trX(float64(j)), Y: trY(y)}, fixed(v, 2))
			}
		}
	}
	// Colour key: ρ from −1 (bottom) to +1 (top).
	x0, x1 := float64(n)-0.5+0.35, float64(n)-0.5+0.75
	const strips = 40
	lo, hi := -0.5, float64(n)-0.5
	for k := range strips {
		// Strips overlap a little so that no seam shows between them.
		y0 := lo + (hi-lo)*float64(k)/strips
		y1 := math.Min(hi, lo+(hi-lo)*(float64(k+1)+0.3)/strips)
		rho := -1 + 2*(float64(k)+0.5)/strips
		c.FillPolygon(diverging(rho), rect(x0, x1, y0, y1))
	}
	st := h.style
	st.Color = okBlack
	st.XAlign = draw.XLeft
	for _, m := range []struct {
		rho float64
		s   string
	}{{-1, "−1"}, {0, "0"}, {1, "+1"}} {
		y := lo + (hi-lo)*(m.rho+1)/2
		c.FillText(st, vg.Point{X: trX(x1) + 3, Y: trY(y)}, m.s)
	}
}

func (h *corrHeat) DataRange() (xmin, xmax, ymin, ymax float64) {
	n := float64(len(h.r))
	return -0.5, n + 0.9, -0.5, n - 0.5
}

// maxLabelledCells is the largest matrix whose cells carry their value: at
// 10.5 pt they stay at 9 px or more on a phone (the table below the figure
// has the values of matrices up to 16 rows).
const maxLabelledCells = 8

// cellStyle is the text style of the values written in correlation cells.
func cellStyle(p *plot.Plot, n int) text.Style {
	size := vg.Length(10.5)
	if n > 6 {
		size = 9.5
	}
	return text.Style{Color: okBlack, Font: font.From(sansFont, size), XAlign: draw.XCenter, YAlign: draw.YCenter, Handler: p.TextHandler}
}
