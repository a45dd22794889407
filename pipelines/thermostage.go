package pipelines

import (
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"bandwright/constants"
	"bandwright/fit/species"
	"bandwright/internal/failure"
	"bandwright/pipelines/outdir"
	"bandwright/thermo"
)

// defaultTemperatures returns the table used when neither a list nor a range
// is given (K).
func defaultTemperatures() []float64 {
	return []float64{100, 200, 298.15, 300, 400, 500, 600, 700, 800, 900, 1000,
		1500, 2000, 2500, 3000, 3500, 4000, 4500, 5000, 5500, 6000}
}

// maxRangeTemperatures bounds the number of temperatures of a --range.
const maxRangeTemperatures = 1_000_000

// ThermoOptions are the options of `bandwright thermo`.
type ThermoOptions struct {
	Constants string // constants.json written by fit
	// ConstantsName is how outputs name the record (provenance, levels_from
	// of thermo.json); empty: Constants. The chain gives the name of the file
	// in its output folder, not the temporary path it reads.
	ConstantsName string
	States        string // electronic-states file (TOML), optional
	// Species is the isotopologue; empty: the electronic-states file's, else the record's first.
	Species string
	// Temperatures is a comma-separated list in K ("298.15,1000"); Range is
	// "FROM:TO:STEP" in K. At most one of them; neither: 100 … 6000 K (defaultTemperatures).
	Temperatures string
	Range        string
	Pressure     string // "1bar" (default) or "1atm"
	Composition  string // "isotopologue" (default) or "natural"
	NuclearSpin  string // "thermochemistry" (default) or "line-intensity"
	MC           int    // Monte Carlo draws (0: off)
	Seed         uint64
	NASA         thermo.NASARanges
	Workers      int // 0: GOMAXPROCS
	Out          string
}

// ThermoOutcome is what a thermo run produced.
type ThermoOutcome struct {
	Result     *thermo.Result
	Provenance constants.Provenance
	Inputs     []string // files read: constants, electronic states, excited-state constants
	Out        string
}

// RunThermo computes the thermo table and writes thermo.csv, thermo.json and
// nasa7.json into o.Out (nothing is written when anything fails).
func RunThermo(o ThermoOptions) (*ThermoOutcome, error) {
	oc, err := Thermo(o)
	if err != nil {
		return nil, err
	}
	d, err := outdir.Begin(o.Out)
	if err != nil {
		return nil, err
	}
	d.Protect(oc.Inputs...)
	defer d.Abort()
	if err := WriteThermoOutputs(d, oc); err != nil {
		return nil, err
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	oc.Out = o.Out
	return oc, nil
}

// WriteThermoOutputs writes the thermo stage's files into d.
func WriteThermoOutputs(d *outdir.Dir, oc *ThermoOutcome) error {
	r := oc.Result
	if err := d.Write(constants.ThermoCSVFile, r.WriteCSV); err != nil {
		return err
	}
	if err := d.Write(constants.ThermoJSONFile, func(w io.Writer) error { return r.WriteJSON(w, oc.Provenance) }); err != nil {
		return err
	}
	return d.Write(constants.NASA7File, func(w io.Writer) error { return r.WriteNASA7(w, oc.Provenance) })
}

// Thermo reads the constants record and the electronic-states file and
// computes without writing.
func Thermo(o ThermoOptions) (*ThermoOutcome, error) {
	if o.Constants == "" {
		return nil, failure.Errorf(failure.BadInput, "thermo: no constants record given")
	}
	temps, err := thermoTemperatures(o.Temperatures, o.Range)
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	s := thermo.Settings{Temperatures: temps, Composition: o.Composition, NuclearSpin: o.NuclearSpin,
		MonteCarlo: o.MC, Seed: o.Seed, Workers: o.Workers, NASA: o.NASA,
		// The default table: temperatures the sum cannot give honestly are
		// left out and named; asked for one by one, they are refused.
		OmitRefused: strings.TrimSpace(o.Temperatures) == "" && strings.TrimSpace(o.Range) == ""}
	if s.Pressure, err = parsePressure(o.Pressure); err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	if err := s.Check(); err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}

	rec, c, err := LoadConstants(o.Constants)
	if err != nil {
		return nil, err
	}
	inputs := []string{o.Constants}
	shown := o.Constants
	if o.ConstantsName != "" {
		shown = o.ConstantsName
	}
	p := thermo.Problem{Constants: c, Observed: rec.Observed, Source: shown, Species: o.Species}
	sf, err := LoadStates(o.States)
	if err != nil {
		return nil, err
	}
	if sf != nil {
		inputs = append(inputs, o.States)
		if p.Species == "" {
			if err := sf.CheckSpecies(o.Constants, c.Model.Species()); err != nil {
				return nil, err
			}
			p.Species = sf.Species
		}
	}
	if p.Species == "" {
		p.Species = c.Model.Species()[0]
	}
	iso, err := species.Parse(p.Species)
	if err != nil {
		return nil, failure.Errorf(failure.BadInput, "thermo: --species: %w", err)
	}
	p.Species = iso.Label
	if sf != nil {
		if err := sf.Check(iso); err != nil {
			return nil, err
		}
		p.DissociationEnergy, p.DissociationSigma = sf.DissociationEnergy, sf.DissociationSigma
		for i, cs := range sf.States {
			st := thermo.StateOf(cs)
			if cs.Constants != "" {
				path := cs.Constants
				if !filepath.IsAbs(path) {
					path = filepath.Join(filepath.Dir(o.States), path)
				}
				r2, c2, err := LoadConstants(path)
				if err != nil {
					return nil, fmt.Errorf("thermo: %s: state %d (%s): constants: %w", o.States, i+1, cs.Label, err)
				}
				st.Constants, st.Observed, st.Source = c2, r2.Observed, path
				inputs = append(inputs, path)
			}
			p.States = append(p.States, st)
		}
	}
	hashes, err := HashFiles(inputs)
	if err != nil {
		return nil, err
	}
	res, err := thermo.Compute(p, s)
	if err != nil {
		return nil, err
	}
	prov := constants.Provenance{Version: Version, Created: time.Now().UTC().Format(time.RFC3339)}
	for i, in := range inputs {
		if i == 0 {
			in = shown
		}
		prov.Inputs = append(prov.Inputs, constants.Input{Path: in, SHA256: hashes[i]})
	}
	nasa := s.NASA.WithDefaults()
	prov.Options = map[string]any{
		"species": iso.Label, "temperatures": o.Temperatures, "range": o.Range,
		"pressure_Pa": res.Conventions.StandardPressure, "composition": res.Conventions.Composition,
		"nuclear_spin": res.Conventions.NuclearSpin, "mc": o.MC, "seed": o.Seed,
		"nasa_breakpoint_K": nasa.Break, "nasa_limits_K": []float64{nasa.Low, nasa.High},
		"states": o.States,
	}
	return &ThermoOutcome{Result: res, Provenance: prov, Inputs: inputs}, nil
}

// parsePressure reads --pressure: "1bar" (also "", the default) or "1atm",
// in Pa.
func parsePressure(s string) (float64, error) {
	switch strings.ToLower(strings.ReplaceAll(s, " ", "")) {
	case "", "1bar":
		return thermo.PressureBar, nil
	case "1atm":
		return thermo.PressureAtm, nil
	}
	return 0, fmt.Errorf("thermo: --pressure: %q: choose 1bar or 1atm", s)
}

// thermoTemperatures turns --temperatures or --range into a list (K).
func thermoTemperatures(list, rng string) ([]float64, error) {
	list, rng = strings.TrimSpace(list), strings.TrimSpace(rng)
	switch {
	case list != "" && rng != "":
		return nil, errors.New("thermo: give either --temperatures or --range, not both")
	case list != "":
		return ParseTemperatures(list)
	case rng != "":
		return ParseRange(rng)
	}
	return defaultTemperatures(), nil
}

// ParseTemperatures reads a comma-separated list of temperatures in K. Every
// entry must be a number within thermo.MinTemperature…thermo.MaxTemperature.
func ParseTemperatures(s string) ([]float64, error) {
	var out []float64
	for i, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		x, err := strconv.ParseFloat(f, 64)
		if err != nil {
			return nil, fmt.Errorf("thermo: --temperatures: entry %d %q is not a number", i+1, f)
		}
		if err := checkTemperature(x); err != nil {
			return nil, fmt.Errorf("thermo: --temperatures: entry %d: %w", i+1, err)
		}
		out = append(out, x)
	}
	return out, nil
}

func checkTemperature(x float64) error {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Errorf("%v is not a finite number", x)
	}
	if x <= 0 {
		return fmt.Errorf("%g K: temperatures must be > 0", x)
	}
	if x < thermo.MinTemperature || x > thermo.MaxTemperature {
		return fmt.Errorf("%g K is outside %g…%g K", x, thermo.MinTemperature, thermo.MaxTemperature)
	}
	return nil
}

// ParseRange reads FROM:TO:STEP (K) and returns FROM, FROM+STEP, … up to TO
// (included when it falls on the grid within 1e-9 of a step).
func ParseRange(s string) ([]float64, error) {
	parts := strings.Split(s, ":")
	if len(parts) != 3 {
		return nil, fmt.Errorf("thermo: --range %q: write FROM:TO:STEP in K, e.g. 10:6000:1", s)
	}
	names := []string{"FROM", "TO", "STEP"}
	var v [3]float64
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("thermo: --range %q: %s %q is not a finite number", s, names[i], strings.TrimSpace(p))
		}
		v[i] = x
	}
	from, to, step := v[0], v[1], v[2]
	if !(step > 0) {
		return nil, fmt.Errorf("thermo: --range %q: STEP %g must be > 0", s, step)
	}
	if err := checkTemperature(from); err != nil {
		return nil, fmt.Errorf("thermo: --range %q: FROM: %w", s, err)
	}
	if err := checkTemperature(to); err != nil {
		return nil, fmt.Errorf("thermo: --range %q: TO: %w", s, err)
	}
	if to < from {
		return nil, fmt.Errorf("thermo: --range %q: TO %g is below FROM %g", s, to, from)
	}
	n := math.Floor((to-from)/step+1e-9) + 1
	if n > maxRangeTemperatures {
		return nil, fmt.Errorf("thermo: --range %q: %.0f temperatures, more than %d", s, n, maxRangeTemperatures)
	}
	out := make([]float64, int(n))
	for i := range out {
		out[i] = from + float64(i)*step
	}
	return out, nil
}

// ParseNASALimits parses the NASA-7 fit limits "LOW:HIGH" (K).
func ParseNASALimits(s string) (lo, hi float64, err error) {
	parts := strings.Split(s, ":")
	if len(parts) != 2 {
		return 0, 0, fmt.Errorf("%q: write LOW:HIGH in K, e.g. 200:6000", s)
	}
	lo, err1 := strconv.ParseFloat(strings.TrimSpace(parts[0]), 64)
	hi, err2 := strconv.ParseFloat(strings.TrimSpace(parts[1]), 64)
	if err1 != nil || err2 != nil || math.IsNaN(lo) || math.IsNaN(hi) {
		return 0, 0, fmt.Errorf("%q: LOW and HIGH must be numbers", s)
	}
	return lo, hi, nil
}
