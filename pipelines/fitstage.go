// Package pipelines runs bandwright's stages on files: it reads the inputs,
// calls the stage packages (fit, thermo, assign), and writes each stage's
// outputs atomically into an output folder. The command line is a thin layer
// over this package.
package pipelines

import (
	"io"
	"strings"
	"time"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/states"
	"bandwright/internal/failure"
	"bandwright/pipelines/outdir"
)

// Version is the program version written into every output.
var Version = "0.1.0"

// FitOptions are the options of `bandwright fit`.
type FitOptions struct {
	Inputs    []string
	Model     string
	Terms     []string
	Fix       []string // NAME=VALUE
	Reject    float64  // threshold in units of s; 0 turns rejection off (fit.Settings.Reject)
	Round     bool
	BOBTerms  []string
	Calibrate bool
	Reference string
	// Unit is the unit the outputs show constants and residuals in: "cm-1",
	// "MHz" or "GHz"; "": the unit of the lines when they all share one,
	// else cm-1 (LinesUnit).
	Unit string
	// States is the electronic-states file (TOML), optional: the states
	// the levels of the lines belong to and starting values of their
	// constants. Without it every level is of a ¹Σ⁺ ground state.
	States string
	Out    string
	// Names, when set, replaces the input paths in the lines' file column,
	// residuals and provenance (the chain fits files it keeps in a temporary
	// folder, nightly fits private snapshots).
	Names []string
}

// FitOutcome is what a fit run produced.
type FitOutcome struct {
	Problem fit.Problem
	Result  *fit.Result
	Record  *constants.Record
	Extra   []string
	Out     string
}

// RunFit reads the line lists, fits, and writes constants.json, residuals.csv
// and fit.md into o.Out (nothing is written when anything fails).
func RunFit(o FitOptions) (*FitOutcome, error) {
	oc, err := Fit(o)
	if err != nil {
		return nil, err
	}
	d, err := outdir.Begin(o.Out)
	if err != nil {
		return nil, err
	}
	d.Protect(o.Inputs...)
	defer d.Abort()
	if err := WriteFitOutputs(d, oc); err != nil {
		return nil, err
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	oc.Out = o.Out
	return oc, nil
}

// Fit reads the inputs and fits without writing anything.
func Fit(o FitOptions) (*FitOutcome, error) {
	if len(o.Inputs) == 0 {
		return nil, failure.Errorf(failure.BadInput, "fit: no line-list files given")
	}
	var fixes []model.Fix
	for _, f := range o.Fix {
		fx, err := model.ParseFix(f)
		if err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
		fixes = append(fixes, fx)
	}
	sf, err := LoadStates(o.States)
	if err != nil {
		return nil, err
	}
	inputs := o.Inputs
	if sf != nil {
		inputs = append(append([]string(nil), o.Inputs...), o.States)
	}
	hashes, err := HashFiles(inputs)
	if err != nil {
		return nil, err
	}
	list, err := linelist.ReadFiles(o.Inputs...)
	if err != nil {
		return nil, err
	}
	var sts []states.State
	var start []states.Start
	if sf != nil {
		if err := sf.CheckSpecies(strings.Join(o.Inputs, ", "), list.Species()); err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
		sts, start = sf.Ordered(), sf.Start
	}
	if err := linelist.CheckStates(list, sts); err != nil {
		return nil, err
	}
	if len(o.Names) == len(o.Inputs) {
		rename := map[string]string{}
		for i, in := range o.Inputs {
			rename[in] = o.Names[i]
		}
		for i := range list.Lines {
			if n, ok := rename[list.Lines[i].File]; ok {
				list.Lines[i].File = n
			}
		}
		for i := range list.Warnings {
			if n, ok := rename[list.Warnings[i].File]; ok {
				list.Warnings[i].File = n
			}
		}
	}
	if err := fit.CheckSpinStatistics(list.Lines, sts); err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	kind := o.Model
	if kind == "" {
		kind = fit.DefaultModel
	}
	m, err := fit.BuildModel(list.Lines, fit.ModelSpec{Kind: kind, Terms: o.Terms, Fixes: fixes, Reference: o.Reference, BOBTerms: o.BOBTerms, States: sts})
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	unit, err := displayUnit(o.Unit, list.Lines)
	if err != nil {
		return nil, err
	}
	p := fit.Problem{Lines: list.Lines, Model: m, Start: start}
	s := fit.Settings{Reject: o.Reject, Round: o.Round, Calibrate: o.Calibrate, Unit: unit}
	res, err := fit.Fit(p, s)
	if err != nil {
		return nil, err
	}
	if err := checkUnchanged(inputs, hashes); err != nil {
		return nil, err
	}
	// Warnings of the reader (lines given twice) come first, naming file and row.
	if len(list.Warnings) > 0 {
		ws := make([]string, 0, len(list.Warnings)+len(res.Warnings))
		for _, w := range list.Warnings {
			ws = append(ws, w.String())
		}
		res.Warnings = append(ws, res.Warnings...)
	}
	rec := fit.NewRecord(res)
	for i, in := range inputs {
		if i < len(o.Names) && len(o.Names) == len(o.Inputs) {
			in = o.Names[i]
		}
		rec.Provenance.Inputs = append(rec.Provenance.Inputs, constants.Input{Path: in, SHA256: hashes[i]})
	}
	rec.Provenance.Version = Version
	rec.Provenance.Created = time.Now().UTC().Format(time.RFC3339)
	rej := any(o.Reject)
	if o.Reject == 0 {
		rej = "off"
	}
	rec.Provenance.Options = map[string]any{
		"model": kind, "terms": m.Params()[0].Name, "fix": o.Fix, "reject": rej, "round": o.Round,
		"bob": o.BOBTerms, "calibrate": o.Calibrate, "reference": m.Species()[0], "unit": unit.String(), "states": o.States,
	}
	rec.Provenance.Options["terms"] = termsOf(o.Terms, kind)
	return &FitOutcome{Problem: p, Result: res, Record: rec, Extra: list.Extra}, nil
}

// displayUnit returns the unit named by flag ("cm-1", "MHz", "GHz"), or for
// "" the unit of the lines (LinesUnit).
func displayUnit(flag string, lines []linelist.Line) (linelist.Unit, error) {
	if strings.TrimSpace(flag) == "" {
		return LinesUnit(lines), nil
	}
	u, err := linelist.ParseUnit(flag)
	if err != nil {
		return 0, failure.Errorf(failure.BadInput, "--unit %q: use %s", flag, linelist.UnitChoices)
	}
	return u, nil
}

// LinesUnit returns the unit all lines are given in, or the default unit
// (cm-1) when they mix units: what the outputs show when --unit is not given.
func LinesUnit(lines []linelist.Line) linelist.Unit {
	if len(lines) == 0 {
		return linelist.DefaultUnit
	}
	u := lines[0].Unit
	for i := range lines {
		if lines[i].Unit != u {
			return linelist.DefaultUnit
		}
	}
	return u
}

func termsOf(t []string, kind string) []string {
	if len(t) == 0 {
		return fit.DefaultTerms(kind)
	}
	return t
}

// WriteFitOutputs writes the fit stage's files into d.
func WriteFitOutputs(d *outdir.Dir, oc *FitOutcome) error {
	if err := d.Write(constants.ConstantsFile, oc.Record.Write); err != nil {
		return err
	}
	if err := d.Write(constants.ResidualsFile, func(w io.Writer) error { return fit.WriteResiduals(w, oc.Problem, oc.Result, oc.Extra) }); err != nil {
		return err
	}
	return d.Write(constants.FitReportFile, func(w io.Writer) error { return fit.WriteSummary(w, oc.Problem, oc.Result, oc.Record) })
}
