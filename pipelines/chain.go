package pipelines

import (
	"errors"
	"fmt"
	"io"
	"maps"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/states"
	"bandwright/internal/failure"
	"bandwright/pipelines/outdir"
	"bandwright/pipelines/report"
	"bandwright/thermo"
)

// ChainOptions are the options of `bandwright run`.
type ChainOptions struct {
	// Inputs are line lists (input = "lines") or one peak list (input = "peaks").
	Inputs []string
	// Names, when set, replaces Inputs in provenance and reports (nightly
	// runs on private snapshots but records the inbox names).
	Names []string
	// Pipeline is the pipeline file; nil: the chain `bandwright run` follows
	// without one — for line lists the fit with its model chosen
	// automatically, for a peak list (LooksLikePeakList) assign with the
	// options of Assign first.
	Pipeline *Pipeline
	// Assign holds the assign options of a run on a peak list without a
	// pipeline file (Peaks is set from Inputs).
	Assign *AssignOptions
	// Unit, when set, is the unit the fit's outputs show (FitOptions.Unit),
	// in place of the pipeline file's.
	Unit string
	// States is the electronic-states file of the fit and thermo stages
	// (--states), the pipeline file's states when empty; giving both is an
	// error.
	States string
	Out    string
	// Report labels the report of a nightly result (nil: the pipeline's name
	// as its title).
	Report *ReportLabels
}

// ReportLabels are what the report of a nightly result is titled with: the
// input file, its SHA-8 and date in the title, and a flag line made from the
// outcome once the fit is done (the drift test of the result).
type ReportLabels struct {
	Title, Input string
	Flag         func(*ChainOutcome) (text string, alert bool)
}

// ChainOutcome is what a chain produced.
type ChainOutcome struct {
	Out      string
	Chosen   []string // what was chosen automatically, and why
	Assign   *AssignOutcome
	Fit      *FitOutcome
	Thermo   *ThermoOutcome
	Reports  []string // report files written
	Pipeline *Pipeline
}

// ReportPath returns the path of the HTML report (or the Markdown one when
// only Markdown was written).
func (c *ChainOutcome) ReportPath() string {
	for _, f := range c.Reports {
		if f == constants.ReportHTMLFile {
			return filepath.Join(c.Out, f)
		}
	}
	if len(c.Reports) > 0 {
		return filepath.Join(c.Out, c.Reports[0])
	}
	return ""
}

// RunChain runs assign (for peak lists), fit, thermo and report on the inputs
// and writes every stage's files into o.Out as one atomic set.
func RunChain(o ChainOptions) (*ChainOutcome, error) {
	d, err := outdir.Begin(o.Out)
	if err != nil {
		return nil, err
	}
	defer d.Abort()
	d.Protect(o.Inputs...)
	oc, err := chainInto(d, o)
	if err != nil {
		return nil, err
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	oc.Out = o.Out
	return oc, nil
}

// chainInto runs the chain and writes its files into d (not committed).
func chainInto(d *outdir.Dir, o ChainOptions) (*ChainOutcome, error) {
	c, err := newChainRun(d, o)
	if err != nil {
		return nil, err
	}
	for _, step := range []func() error{c.assign, c.fit, c.thermo, c.report} {
		if err := step(); err != nil {
			return nil, err
		}
	}
	return c.oc, nil
}

// chainRun is one run of a chain: its options, the output folder under
// construction and what the stages have produced so far. Each stage is one
// method, run in the order assign, fit, thermo, report.
type chainRun struct {
	d     *outdir.Dir
	o     ChainOptions
	p     *Pipeline
	auto  bool     // no pipeline file: the model is chosen automatically
	names []string // the inputs as provenance and reports name them
	// lineFiles are the line lists the fit reads: the inputs, or the
	// assignment stage's lines.csv in the temporary folder.
	lineFiles []string
	oc        *ChainOutcome
}

// newChainRun checks the inputs and settles the pipeline (the automatic one
// when o.Pipeline is nil).
func newChainRun(d *outdir.Dir, o ChainOptions) (*chainRun, error) {
	if len(o.Inputs) == 0 {
		return nil, failure.Errorf(failure.BadInput, "run: no input files given")
	}
	if len(o.Names) != 0 && len(o.Names) != len(o.Inputs) {
		return nil, errors.New("pipelines: run: names and inputs differ in number")
	}
	c := &chainRun{d: d, o: o, p: o.Pipeline, names: o.Names, lineFiles: o.Inputs}
	if c.p == nil {
		c.auto = true
		in, err := inputKind(o)
		if err != nil {
			return nil, err
		}
		c.p = &Pipeline{Input: in}
	} else if o.Assign != nil {
		return nil, failure.Errorf(failure.BadInput, "run: give the assign options either in the pipeline file or on the command line, not both")
	}
	if o.States != "" {
		if c.p.States != "" {
			return nil, failure.Errorf(failure.BadInput, "run: --states %s and the pipeline file's states = %q: give the electronic-states file once", o.States, c.p.States)
		}
		p := *c.p
		p.States = o.States
		c.p = &p
	}
	if c.p.Path != "" {
		d.Protect(c.p.Path)
	}
	if len(c.names) == 0 {
		c.names = o.Inputs
	}
	c.oc = &ChainOutcome{Pipeline: c.p}
	return c, nil
}

// inputKind tells, for a run without a pipeline file, whether its inputs are
// line lists or one peak list, and refuses a peak list without the assign
// options it needs (and assign options for line lists), saying what to give.
func inputKind(o ChainOptions) (string, error) {
	var peaks []string
	for _, in := range o.Inputs {
		if LooksLikePeakList(in) {
			peaks = append(peaks, in)
		}
	}
	switch {
	case len(peaks) == 0 && o.Assign != nil:
		return "", failure.Errorf(failure.BadInput, "run: %s: a line list (it has quantum-number columns); the assign options (--start, --constants, --bands, …) apply to a peak list", o.Inputs[0])
	case len(peaks) == 0:
		return InputLines, nil
	case len(o.Inputs) > 1:
		return "", failure.Errorf(failure.BadInput, "run: %s: a peak list; give it alone (one peak list per run), or line lists only", peaks[0])
	case o.Assign == nil || (o.Assign.Start == "" && o.Assign.Constants == "") || len(o.Assign.Bands) == 0:
		return "", failure.Errorf(failure.BadInput, "run: %s: a peak list (a position column, no quantum numbers); to assign it, give the starting constants (--start START.toml or --constants constants.json) and the bands (--bands 1-0,2-1; --spectrum rotation --bands 0-0 for pure rotation), or a pipeline file (--pipeline FILE)", peaks[0])
	}
	return InputPeaks, nil
}

// assign runs the assignment stage on a peak list (input = "peaks") and
// points the fit at the lines.csv it wrote; line lists go to the fit as they are.
func (c *chainRun) assign() error {
	if c.p.Input != InputPeaks {
		return nil
	}
	if len(c.o.Inputs) != 1 {
		return failure.Errorf(failure.BadInput, "run: input = \"peaks\" takes one peak list at a time (%d given)", len(c.o.Inputs))
	}
	var ao AssignOptions
	var err error
	if c.o.Assign != nil {
		ao = *c.o.Assign
		ao.Peaks = c.o.Inputs[0]
	} else if ao, err = c.p.assignOptions(c.o.Inputs[0]); err != nil {
		return err
	}
	c.d.Protect(ao.startFiles()...)
	a, err := Assign(ao)
	if err != nil {
		return err
	}
	c.oc.Assign = a
	info := ao.reportInfo()
	info.Peaks = c.names[0]
	if err := WriteAssignOutputs(c.d, a, constants.AssignConstantsFile, info); err != nil {
		return err
	}
	c.lineFiles = []string{c.d.TempPath(constants.LinesFile)}
	return nil
}

// fit runs the fit stage on the line files, choosing the model first when
// the pipeline leaves it open, and writes the fit's files.
func (c *chainRun) fit() error {
	fo := c.p.FitOptions(c.lineFiles, "")
	if c.o.Unit != "" {
		fo.Unit = c.o.Unit
	}
	if c.p.Input == InputPeaks {
		fo.Names = []string{constants.LinesFile}
	} else {
		fo.Names = c.names
	}
	if c.modelOpen() {
		if err := c.chooseModel(&fo); err != nil {
			return err
		}
	}
	f, err := Fit(fo)
	if err != nil {
		return err
	}
	if err := checkFitQuality(f, c.p.Fit != nil && c.p.Fit.AcceptPoorFit); err != nil {
		return err
	}
	if c.p.Input == InputPeaks {
		if err := c.recordPeakList(f.Record); err != nil {
			return err
		}
	}
	if len(c.oc.Chosen) > 0 {
		f.Record.Provenance.Options["automatic_choice"] = c.oc.Chosen
	}
	c.oc.Fit = f
	return WriteFitOutputs(c.d, f)
}

// modelOpen reports whether the pipeline leaves the model to be chosen
// automatically (no pipeline file, or a [fit] section without model and terms).
// The automatic choice compares closed-shell models only: an
// electronic-states file turns it off unless it describes a single ¹Σ state
// (a file given for D0 or ω_e of a closed-shell molecule).
func (c *chainRun) modelOpen() bool {
	f := c.p.Fit
	if c.p.States != "" && !singleSingletSigma(c.p.States) {
		return false
	}
	return c.auto || f == nil || (f.Model == "" && len(f.Terms) == 0)
}

// singleSingletSigma reports whether the electronic-states file at path
// holds one state, a ¹Σ state. A file that cannot be read gives false: the
// fit stage reads it again and names the problem.
func singleSingletSigma(path string) bool {
	sf, err := LoadStates(path)
	if err != nil || sf == nil || len(sf.States) != 1 {
		return false
	}
	return sf.States[0].Case() == states.Singlet
}

// chooseModel chooses the model and terms of fo from the lines (see
// ChooseModel) and records the choice and its reasons in the outcome.
func (c *chainRun) chooseModel(fo *FitOptions) error {
	list, err := linelist.ReadFiles(c.lineFiles...)
	if err != nil {
		return err
	}
	if err := linelist.CheckStates(list, nil); err != nil {
		return err // open-shell lines need an electronic-states file
	}
	ch, err := ChooseModel(list.Lines, fit.Settings{Reject: fo.Reject})
	if err != nil {
		return err
	}
	fo.Model, fo.Terms = ch.Model, ch.Terms
	c.oc.Chosen = append(c.oc.Chosen, fmt.Sprintf("model chosen automatically: %s with terms %s", ch.Model, strings.Join(ch.Terms, ",")))
	for _, l := range ch.Log {
		c.oc.Chosen = append(c.oc.Chosen, "  "+l)
	}
	return nil
}

// recordPeakList adds the peak list to the provenance of a fit that read the
// assigned lines from the temporary folder.
func (c *chainRun) recordPeakList(rec *constants.Record) error {
	h, err := HashFile(c.o.Inputs[0])
	if err != nil {
		return err
	}
	rec.Provenance.Inputs = append(rec.Provenance.Inputs, constants.Input{Path: c.names[0], SHA256: h})
	rec.Provenance.Options["assigned_by"] = "bandwright assign: lines.csv in this folder, from the peak list " + c.names[0]
	return nil
}

// thermo runs the thermo stage on the fit's constants.json and writes its files.
func (c *chainRun) thermo() error {
	to, err := c.p.thermoOptions(c.d.TempPath(constants.ConstantsFile))
	if err != nil {
		return err
	}
	to.ConstantsName = constants.ConstantsFile + " (this folder)"
	t, err := Thermo(to)
	if err != nil {
		return fmt.Errorf("thermo stage: %w", err)
	}
	c.oc.Thermo = t
	c.d.Protect(t.Inputs...) // the electronic-states file and the records it names
	return WriteThermoOutputs(c.d, t)
}

// report builds the reports from the files the stages wrote and adds them
// (figures first, then the documents, in name order).
func (c *chainRun) report() error {
	formats := []string{"html", "md"}
	if c.p.Report != nil && len(c.p.Report.Formats) > 0 {
		formats = c.p.Report.Formats
	}
	notes := append([]string(nil), c.oc.Chosen...)
	if c.p.Path != "" {
		notes = append([]string{fmt.Sprintf("pipeline file %s (sha256 %s)", filepath.Base(c.p.Path), c.p.Hash)}, notes...)
	}
	ro := report.Options{Formats: formats, Version: Version, Notes: notes, Title: c.p.Name}
	if l := c.o.Report; l != nil {
		ro.Title, ro.Input = l.Title, l.Input
		if l.Flag != nil {
			ro.Flag, ro.Alert = l.Flag(c.oc)
		}
	}
	files, err := report.Build(c.d.TempPath(""), ro)
	if err != nil {
		return err
	}
	for _, name := range slices.Sorted(maps.Keys(files)) {
		b := files[name]
		if err := c.d.Write(name, func(w io.Writer) error { _, err := w.Write(b); return err }); err != nil {
			return err
		}
		c.oc.Reports = append(c.oc.Reports, name)
	}
	return nil
}

// assignOptions returns the assign options of the pipeline for a peak list.
func (p *Pipeline) assignOptions(peaks string) (AssignOptions, error) {
	a := p.Assign
	o := AssignOptions{Peaks: peaks, Start: a.Start, Constants: a.Constants, Spectrum: a.Spectrum, Temperature: a.Temperature,
		Unc: a.Unc, Unit: a.Unit, Species: a.Species}
	if a.Tolerance > 0 {
		o.Tolerance = strconv.FormatFloat(a.Tolerance, 'g', -1, 64)
	}
	if len(a.Bands) == 0 {
		return o, failure.Errorf(failure.BadInput, "pipelines: %s: assign.bands: no bands given (e.g. bands = [\"1-0\", \"2-1\"])", p.Path)
	}
	bands, err := linelist.ParseBands(strings.Join(a.Bands, ","))
	if err != nil {
		return o, failure.Errorf(failure.BadInput, "pipelines: %s: assign.bands: %w", p.Path, err)
	}
	o.Bands = bands
	return o, nil
}

// thermoOptions returns the thermo options of the pipeline for a constants record.
func (p *Pipeline) thermoOptions(constants string) (ThermoOptions, error) {
	o := ThermoOptions{Constants: constants, Seed: thermo.DefaultSeed, States: p.States}
	if t := p.Thermo; t != nil {
		o.Species = t.Species
		o.NASA.Break = t.NASABreakpoint
		if t.NASALimits != "" {
			lo, hi, err := ParseNASALimits(t.NASALimits)
			if err != nil {
				return o, failure.Errorf(failure.BadInput, "pipelines: %s: thermo.nasa_limits: %w", p.Path, err)
			}
			o.NASA.Low, o.NASA.High = lo, hi
		}
		var ts []string
		for _, x := range t.Temperatures {
			ts = append(ts, strconv.FormatFloat(x, 'g', -1, 64))
		}
		o.Temperatures = strings.Join(ts, ",")
		o.Range, o.Pressure, o.Composition, o.NuclearSpin, o.MC = t.Range, t.Pressure, t.Composition, t.NuclearSpin, t.MC
		if t.Seed != nil {
			o.Seed = *t.Seed
		}
	}
	return o, nil
}
