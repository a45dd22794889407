package pipelines

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"bandwright/assign"
	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/failure"
	"bandwright/pipelines/outdir"
	"bandwright/thermo"
)

// AssignOptions are the options of `bandwright assign`.
type AssignOptions struct {
	Peaks string // peak list (CSV)
	// Exactly one of Start (a TOML start file) and Constants (a
	// constants.json of an earlier fit) gives the starting constants.
	Start     string
	Constants string
	Bands     []linelist.Band
	Spectrum  string // ir (default), raman, rotation
	// Temperature in K; 0 means assign.DefaultTemperature.
	Temperature float64
	// Tolerance: "" (default from the uncertainties), or a number with an
	// optional unit, "0.01", "0.01 cm-1", "0.3 MHz"; a bare number is in the
	// unit of the peak list (cm-1 when it mixes units).
	Tolerance string
	// Unc is the 1σ of peaks without one, with the same syntax as Tolerance;
	// "": the median of the given ones, or the fit's scatter when none has one.
	Unc string
	// Unit of peaks whose row gives none: "cm-1" (default) or "MHz".
	Unit string
	// Species restricts (or, for a Dunham constants record, extends) the
	// isotopologues looked for.
	Species []string
	Out     string
}

// AssignOutcome is what an assignment run produced.
type AssignOutcome struct {
	Result *assign.Result
	Record *constants.Record
	Out    string
}

// RunAssign reads the inputs, assigns, and writes lines.csv, unassigned.csv,
// constants.json and assign.md into o.Out atomically (nothing is written when
// anything fails).
func RunAssign(o AssignOptions) (*AssignOutcome, error) {
	oc, err := Assign(o)
	if err != nil {
		return nil, err
	}
	d, err := outdir.Begin(o.Out)
	if err != nil {
		return nil, err
	}
	defer d.Abort()
	d.Protect(o.Peaks)
	d.Protect(o.startFiles()...)
	if err := WriteAssignOutputs(d, oc, constants.ConstantsFile, o.reportInfo()); err != nil {
		return nil, err
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	oc.Out = o.Out
	return oc, nil
}

// WriteAssignOutputs writes the assignment stage's files into d: lines.csv,
// unassigned.csv, assign.md (recording info) and the constants record of the
// stage's internal fit as constantsFile (constants.ConstantsFile for `bandwright
// assign`, AssignConstantsFile inside a chain, whose constants.json is the
// fit stage's).
func WriteAssignOutputs(d *outdir.Dir, oc *AssignOutcome, constantsFile string, info assign.ReportInfo) error {
	if err := d.Write(constants.LinesFile, func(w io.Writer) error { return assign.WriteLines(w, oc.Result) }); err != nil {
		return err
	}
	if err := d.Write(constants.UnassignedFile, func(w io.Writer) error { return assign.WriteUnassigned(w, oc.Result) }); err != nil {
		return err
	}
	if err := d.Write(constantsFile, oc.Record.Write); err != nil {
		return err
	}
	return d.Write(constants.AssignReportFile, func(w io.Writer) error { return assign.WriteReport(w, oc.Result, info) })
}

// startFiles returns the file that gives the starting constants (Start or
// Constants), none when neither is set.
func (o AssignOptions) startFiles() []string {
	var fs []string
	for _, in := range []string{o.Start, o.Constants} {
		if in != "" {
			fs = append(fs, in)
		}
	}
	return fs
}

// reportInfo is what assign.md records of the run: the peak list, the file
// of the starting constants and the program version.
func (o AssignOptions) reportInfo() assign.ReportInfo {
	start := o.Start
	if start == "" {
		start = o.Constants
	}
	return assign.ReportInfo{Peaks: o.Peaks, Start: start, Version: Version}
}

// Assign reads the inputs and assigns without writing anything.
func Assign(o AssignOptions) (*AssignOutcome, error) {
	if o.Peaks == "" {
		return nil, failure.Errorf(failure.BadInput, "assign: no peak list given")
	}
	if (o.Start == "") == (o.Constants == "") {
		return nil, failure.Errorf(failure.BadInput, "assign: give the starting constants with either --start FILE.toml or --constants constants.json")
	}
	if len(o.Bands) == 0 {
		return nil, failure.Errorf(failure.BadInput, "assign: no bands given (--bands 1-0,2-1)")
	}
	spec, err := assign.ParseSpectrum(o.Spectrum)
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	defUnit := linelist.DefaultUnit
	if o.Unit != "" {
		if defUnit, err = linelist.ParseUnit(o.Unit); err != nil {
			return nil, failure.Errorf(failure.BadInput, "assign: --unit: %w", err)
		}
	}
	T := o.Temperature
	if T == 0 {
		T = assign.DefaultTemperature
	}
	if !(T > 0) || math.IsInf(T, 0) {
		return nil, failure.Errorf(failure.BadInput, "assign: --temperature must be > 0 K, got %g", T)
	}
	if T < thermo.MinTemperature || T > thermo.MaxTemperature {
		return nil, failure.Errorf(failure.BadInput, "assign: --temperature %g K is outside %g…%g K", T, thermo.MinTemperature, thermo.MaxTemperature)
	}
	inputs := []string{o.Peaks}
	var st *assign.Start
	if o.Start != "" {
		inputs = append(inputs, o.Start)
	} else {
		inputs = append(inputs, o.Constants)
	}
	hashes, err := HashFiles(inputs)
	if err != nil {
		return nil, err
	}
	pl, err := assign.ReadPeaksFile(o.Peaks, defUnit)
	if err != nil {
		return nil, err
	}
	if o.Start != "" {
		if st, err = assign.ReadStartFile(o.Start); err != nil {
			return nil, err
		}
		if err := st.Select(o.Species); err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
	} else {
		_, c, err := LoadConstants(o.Constants)
		if err != nil {
			return nil, err
		}
		if st, err = assign.StartFromConstants(c, o.Constants, o.Species); err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
		if err := st.Select(o.Species); err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
	}
	peakUnit := commonUnit(pl)
	tol, err := parseQuantity(o.Tolerance, peakUnit, "--tolerance")
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	unc, err := parseQuantity(o.Unc, peakUnit, "--unc")
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: o.Bands, Spectrum: spec, Temperature: T},
		assign.Settings{Tolerance: tol, DefaultUnc: unc})
	if err != nil {
		return nil, err
	}
	if err := checkUnchanged(inputs, hashes); err != nil {
		return nil, err
	}
	rec := fit.NewRecord(res.Fit)
	rec.DisplayUnit = peakUnit.String()
	for i, in := range inputs {
		rec.Provenance.Inputs = append(rec.Provenance.Inputs, constants.Input{Path: in, SHA256: hashes[i]})
	}
	rec.Provenance.Version = Version
	rec.Provenance.Created = time.Now().UTC().Format(time.RFC3339)
	var bands []string
	for _, b := range o.Bands {
		bands = append(bands, b.String())
	}
	tolOpt := any("default")
	if tol > 0 {
		tolOpt = tol
	}
	rec.Provenance.Options = map[string]any{
		"stage": "assign", "model": model.KindTermValues, "bands": strings.Join(bands, ","), "spectrum": spec.String(),
		"temperature_K": T, "tolerance_cm-1": tolOpt, "species": st.Labels(),
	}
	return &AssignOutcome{Result: res, Record: rec}, nil
}

// commonUnit returns the unit shared by all peaks, the default unit (cm-1)
// when they mix units.
func commonUnit(pl *assign.PeakList) linelist.Unit {
	u := pl.Peaks[0].Unit
	for _, p := range pl.Peaks {
		if p.Unit != u {
			return linelist.DefaultUnit
		}
	}
	return u
}

// parseQuantity reads "0.01", "0.01 cm-1", "0.3MHz" into cm⁻¹; a bare number
// is in unit u. "" gives 0.
func parseQuantity(s string, u linelist.Unit, flag string) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, nil
	}
	num, unitText := t, ""
	lower := strings.ToLower(t)
	for _, suf := range []string{"cm-1", "mhz", "ghz"} {
		if strings.HasSuffix(lower, suf) {
			num, unitText = strings.TrimSpace(t[:len(t)-len(suf)]), t[len(t)-len(suf):]
			break
		}
	}
	if unitText != "" {
		var err error
		if u, err = linelist.ParseUnit(unitText); err != nil {
			return 0, fmt.Errorf("assign: %s %q: %w", flag, s, err)
		}
	}
	x, err := strconv.ParseFloat(num, 64)
	if err != nil || !(x > 0) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("assign: %s %q: want a positive number with an optional unit, e.g. 0.01 or 0.3MHz", flag, s)
	}
	return u.ToWavenumber(x), nil
}
