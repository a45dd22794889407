package pipelines

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/BurntSushi/toml"
)

// Pipeline is a pipeline file: which stages run on an input and with which
// options. Every stage section takes the options of its command, with the
// flag names written in snake_case (bob_terms, nuclear_spin).
//
//	name = "co-cell-nightly"
//	input = "lines"                  # or "peaks" (then [assign] is required)
//	[assign]  start = "start.toml", bands = ["1-0", "2-1"], …
//	[fit]     model = "dunham", terms = ["Y10", "Y20", "Y01", "Y11", "Y02"], …
//	[thermo]  temperatures = [298.15, 1000.0] or range = "10:6000:1", …
//	[report]  formats = ["html", "md"]
//
// Relative paths resolve against the pipeline file's folder.
type Pipeline struct {
	Name   string         `toml:"name"`
	Input  string         `toml:"input"`
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
}

// ThermoSection holds the options of `bandwright thermo`.
type ThermoSection struct {
	Card         string    `toml:"card"`
	Temperatures []float64 `toml:"temperatures"`
	Range        string    `toml:"range"`
	Pressure     string    `toml:"pressure"`
	Composition  string    `toml:"composition"`
	NuclearSpin  string    `toml:"nuclear_spin"`
	MC           int       `toml:"mc"`
	Seed         uint64    `toml:"seed"`
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
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("pipelines: %w", err)
	}
	return ParsePipeline(b, path)
}

// ParsePipeline parses pipeline-file content; name is used in messages and its
// folder anchors relative paths.
func ParsePipeline(b []byte, name string) (*Pipeline, error) {
	var p Pipeline
	md, err := toml.Decode(string(b), &p)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, UsageError{fmt.Errorf("pipelines: %s:%d: %s", name, pe.Position.Line, pe.Message)}
		}
		return nil, UsageError{fmt.Errorf("pipelines: %s: %v", name, err)}
	}
	if und := md.Undecoded(); len(und) > 0 {
		var keys []string
		for _, k := range und {
			keys = append(keys, k.String())
		}
		return nil, UsageError{fmt.Errorf("pipelines: %s: unknown key %s (see the README's pipeline-file section)", name, strings.Join(keys, ", "))}
	}
	sum := sha256.Sum256(b)
	p.Hash = hex.EncodeToString(sum[:])
	p.Path = name
	if err := p.check(name); err != nil {
		return nil, UsageError{err}
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
	if p.Thermo != nil {
		p.Thermo.Card = rel(p.Thermo.Card)
	}
	return &p, nil
}

func (p *Pipeline) check(name string) error {
	switch p.Input {
	case "":
		p.Input = InputLines
	case InputLines, InputPeaks:
	default:
		return fmt.Errorf("pipelines: %s: input: %q; use \"lines\" (assigned line lists) or \"peaks\" (peak lists, with an [assign] section)", name, p.Input)
	}
	if p.Input == InputPeaks {
		if p.Assign == nil {
			return fmt.Errorf("pipelines: %s: input = \"peaks\" needs an [assign] section (start or constants, bands)", name)
		}
		if (p.Assign.Start == "") == (p.Assign.Constants == "") {
			return fmt.Errorf("pipelines: %s: assign: give exactly one of start and constants", name)
		}
	}
	if p.Fit != nil {
		if p.Fit.Reject != nil && *p.Fit.Reject < 0 {
			return fmt.Errorf("pipelines: %s: fit.reject: must be ≥ 0 (0 turns rejection off)", name)
		}
		switch p.Fit.Model {
		case "", "levels", "dunham":
		default:
			return fmt.Errorf("pipelines: %s: fit.model: %q; use \"levels\" or \"dunham\"", name, p.Fit.Model)
		}
	}
	if p.Report != nil {
		for _, f := range p.Report.Formats {
			if f != "html" && f != "md" {
				return fmt.Errorf("pipelines: %s: report.formats: %q; use \"html\" and/or \"md\"", name, f)
			}
		}
	}
	return nil
}

// FitOptions returns the fit options of the pipeline for the given inputs and
// output folder.
func (p *Pipeline) FitOptions(inputs []string, out string) FitOptions {
	o := FitOptions{Inputs: inputs, Out: out, Reject: 3}
	if f := p.Fit; f != nil {
		o.Model, o.Terms, o.Fix, o.Round, o.Calibrate, o.Reference = f.Model, f.Terms, f.Fix, f.Round, f.Calibrate, f.Reference
		o.BOBTerms = f.BOBTerms
		if f.BOB && len(o.BOBTerms) == 0 {
			o.BOBTerms = []string{"Y10", "Y01"}
		}
		if f.Reject != nil {
			o.Reject = *f.Reject
		}
	}
	return o
}
