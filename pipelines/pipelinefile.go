package pipelines

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"

	"github.com/BurntSushi/toml"

	"bandwright/assign"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
	"bandwright/thermo"
)

// Pipeline is a pipeline file: which stages run on an input and with which
// options. Every stage section takes the options of its command, with the
// flag names written in snake_case (bob_terms, nuclear_spin).
//
//	name = "co-cell-nightly"
//	input = "lines"                  # or "peaks" (then [assign] is required)
//	states = "states.toml"           # electronic-states file of every stage, optional
//	[assign]  start = "start.toml", bands = ["1-0", "2-1"], …
//	[fit]     model = "dunham", terms = ["Y10", "Y20", "Y01", "Y11", "Y02"], …
//	[thermo]  temperatures = [298.15, 1000.0] or range = "10:6000:1", …
//	[report]  formats = ["html", "md"]
//
// Relative paths resolve against the pipeline file's folder.
type Pipeline struct {
	Name  string `toml:"name"`
	Input string `toml:"input"`
	// States is the electronic-states file of the fit and thermo stages (one
	// file for all stages), as --states.
	States string         `toml:"states"`
	Assign *AssignSection `toml:"assign"`
	Fit    *FitSection    `toml:"fit"`
	Thermo *ThermoSection `toml:"thermo"`
	Report *ReportSection `toml:"report"`
	// Path and Hash identify the file (SHA-256 of its bytes); empty for the
	// pipeline chosen automatically.
	Path string `toml:"-"`
	Hash string `toml:"-"`
	// Chosen records what was chosen automatically, for the report.
	Chosen []string `toml:"-"`
}

// AssignSection holds the options of `bandwright assign`.
type AssignSection struct {
	Start       string   `toml:"start"`
	Constants   string   `toml:"constants"`
	Bands       []string `toml:"bands"`
	Spectrum    string   `toml:"spectrum"`
	Temperature float64  `toml:"temperature"`
	Tolerance   float64  `toml:"tolerance"`
	// Unc, Unit and Species are --unc (e.g. "0.001" or "0.05MHz"), --unit
	// and --species of `bandwright assign`.
	Unc     string   `toml:"unc"`
	Unit    string   `toml:"unit"`
	Species []string `toml:"species"`

	temperatureGiven bool // the file has the key temperature (0 is then refused)
}

// FitSection holds the options of `bandwright fit`.
type FitSection struct {
	Model     string   `toml:"model"`
	Terms     []string `toml:"terms"`
	Fix       []string `toml:"fix"`
	Reject    *float64 `toml:"reject"`
	Round     bool     `toml:"round"`
	BOB       bool     `toml:"bob"`
	BOBTerms  []string `toml:"bob_terms"`
	Calibrate bool     `toml:"calibrate"`
	Reference string   `toml:"reference"`
	Unit      string   `toml:"unit"`
	// AcceptPoorFit lets a chain go on to thermo with a fit whose s is above
	// MaxChainSigma or whose rejection stopped at its cap.
	AcceptPoorFit bool `toml:"accept_poor_fit"`
}

// ThermoSection holds the options of `bandwright thermo`.
type ThermoSection struct {
	Temperatures []float64 `toml:"temperatures"`
	Range        string    `toml:"range"`
	Pressure     string    `toml:"pressure"`
	Composition  string    `toml:"composition"`
	NuclearSpin  string    `toml:"nuclear_spin"`
	MC           int       `toml:"mc"`
	// Seed is thermo.seed; absent: thermo.DefaultSeed, as --seed.
	Seed    *uint64 `toml:"seed"`
	Species string  `toml:"species"`
	// NASABreakpoint (K) and NASALimits ("LOW:HIGH" in K) choose the NASA-7
	// ranges, as --nasa-breakpoint and --nasa-limits do.
	NASABreakpoint float64 `toml:"nasa_breakpoint"`
	NASALimits     string  `toml:"nasa_limits"`
}

// ReportSection chooses the report formats.
type ReportSection struct {
	Formats []string `toml:"formats"`
}

// Input kinds of a pipeline.
const (
	InputLines = "lines"
	InputPeaks = "peaks"
)

// LoadPipeline reads and checks a pipeline file. Unknown keys are errors that
// name the key; relative paths are resolved against the file's folder.
func LoadPipeline(path string) (*Pipeline, error) {
	if why := textcheck.NotRegular(path); why != "" {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s %s", path, why)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("pipelines: %w", err)
	}
	defer f.Close()
	b, err := textcheck.ReadLimited(f, textcheck.MaxSettingsBytes, "a pipeline file")
	if err != nil {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s: %w", path, err)
	}
	return ParsePipeline(b, path)
}

// ParsePipeline parses pipeline-file content; name is used in messages and its
// folder anchors relative paths. A file without any key (empty, or comments
// only) is refused: an unattended run must not fall back on defaults because a
// file was saved empty. Errors name the file, the line of the key and the key;
// values are checked as the command line checks its flags (temperatures within
// the thermo limits, a finite rejection threshold, …).
func ParsePipeline(b []byte, name string) (*Pipeline, error) {
	var p Pipeline
	if len(b) > textcheck.MaxSettingsBytes {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s: %v", name, &textcheck.TooLargeError{Limit: textcheck.MaxSettingsBytes, What: "a pipeline file"})
	}
	var deep *textcheck.NestingError
	if err := textcheck.TOMLNesting(b, textcheck.MaxNesting); errors.As(err, &deep) {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s:%d: %w", name, deep.Line, err)
	}
	md, err := toml.Decode(string(b), &p)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, failure.Errorf(failure.BadInput, "pipelines: %s:%d: %s%s", name, pe.Position.Line, pe.Message, textcheck.DecimalCommaHint(b, pe.Position.Line))
		}
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s: %v", name, err)
	}
	if len(md.Keys()) == 0 {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s: the file is empty (no keys); a pipeline file says at least what it reads, e.g. input = \"lines\"", name)
	}
	if und := md.Undecoded(); len(und) > 0 {
		var keys []string
		for _, k := range und {
			keys = append(keys, k.String())
		}
		line := 0
		if k := und[0]; len(k) == 1 {
			line = textcheck.KeyLine(b, "", -1, k[0])
		} else if len(k) == 2 {
			line = textcheck.KeyLine(b, k[0], -1, k[1])
		}
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s: unknown key %s (see the README's pipeline-file section)", textcheck.At(name, line), strings.Join(keys, ", "))
	}
	sum := sha256.Sum256(b)
	p.Hash = hex.EncodeToString(sum[:])
	p.Path = name
	if p.Assign != nil {
		p.Assign.temperatureGiven = md.IsDefined("assign", "temperature")
	}
	if err := p.check(name, b); err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	base := filepath.Dir(name)
	rel := func(s string) string {
		if s == "" || filepath.IsAbs(s) {
			return s
		}
		return filepath.Join(base, s)
	}
	if p.Assign != nil {
		p.Assign.Start = rel(p.Assign.Start)
		p.Assign.Constants = rel(p.Assign.Constants)
	}
	p.States = rel(p.States)
	return &p, nil
}

// keyAt returns "file:line" of a key of a table of the pipeline file (table
// "": the top level; key "": the table's header), for messages.
type keyAt func(table, key string) string

// check checks the values of a decoded pipeline file section by section, as
// the command line checks its flags, and fills in the default input kind.
func (p *Pipeline) check(name string, b []byte) error {
	at := func(table, key string) string { return textcheck.At(name, textcheck.KeyLine(b, table, -1, key)) }
	if err := p.checkInput(at); err != nil {
		return err
	}
	if err := p.Assign.check(at); err != nil {
		return err
	}
	if err := p.Fit.check(at); err != nil {
		return err
	}
	if err := p.Thermo.check(at); err != nil {
		return err
	}
	return p.Report.check(at)
}

// checkInput checks the top-level keys: name and input, and that a pipeline
// on peak lists has an [assign] section with one source of starting constants.
func (p *Pipeline) checkInput(at keyAt) error {
	for _, s := range []struct{ table, key, v string }{
		{"", "name", p.Name}, {"", "input", p.Input},
	} {
		if why := textcheck.InvalidUTF8(s.v); why != "" {
			return fmt.Errorf("pipelines: %s: %s: %s", at(s.table, s.key), s.key, why)
		}
	}
	switch p.Input {
	case "":
		p.Input = InputLines
	case InputLines, InputPeaks:
	default:
		return fmt.Errorf("pipelines: %s: input: %q; use \"lines\" (assigned line lists) or \"peaks\" (peak lists, with an [assign] section)", at("", "input"), p.Input)
	}
	if p.Input == InputPeaks {
		if p.Assign == nil {
			return fmt.Errorf("pipelines: %s: input = \"peaks\" needs an [assign] section (start or constants, bands)", at("", "input"))
		}
		if (p.Assign.Start == "") == (p.Assign.Constants == "") {
			return fmt.Errorf("pipelines: %s: assign: give exactly one of start and constants", at("assign", ""))
		}
	}
	return nil
}

// check checks the [assign] section (nil: absent).
func (a *AssignSection) check(at keyAt) error {
	if a == nil {
		return nil
	}
	if T := a.Temperature; (T != 0 || a.temperatureGiven) && (!(T >= thermo.MinTemperature) || T > thermo.MaxTemperature) {
		return fmt.Errorf("pipelines: %s: assign.temperature: %v K must lie within %g…%g K (leave the key out for %g K)", at("assign", "temperature"), T, thermo.MinTemperature, thermo.MaxTemperature, assign.DefaultTemperature)
	}
	if !(a.Tolerance >= 0) || math.IsInf(a.Tolerance, 0) {
		return fmt.Errorf("pipelines: %s: assign.tolerance: %v must be a finite number > 0 (0: the default)", at("assign", "tolerance"), a.Tolerance)
	}
	return nil
}

// check checks the [fit] section (nil: absent).
func (f *FitSection) check(at keyAt) error {
	if f == nil {
		return nil
	}
	if r := f.Reject; r != nil && (!(*r >= 0) || math.IsInf(*r, 0)) {
		return fmt.Errorf("pipelines: %s: fit.reject: must be a finite number ≥ 0 (0 turns rejection off), got %v", at("fit", "reject"), *r)
	}
	switch f.Model {
	case "", model.KindTermValues, model.KindDunham:
	default:
		return fmt.Errorf("pipelines: %s: fit.model: %q; use \"term-values\" or \"dunham\"", at("fit", "model"), f.Model)
	}
	if _, err := linelist.ParseUnit(f.Unit); f.Unit != "" && err != nil {
		return fmt.Errorf("pipelines: %s: fit.unit: %q; use %s", at("fit", "unit"), f.Unit, linelist.UnitChoices)
	}
	kind := f.Model
	if kind == "" {
		kind = fit.DefaultModel
	}
	for _, t := range f.Terms {
		if err := model.CheckTerm(kind, t); err != nil {
			return fmt.Errorf("pipelines: %s: fit.terms: %s", at("fit", "terms"), strings.TrimPrefix(err.Error(), "model: "))
		}
	}
	for _, t := range f.BOBTerms {
		if err := model.CheckTerm(model.KindDunham, t); err != nil {
			return fmt.Errorf("pipelines: %s: fit.bob_terms: %s", at("fit", "bob_terms"), strings.TrimPrefix(err.Error(), "model: "))
		}
	}
	return nil
}

// check checks the [thermo] section (nil: absent): the temperatures against
// the thermo limits, at most one of temperatures and range, the NASA-7 ranges.
func (t *ThermoSection) check(at keyAt) error {
	if t == nil {
		return nil
	}
	if t.MC < 0 {
		return fmt.Errorf("pipelines: %s: thermo.mc: %d; give the number of Monte Carlo draws (0: off)", at("thermo", "mc"), t.MC)
	}
	for i, x := range t.Temperatures {
		if err := checkTemperature(x); err != nil {
			return fmt.Errorf("pipelines: %s: thermo.temperatures: entry %d: %w", at("thermo", "temperatures"), i+1, err)
		}
	}
	if t.Range != "" {
		if len(t.Temperatures) > 0 {
			return fmt.Errorf("pipelines: %s: thermo: give either temperatures or range, not both", at("thermo", "range"))
		}
		if _, err := ParseRange(t.Range); err != nil {
			return fmt.Errorf("pipelines: %s: thermo.range: %w", at("thermo", "range"), err)
		}
	}
	if t.NASALimits != "" {
		if _, _, err := ParseNASALimits(t.NASALimits); err != nil {
			return fmt.Errorf("pipelines: %s: thermo.nasa_limits: %w", at("thermo", "nasa_limits"), err)
		}
	}
	if t.NASABreakpoint < 0 || t.NASABreakpoint != t.NASABreakpoint {
		return fmt.Errorf("pipelines: %s: thermo.nasa_breakpoint: must be a temperature in K", at("thermo", "nasa_breakpoint"))
	}
	return t.checkSettings(at)
}

// checkSettings checks the thermo settings of the section one key at a
// time, with the checks of the thermo stage, so that each error names the
// file, the line and the key.
func (t *ThermoSection) checkSettings(at keyAt) error {
	if _, err := parsePressure(t.Pressure); err != nil {
		return fmt.Errorf("pipelines: %s: thermo.pressure: %q: choose 1bar or 1atm", at("thermo", "pressure"), t.Pressure)
	}
	var nasa thermo.NASARanges
	if t.NASALimits != "" {
		nasa.Low, nasa.High, _ = ParseNASALimits(t.NASALimits)
	}
	nasa.Break = t.NASABreakpoint
	room := []float64{298.15}
	for _, k := range []struct {
		key string
		s   thermo.Settings
	}{
		{"composition", thermo.Settings{Temperatures: room, Composition: t.Composition}},
		{"nuclear_spin", thermo.Settings{Temperatures: room, NuclearSpin: t.NuclearSpin}},
		{"mc", thermo.Settings{Temperatures: room, MonteCarlo: t.MC}},
		{"nasa_limits", thermo.Settings{Temperatures: room, NASA: nasa}},
	} {
		if err := k.s.Check(); err != nil {
			return fmt.Errorf("pipelines: %s: thermo.%s: %s", at("thermo", k.key), k.key, strings.TrimPrefix(err.Error(), "thermo: "))
		}
	}
	return nil
}

// check checks the [report] section (nil: absent).
func (r *ReportSection) check(at keyAt) error {
	if r == nil {
		return nil
	}
	for _, f := range r.Formats {
		if f != "html" && f != "md" {
			return fmt.Errorf("pipelines: %s: report.formats: %q; use \"html\" and/or \"md\"", at("report", "formats"), f)
		}
	}
	return nil
}

// FitOptions returns the fit options of the pipeline for the given inputs and
// output folder.
func (p *Pipeline) FitOptions(inputs []string, out string) FitOptions {
	o := FitOptions{Inputs: inputs, Out: out, Reject: fit.DefaultReject, States: p.States}
	if f := p.Fit; f != nil {
		o.Model, o.Terms, o.Fix, o.Round, o.Calibrate, o.Reference, o.Unit = f.Model, f.Terms, f.Fix, f.Round, f.Calibrate, f.Reference, f.Unit
		o.BOBTerms = f.BOBTerms
		if f.BOB && len(o.BOBTerms) == 0 {
			o.BOBTerms = fit.DefaultBOBTerms()
		}
		if f.Reject != nil {
			o.Reject = *f.Reject
		}
	}
	return o
}
