package report

import (
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/states"
	"bandwright/internal/typeset"
)

// buildDocument lays out the report of one folder.
func buildDocument(f *folder, o Options) *document {
	rec := f.record
	d := &document{Title: o.Title}
	if d.Title == "" {
		d.Title = "bandwright report — " + strings.Join(rec.Species, ", ")
	}
	d.Lead = sprintf("%s fit of %s · status %s · report built %s", modelName(rec.Model), strings.Join(rec.Species, ", "), rec.Status, o.Now().UTC().Format("2006-01-02 15:04 MST"))
	d.Flag, d.Alert = o.Flag, o.Alert
	input := o.Input
	if input == "" {
		var names []string
		for _, in := range rec.Provenance.Inputs {
			names = append(names, filepath.Base(in.Path))
		}
		input = strings.Join(names, ", ")
	}
	d.Running = strings.Join(nonEmpty(d.Title, input, o.Now().UTC().Format("2006-01-02")), " · ")
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

// nonEmpty returns the strings that are not empty.
func nonEmpty(ss ...string) []string {
	var out []string
	for _, s := range ss {
		if s != "" {
			out = append(out, s)
		}
	}
	return out
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
		{"rms of o−c (" + rec.ShownIn().Pretty() + ")", num(rec.RMS(), 4)},
	}
	if st.LinesMHz > 0 && st.LinesMHz < st.Used && !rec.ShownIn().IsFrequency() {
		rows = append(rows, []string{"rms of o−c of the MHz lines (MHz)", num(st.RMSMHz, 4)})
	}
	rows = append(rows, []string{"condition number (scaled design matrix)", num(st.Condition, 3)})
	if st.Iter > 0 {
		rows = append(rows, []string{"iterations", strconv.Itoa(st.Iter)})
	}
	d.table(s, &table{Caption: "Fit statistics.", Head: []string{"quantity", "value"}, Numeric: []bool{false, true}, Rows: rows})
	if len(rec.Bands) > 0 {
		t := &table{Caption: "Bands among the lines used (v′ = v″: pure rotation).", Head: []string{"species", "band v′–v″", "lines used", "J range"}, Numeric: []bool{false, false, true, false}, Kind: []cellKind{cellSpecies}}
		for _, b := range rec.Bands {
			t.Rows = append(t.Rows, []string{b.Species, linelist.BandLabel(b.VUp, b.VLo), strconv.Itoa(b.Lines), jText(b.JMin, b.HalfJ) + "–" + jText(b.JMax, b.HalfJ)})
		}
		d.table(s, t)
	}
	if len(rec.Observed) > 0 {
		var lv []string
		for _, l := range rec.Observed {
			lv = append(lv, sprintf("%s v=%d up to J=%s", l.Species, l.V, jText(l.JMax, l.HalfJ)))
		}
		s.para("Levels reached by the lines used (beyond them every calculated level is an extrapolation): %s.", strings.Join(lv, "; "))
	}
	if len(rec.Warnings) == 0 {
		s.para("The fit gave no warnings.")
	} else {
		s.para("Warnings of the fit:")
		s.list(rec.Warnings)
	}
	if f.thermo != nil && f.thermo.n > 0 {
		thermoGlance(s, f.thermo)
	}
	if len(f.stale) > 0 {
		s.para("Stale stages — files of this folder made from other inputs than its constants.json:")
		s.list(f.stale)
	}
	var missing []string
	if f.residuals == nil {
		missing = append(missing, "residuals.csv (fit stage): the residual and position sections are left out.")
	}
	if f.thermo == nil && !f.staleThermo {
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
	units := unitName(rec.Unit)
	if u := rec.ShownIn(); u.IsFrequency() {
		units = fmt.Sprintf("%s, kHz or Hz (each constant in the largest in which it is at least 1; constants.json keeps %s)", u, unitName(rec.Unit))
	}
	s.para("Values in %s with their 1σ in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003, and 6.1215(12)×10⁻⁶ means (6.1215 ± 0.0012)×10⁻⁶. σ and the covariance are %s. Each constant is named as the trade writes it and, beside it, as constants.json and --fix name it.", units, rec.CovarianceConvention)
	t := &table{Caption: "Fitted and fixed parameters.", Head: []string{"constant", "name in the files", "applies to", "value (1σ)", "unit", "role"},
		Numeric: []bool{false, false, false, true, false, false}, Kind: []cellKind{cellName, cellText, cellSpecies, cellText, cellUnit}, HTMLOnly: []bool{true}}
	for _, p := range rec.Parameters {
		to, role := p.Species, "fitted"
		if p.Element != "" {
			to = "element " + p.Element + " (Born–Oppenheimer breakdown)"
		}
		if p.Fixed {
			role = "fixed"
		}
		if p.Unconnected {
			role = "held at 0: no line connects this level to the lowest (its energies are counted from its own J = 0)"
		}
		name := p.ID()
		text, unit := rec.ParamText(p)
		if p.Name == "kappa" {
			to = p.File
			if p.Fixed {
				role = "reference file (κ = 0)"
			} else {
				role = "calibration factor, fitted"
			}
		}
		t.Rows = append(t.Rows, []string{name, name, to, typeset.Number(text), unit, role})
	}
	d.table(s, t)
	if r := rec.Rounding; r != nil {
		s.para("The values were rounded one after another (sequential rounding and refitting, Le Roy 1998, with rounding units from Watson's parameter sensitivity, 1977); χ² %s before rounding and %s after. σ are those of the unrounded fit.", num(r.Chi2Before, 7), num(r.Chi2After, 7))
		rt := &table{Caption: "Rounding, in the order it was done (values of constants.json, " + unitName(rec.Unit) + ").", Head: []string{"constant", "unrounded", "rounded", "rounding unit", "conditional σ"}, Numeric: []bool{false, true, true, true, true}, Kind: []cellKind{cellName}}
		for _, st := range r.Steps {
			rt.Rows = append(rt.Rows, []string{st.Param, num(st.Unrounded, 12), num(st.Rounded, 12), num(st.Unit, 3), num(st.CondSigma, 3)})
		}
		d.table(s, rt)
	}
	if len(rec.Derived) > 0 {
		dt := &table{Caption: "Derived constants, σ propagated through the full covariance (σ² = gᵀCg), and their series truncation.", Head: []string{"constant", "name in the files", "species", "value (1σ)", "series truncation", "unit", "how"},
			Numeric: []bool{false, false, false, true, true, false, false}, Kind: []cellKind{cellName, cellText, cellSpecies, cellText, cellText, cellUnit}, HTMLOnly: []bool{true}}
		for _, x := range rec.Derived {
			text, unit := rec.DerivedText(x)
			dt.Rows = append(dt.Rows, []string{x.Name, x.Name, x.Species, typeset.Number(text), typeset.Number(rec.DerivedTruncationText(x)), unit, x.Note})
		}
		s.para("%s", constants.TruncationLegend)
		d.table(s, dt)
	} else {
		s.para("The fit derived no further constants.")
	}
}

// jText writes a J of a record's bands and levels: j, or j + ½ where the
// record flags half-integer J (states.FormatJ: "3", "3.5").
func jText(j int, half bool) string {
	if half {
		return states.FormatJ(2*j + 1)
	}
	return states.FormatJ(2 * j)
}
