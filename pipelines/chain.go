package pipelines

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strconv"
	"strings"

	"bandwright/assign"
	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/pipelines/outdir"
	"bandwright/pipelines/report"
)

// ChainOptions are the options of `bandwright run`.
type ChainOptions struct {
	// Inputs are line lists (input = "lines") or one peak list (input = "peaks").
	Inputs []string
	// Names, when set, replaces Inputs in provenance and reports (nightly
	// runs on private snapshots but records the inbox names).
	Names []string
	// Pipeline is the pipeline file; nil: choose automatically (line lists only).
	Pipeline *Pipeline
	Out      string
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
	if len(o.Inputs) == 0 {
		return nil, failure.Errorf(failure.BadInput, "run: no input files given")
	}
	if len(o.Names) != 0 && len(o.Names) != len(o.Inputs) {
		return nil, errors.New("pipelines: run: names and inputs differ in number")
	}
	p := o.Pipeline
	auto := p == nil
	if auto {
		p = &Pipeline{Input: InputLines}
	}
	oc := &ChainOutcome{Pipeline: p}
	if p.Path != "" {
		d.Protect(p.Path)
	}
	names := o.Names
	if len(names) == 0 {
		names = o.Inputs
	}
	lineFiles := o.Inputs
	if p.Input == InputPeaks {
		if len(o.Inputs) != 1 {
			return nil, failure.Errorf(failure.BadInput, "run: input = \"peaks\" takes one peak list at a time (%d given)", len(o.Inputs))
		}
		ao, err := p.assignOptions(o.Inputs[0])
		if err != nil {
			return nil, err
		}
		for _, in := range []string{ao.Start, ao.Constants} {
			if in != "" {
				d.Protect(in)
			}
		}
		a, err := Assign(ao)
		if err != nil {
			return nil, err
		}
		oc.Assign = a
		if err := d.Write(constants.LinesFile, func(w io.Writer) error { return assign.WriteLines(w, a.Result) }); err != nil {
			return nil, err
		}
		if err := d.Write(constants.UnassignedFile, func(w io.Writer) error { return assign.WriteUnassigned(w, a.Result) }); err != nil {
			return nil, err
		}
		if err := d.Write(constants.AssignConstantsFile, a.Record.Write); err != nil {
			return nil, err
		}
		start := ao.Start
		if start == "" {
			start = ao.Constants
		}
		if err := d.Write(constants.AssignReportFile, func(w io.Writer) error {
			return assign.WriteReport(w, a.Result, assign.ReportInfo{Peaks: names[0], Start: start, Version: Version})
		}); err != nil {
			return nil, err
		}
		lineFiles = []string{d.TempPath(constants.LinesFile)}
	}

	fo := p.FitOptions(lineFiles, "")
	if p.Input == InputPeaks {
		fo.Names = []string{constants.LinesFile}
	} else {
		fo.Names = names
	}
	if auto || p.Fit == nil || (p.Fit.Model == "" && len(p.Fit.Terms) == 0) {
		list, err := linelist.ReadFiles(lineFiles...)
		if err != nil {
			return nil, err
		}
		ch, err := ChooseModel(list.Lines, fit.Settings{Reject: fo.Reject})
		if err != nil {
			return nil, err
		}
		fo.Model, fo.Terms = ch.Model, ch.Terms
		oc.Chosen = append(oc.Chosen, fmt.Sprintf("model chosen automatically: %s with terms %s", ch.Model, strings.Join(ch.Terms, ",")))
		for _, l := range ch.Log {
			oc.Chosen = append(oc.Chosen, "  "+l)
		}
	}
	f, err := Fit(fo)
	if err != nil {
		return nil, err
	}
	if p.Input == InputPeaks {
		// The fit read the assigned lines from the temporary folder; record
		// the peak list it came from.
		h, err := HashFile(o.Inputs[0])
		if err != nil {
			return nil, err
		}
		f.Record.Provenance.Inputs = append(f.Record.Provenance.Inputs, constants.Input{Path: names[0], SHA256: h})
		f.Record.Provenance.Options["assigned_by"] = "bandwright assign: lines.csv in this folder, from the peak list " + names[0]
	}
	if len(oc.Chosen) > 0 {
		f.Record.Provenance.Options["automatic_choice"] = oc.Chosen
	}
	oc.Fit = f
	if err := WriteFitOutputs(d, f); err != nil {
		return nil, err
	}

	to, err := p.thermoOptions(d.TempPath(constants.ConstantsFile))
	if err != nil {
		return nil, err
	}
	t, err := Thermo(to)
	if err != nil {
		return nil, fmt.Errorf("thermo stage: %w", err)
	}
	if len(t.Provenance.Inputs) > 0 {
		t.Provenance.Inputs[0].Path = constants.ConstantsFile + " (this folder)"
	}
	oc.Thermo = t
	d.Protect(t.Inputs...) // the card and the records it names
	if err := WriteThermoOutputs(d, t); err != nil {
		return nil, err
	}

	formats := []string{"html", "md"}
	if p.Report != nil && len(p.Report.Formats) > 0 {
		formats = p.Report.Formats
	}
	notes := append([]string(nil), oc.Chosen...)
	if p.Path != "" {
		notes = append([]string{fmt.Sprintf("pipeline file %s (sha256 %s)", filepath.Base(p.Path), p.Hash)}, notes...)
	}
	files, err := report.Build(d.TempPath(""), report.Options{Formats: formats, Version: Version, Notes: notes, Title: p.Name})
	if err != nil {
		return nil, err
	}
	for _, name := range sortedKeys(files) {
		b := files[name]
		if err := d.Write(name, func(w io.Writer) error { _, err := w.Write(b); return err }); err != nil {
			return nil, err
		}
		oc.Reports = append(oc.Reports, name)
	}
	return oc, nil
}

func sortedKeys(m map[string][]byte) []string {
	var ks []string
	for k := range m {
		ks = append(ks, k)
	}
	// report files: figures first, then the documents
	for i := 1; i < len(ks); i++ {
		for j := i; j > 0 && ks[j] < ks[j-1]; j-- {
			ks[j], ks[j-1] = ks[j-1], ks[j]
		}
	}
	return ks
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
	o := ThermoOptions{Constants: constants}
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
		o.Range, o.Pressure, o.Composition, o.NuclearSpin, o.MC, o.Seed, o.Card = t.Range, t.Pressure, t.Composition, t.NuclearSpin, t.MC, t.Seed, t.Card
	}
	return o, nil
}
