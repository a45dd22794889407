package report

import (
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

func sprintf(format string, a ...any) string { return fmt.Sprintf(format, a...) }

// buildDocument lays out the report of one folder.
func buildDocument(f *folder, o Options) *document {
	rec := f.record
	d := &document{Title: o.Title}
	if d.Title == "" {
		d.Title = "bandwright report — " + strings.Join(rec.Species, ", ")
	}
	d.Lead = sprintf("%s fit of %s · status %s · report built %s", modelName(rec.Model), strings.Join(rec.Species, ", "), rec.Status, o.Now().UTC().Format("2006-01-02 15:04 MST"))
	for _, sf := range stageFiles {
		var names []string
		for _, n := range sf.files {
			if f.has(n) {
				names = append(names, n)
			}
		}
		d.Stages = append(d.Stages, stage{Name: sf.stage, Present: len(names) > 0, Files: strings.Join(names, ", ")})
	}
	glance(d, f)
	constantsSection(d, f)
	if f.residuals != nil {
		residualSection(d, f)
		positionSection(d, f)
	}
	correlations(d, f)
	if f.thermo != nil {
		thermoSection(d, f)
	}
	if f.assignMD != nil || f.lines != nil || f.linesErr != "" || f.unassign != nil {
		assignSection(d, f)
	}
	conventions(d, f)
	cautions(d, f)
	provenance(d, f, o)
	return d
}

func modelName(kind string) string {
	switch kind {
	case model.KindDunham:
		return "Dunham expansion"
	case model.KindTermValues:
		return "Term values (T_v and rotational constants per vibrational level)"
	}
	return kind
}

// glance is the summary: what was fitted, how well, and what to look at.
func glance(d *document, f *folder) {
	rec := f.record
	s := d.section("glance", "At a glance")
	sp := "Species: " + strings.Join(rec.Species, ", ")
	if rec.ReferenceSpecies != "" && len(rec.Species) > 1 {
		sp += " (reference isotopologue " + rec.ReferenceSpecies + ")"
	}
	s.para("%s. Model: %s. Fit status: %s.", sp, modelName(rec.Model), rec.Status)
	st := rec.Stats
	rows := [][]string{
		{"lines given", strconv.Itoa(st.Lines)},
		{"lines used", strconv.Itoa(st.Used)},
		{"lines rejected", strconv.Itoa(st.Rejected)},
		{"parameters fitted", strconv.Itoa(st.Params)},
		{"degrees of freedom", strconv.Itoa(st.DOF)},
		{"χ²", num(st.Chi2, 6)},
		{"dimensionless standard deviation s", num(st.Sigma, 4)},
		{"rms of o−c (cm⁻¹)", num(st.RMSCm, 4)},
	}
	if st.LinesMHz > 0 {
		rows = append(rows, []string{"rms of o−c of the MHz lines (MHz)", num(st.RMSMHz, 4)})
	}
	rows = append(rows, []string{"condition number (scaled design matrix)", num(st.Condition, 3)})
	if st.Iter > 0 {
		rows = append(rows, []string{"iterations", strconv.Itoa(st.Iter)})
	}
	d.table(s, &table{Caption: "Fit statistics.", Head: []string{"quantity", "value"}, Numeric: []bool{false, true}, Rows: rows})
	if len(rec.Bands) > 0 {
		t := &table{Caption: "Bands among the lines used (v′ = v″: pure rotation).", Head: []string{"species", "band v′–v″", "lines used", "J range"}, Numeric: []bool{false, false, true, false}}
		for _, b := range rec.Bands {
			t.Rows = append(t.Rows, []string{b.Species, linelist.BandLabel(b.VUp, b.VLo), strconv.Itoa(b.Lines), sprintf("%d–%d", b.JMin, b.JMax)})
		}
		d.table(s, t)
	}
	if len(rec.Observed) > 0 {
		var lv []string
		for _, l := range rec.Observed {
			lv = append(lv, sprintf("%s v=%d up to J=%d", l.Species, l.V, l.JMax))
		}
		s.para("Levels reached by the lines used (beyond them every calculated level is an extrapolation): %s.", strings.Join(lv, "; "))
	}
	if len(rec.Warnings) == 0 {
		s.para("The fit gave no warnings.")
	} else {
		s.para("Warnings of the fit:")
		s.list(rec.Warnings)
	}
	var missing []string
	if f.residuals == nil {
		missing = append(missing, "residuals.csv (fit stage): the residual and position sections are left out.")
	}
	if f.thermo == nil {
		if f.has(constants.ThermoJSONFile) || f.has(constants.NASA7File) {
			missing = append(missing, "thermo.csv (thermo stage; thermo.json or nasa7.json is present, but the section is built from thermo.csv): the thermodynamic section is left out.")
		} else {
			missing = append(missing, "thermo.csv (thermo stage): the thermodynamic section is left out.")
		}
	}
	if f.assignMD == nil && f.lines == nil && f.linesErr == "" && f.unassign == nil {
		missing = append(missing, "assign.md, lines.csv, unassigned.csv (assign stage): the assignment section is left out.")
	}
	if len(missing) > 0 {
		s.para("Not in this folder:")
		s.list(missing)
	}
}

// constantsSection lists the fitted and derived constants.
func constantsSection(d *document, f *folder) {
	rec := f.record
	s := d.section("constants", "Constants")
	s.para("Values in %s with their 1σ in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003. σ and the covariance are %s.", unitName(rec.Unit), rec.CovarianceConvention)
	t := &table{Caption: "Fitted and fixed parameters.", Head: []string{"parameter", "level or indices", "applies to", "value (1σ)", "unit", "role"}, Numeric: []bool{false, false, false, true, false, false}}
	for _, p := range rec.Parameters {
		idx, to, unit, role := "", p.Species, unitName(rec.Unit), "fitted"
		switch {
		case p.V != nil:
			idx = sprintf("v = %d", *p.V)
		case p.K != nil && p.L != nil:
			idx = sprintf("k = %d, l = %d", *p.K, *p.L)
		}
		if p.Element != "" {
			to = "element " + p.Element + " (Born–Oppenheimer breakdown)"
		}
		if p.Fixed {
			role = "fixed"
		}
		name := p.ID()
		if p.Name == "kappa" {
			to, unit = p.File, "1"
			if p.Fixed {
				role = "reference file (κ = 0)"
			} else {
				role = "calibration factor, fitted"
			}
		}
		t.Rows = append(t.Rows, []string{name, idx, to, paren(p.Value, p.Sigma), unit, role})
	}
	d.table(s, t)
	if r := rec.Rounding; r != nil {
		s.para("The values were rounded one after another (sequential rounding and refitting, Le Roy 1998, with rounding units from Watson's parameter sensitivity, 1977); χ² %s before rounding and %s after. σ are those of the unrounded fit.", num(r.Chi2Before, 7), num(r.Chi2After, 7))
		rt := &table{Caption: "Rounding, in the order it was done.", Head: []string{"parameter", "unrounded", "rounded", "rounding unit", "conditional σ"}, Numeric: []bool{false, true, true, true, true}}
		for _, st := range r.Steps {
			rt.Rows = append(rt.Rows, []string{st.Param, num(st.Unrounded, 12), num(st.Rounded, 12), num(st.Unit, 3), num(st.CondSigma, 3)})
		}
		d.table(s, rt)
	}
	if len(rec.Derived) > 0 {
		dt := &table{Caption: "Derived constants, σ propagated through the full covariance (σ² = gᵀCg).", Head: []string{"constant", "species", "value (1σ)", "unit", "how"}, Numeric: []bool{false, false, true, false, false}}
		for _, x := range rec.Derived {
			dt.Rows = append(dt.Rows, []string{x.Name, x.Species, paren(x.Value, x.Sigma), unitName(x.Unit), x.Note})
		}
		d.table(s, dt)
	} else {
		s.para("The fit derived no further constants.")
	}
}

func unitName(u string) string {
	switch u {
	case "":
		return "cm⁻¹"
	case "angstrom":
		return "Å"
	}
	return strings.ReplaceAll(u, "cm-1", "cm⁻¹")
}

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
		Caption: sprintf("Correlation matrix of the %d fitted parameters (row i, column j), from −1 (blue) through 0 (white) to +1 (vermillion).", n)}
	p := newBarePlot("Correlation of the fitted parameters", "", "")
	p.Add(&corrHeat{r: rec.Correlation, labels: n <= 12, style: cellStyle(p, n)})
	p.NominalX(names...)
	rev := make([]string, n)
	for i := range names {
		rev[n-1-i] = names[i]
	}
	p.NominalY(rev...)
	p.X.Tick.Label.Rotation = math.Pi / 2
	p.X.Tick.Label.XAlign = draw.XRight
	p.X.Tick.Label.YAlign = draw.YCenter
	side := vg.Length(math.Min(7.2, 2.6+0.42*float64(n))) * vg.Inch
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
		t := &table{Caption: "Correlation matrix.", Head: append([]string{""}, names...)}
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

// conventions states the conventions behind every number of the report.
func conventions(d *document, f *folder) {
	rec := f.record
	s := d.section("conventions", "Conventions")
	items := []string{
		"Line positions, constants and residuals in cm⁻¹ unless a line list gives MHz; 1 cm⁻¹ = 29 979.2458 MHz exactly.",
		"Uncertainties are 1σ. Parenthetical notation: 1.922529(3) means 1.922529 ± 0.000003; 6.1215(12)e-06 means (6.1215 ± 0.0012)×10⁻⁶.",
		"Covariance and σ of the constants: " + rec.CovarianceConvention + ".",
		"o − c is observed minus calculated, in each line's own unit; (o − c)/σ divides by the line's stated uncertainty.",
		"Quantum numbers: v′, J′ of the upper level, v″, J″ of the lower; branches O, P, Q, R, S for ΔJ = J′ − J″ = −2 … +2.",
	}
	if f.thermo != nil {
		items = append(items, "Thermodynamic functions: ideal gas, per mole; the shaded bands of their figures are ±2σ.")
	}
	items = append(items, "Colours: "+paletteName+"; every series also has its own glyph or dash pattern.", "Times are UTC.")
	s.list(items)
	if f.thermo != nil {
		if len(f.thermo.comments) > 0 {
			s.para("thermo.csv states:")
			s.list(f.thermo.comments)
		} else {
			s.para("thermo.csv states no conventions in comment lines; read them from the thermo stage's other files before using its numbers.")
		}
	}
}

// cautions holds the safety notes and the limits of the numbers.
func cautions(d *document, f *folder) {
	s := d.section("cautions", "Cautions")
	items := []string{
		"Gas cells: many diatomic gases measured this way are toxic, corrosive or both (carbon monoxide, hydrogen halides, nitric oxide, halogens). Fill, vent and leak-test cells following your laboratory's safety rules, with ventilation and gas detection where they call for it.",
		"Thermodynamic data used for safety or process design: verify them against evaluated reference data first, and defer to local codes and licensed engineering practice. The σ here carry only the statistical uncertainty of the fit, not errors of the model or of the calibration.",
		"Extrapolation: the constants describe the levels the lines reach (listed under At a glance). Predicted lines, partition functions and thermodynamic functions that rest on higher levels are extrapolations, more so the higher the temperature.",
	}
	if n := len(f.record.Warnings); n > 0 {
		items = append(items, sprintf("The fit gave %d warning(s), listed under At a glance; read them before using the constants.", n))
	}
	s.list(items)
}

// provenance lists the inputs, the options and the files of the folder.
func provenance(d *document, f *folder, o Options) {
	rec := f.record
	pv := rec.Provenance
	s := d.section("provenance", "Provenance")
	if len(pv.Inputs) > 0 {
		t := &table{Caption: "Line lists the fit read, with their SHA-256.", Head: []string{"input", "SHA-256"}, Wrap: []bool{true, true}}
		for _, in := range pv.Inputs {
			t.Rows = append(t.Rows, []string{in.Path, in.SHA256})
		}
		d.table(s, t)
	}
	s.para("constants.json was written by bandwright %s at %s (schema %s).", orDefault(pv.Version, "(version not recorded)"), orDefault(pv.Created, "(time not recorded)"), rec.Schema)
	if len(pv.Options) > 0 {
		var keys []string
		for k := range pv.Options {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		t := &table{Caption: "Options of the fit.", Head: []string{"option", "value"}, Wrap: []bool{false, true}}
		for _, k := range keys {
			t.Rows = append(t.Rows, []string{k, optionValue(pv.Options[k])})
		}
		d.table(s, t)
	}
	t := &table{Caption: "Files of this folder the report was built from.", Head: []string{"stage", "file", "bytes", "SHA-256"}, Numeric: []bool{false, false, true, false}, Wrap: []bool{false, false, false, true}}
	for _, fi := range f.files {
		t.Rows = append(t.Rows, []string{fi.stage, fi.name, strconv.FormatInt(fi.size, 10), fi.sha256})
	}
	d.table(s, t)
	if len(o.Notes) > 0 {
		s.para("Run notes:")
		s.list(o.Notes)
	}
	ver := o.Version
	if ver == "" {
		ver = "(version not given)"
	}
	s.para("This report was built by bandwright %s at %s.", ver, o.Now().UTC().Format(time.RFC3339))
}

func optionValue(v any) string {
	switch x := v.(type) {
	case string:
		return x
	case nil:
		return dash
	case float64:
		return num(x, 10)
	}
	b, err := json.Marshal(v)
	if err != nil {
		return sprintf("%v", v)
	}
	return string(b)
}
