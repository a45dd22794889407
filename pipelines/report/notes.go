package report

import (
	"encoding/json"
	"sort"
	"strconv"
	"strings"
	"time"
)

// conventions states the conventions behind every number of the report.
func conventions(d *document, f *folder) {
	rec := f.record
	s := d.section("conventions", "Conventions")
	unit := "Line positions, constants and residuals in cm⁻¹"
	if u := rec.ShownIn(); u.IsFrequency() {
		unit = "Line positions and residuals in " + u.String() + "; each constant in the largest of " + u.String() + ", kHz, Hz in which it is at least 1 (constants.json keeps cm⁻¹)"
	}
	items := []string{
		unit + "; 1 cm⁻¹ = 29 979.2458 MHz exactly.",
		"Uncertainties are 1σ, written in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003; 6.1215(12)×10⁻⁶ means (6.1215 ± 0.0012)×10⁻⁶. A bare σ is always a standard uncertainty. The files keep the plain spellings (6.1215(12)e-06, cm-1, omega_e_x_e).",
		"Covariance and σ of the constants: " + rec.CovarianceConvention + ".",
		"o − c is observed minus calculated, in the unit of residuals.csv; unc is the 1σ uncertainty the line list gives for a position, and (o − c)/unc, the quantity of every o − c figure, divides the residual by it.",
		"Names of constants as the trade writes them (ωe = omega_e, ωexe = omega_e_x_e, Be, αe, Y10 …, Bv of level v, an electronic state's label before a colon), each beside its name in constants.json; σ_sym is the rotational symmetry number (1 for heteronuclear, 2 for homonuclear molecules).",
		"Quantum numbers: v′, J′ of the upper level, v″, J″ of the lower; branches O, P, Q, R, S for ΔJ = J′ − J″ = −2 … +2.",
	}
	if f.thermo != nil {
		items = append(items, "Thermodynamic functions: ideal gas, per mole; their values are given as value(σ_total), rounded to σ_total = √(σ² + σ_model²), with the statistical σ of the fit beside them; the shaded bands of their figures are ±2σ of the fit (inner) and ±2σ_total (outer).")
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
		"Thermodynamic data used for safety or process design: these numbers are only as good as the model behind them; use reviewed reference data, and defer to local codes and licensed engineering practice. σ_total adds to the statistical σ of the fit a model part for what the lines did not observe (named alternatives, listed per temperature in thermo.json); errors of the calibration of the spectrum are in neither.",
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
		t := &table{Caption: "Line lists the fit read, with their SHA-256.", Head: []string{"input", "SHA-256"}, Wrap: []bool{false, true}}
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
		s.para("Options of the fit:")
		var items []item
		for _, k := range keys {
			items = append(items, optionItem(k, pv.Options[k]))
		}
		s.nested(items)
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

// optionItem writes an option of the fit as a list item: "name: value", a
// list of values (the log of the automatic model choice, say) as a list
// under it, an object as "key: value" lines under it.
func optionItem(k string, v any) item {
	switch x := v.(type) {
	case []any:
		it := item{Text: k + ":"}
		for _, e := range x {
			it.Sub = append(it.Sub, strings.TrimSpace(optionValue(e)))
		}
		if len(it.Sub) == 0 {
			it.Text = k + ": none"
		}
		return it
	case map[string]any:
		it := item{Text: k + ":"}
		var keys []string
		for kk := range x {
			keys = append(keys, kk)
		}
		sort.Strings(keys)
		for _, kk := range keys {
			it.Sub = append(it.Sub, kk+": "+optionValue(x[kk]))
		}
		return it
	}
	return item{Text: k + ": " + optionValue(v)}
}

// optionValue writes an option's value as text (JSON for nested values,
// without HTML escapes: the writers escape).
func optionValue(v any) string {
	switch x := v.(type) {
	case string:
		return x
	case nil:
		return dash
	case bool:
		return strconv.FormatBool(x)
	case float64:
		return num(x, 10)
	}
	var b strings.Builder
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return sprintf("%v", v)
	}
	return strings.TrimSpace(b.String())
}
