package pipelines

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/google/renameio/v2"

	"bandwright/assign"
	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/states"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
	"bandwright/thermo"
)

// LoadConstants reads a constants record from a file.
func LoadConstants(path string) (*constants.Record, *constants.Set, error) {
	if why := textcheck.NotRegular(path); why != "" {
		return nil, nil, failure.Errorf(failure.BadInput, "pipelines: %s %s", path, why)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("pipelines: %w", err)
	}
	defer f.Close()
	rec, err := constants.Read(f, path)
	if err != nil {
		return nil, nil, err
	}
	c, err := rec.Constants()
	if err != nil {
		return nil, nil, fmt.Errorf("fit: %s: %w", path, err)
	}
	return rec, c, nil
}

// PredictOptions are the options of `bandwright predict`.
type PredictOptions struct {
	Constants string // constants.json
	// Lines, when set, is a file of transitions (the quantum-number columns
	// of a line list, positions optional) to predict exactly; Species,
	// Bands, JMax, Branches and Spectrum are then not used.
	Lines   string
	Species string // "": every species of the record
	Bands   []linelist.Band
	JMax    int // highest lower-state J
	// Branches are branch letters; none: those of the spectrum (assign.Spectrum.DeltaJ).
	Branches []string
	// Spectrum is "ir", "raman" or "rotation" (the selection rules of the
	// branches and intensities); "": rotation for v′ = v″, infrared otherwise.
	Spectrum string
	// Temperature in K for relative intensities; 0: no intensity column.
	Temperature float64
	// Unit of the positions written: "cm-1", "MHz" or "GHz"; "": the record's
	// display unit (that of its fit's outputs).
	Unit string
	Out  string
}

// PredictOutcome is what a prediction wrote.
type PredictOutcome struct {
	Lines    int
	Unit     linelist.Unit
	Warnings []string // branches the spectrum does not have, …
}

// RunPredict writes the predicted lines of the given bands to o.Out
// (atomically): positions with σ in o.Unit, the extrapolated column and, with
// a temperature, relative intensities.
func RunPredict(o PredictOptions) (*PredictOutcome, error) {
	rec, c, err := LoadConstants(o.Constants)
	if err != nil {
		return nil, err
	}
	oc := &PredictOutcome{Unit: rec.ShownIn()}
	if o.Unit != "" {
		if oc.Unit, err = linelist.ParseUnit(o.Unit); err != nil {
			return nil, failure.Errorf(failure.BadInput, "--unit %q: use %s", o.Unit, linelist.UnitChoices)
		}
	}
	if T := o.Temperature; T != 0 && (!(T >= thermo.MinTemperature) || T > thermo.MaxTemperature) {
		return nil, failure.Errorf(failure.BadInput, "--temperature %g K: give a temperature within %g…%g K", T, thermo.MinTemperature, thermo.MaxTemperature)
	}
	if o.Temperature > 0 && fit.OpenShell(c) {
		return nil, failure.Errorf(failure.BadInput, "--temperature: intensities of open-shell and electronic lines are not computed; leave --temperature out")
	}
	all, err := predictAll(c, rec, o, oc)
	if err != nil {
		return nil, err
	}
	fit.MarkExtrapolated(all, rec.Observed)
	for _, in := range []struct{ path, what string }{{o.Constants, "the constants record"}, {o.Lines, "the list of transitions (--lines)"}} {
		if a, _ := filepath.Abs(o.Out); a != "" && in.path != "" {
			if b, _ := filepath.Abs(in.path); a == b {
				return nil, failure.Errorf(failure.BadInput, "--out %s would overwrite %s", o.Out, in.what)
			}
		}
	}
	if err := writeFileAtomic(o.Out, func(w io.Writer) error { return fit.WritePredictions(w, all, oc.Unit, o.Temperature > 0) }); err != nil {
		return nil, err
	}
	oc.Lines = len(all)
	return oc, nil
}

// predictAll predicts the transitions of o.Lines, or the bands of each
// species.
func predictAll(c *constants.Set, rec *constants.Record, o PredictOptions, oc *PredictOutcome) ([]fit.Prediction, error) {
	if o.Lines != "" {
		return predictListed(c, o.Lines)
	}
	spp := c.Model.Species()
	if o.Species != "" {
		spp = []string{o.Species}
	}
	var all []fit.Prediction
	for _, sp := range spp {
		predict := predictSpecies
		if fit.OpenShell(c) {
			predict = predictOpenSpecies
		}
		ps, err := predict(c, rec, sp, o, oc)
		if err != nil {
			return nil, err
		}
		all = append(all, ps...)
	}
	return all, nil
}

// predictListed predicts exactly the transitions of the file at path (a
// line list whose positions may be left out; linelist.ReadTransitions), its
// levels checked against the record's electronic states.
func predictListed(c *constants.Set, path string) ([]fit.Prediction, error) {
	if why := textcheck.NotRegular(path); why != "" {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s %s", path, why)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, fmt.Errorf("pipelines: %w", err))
	}
	defer f.Close()
	list, err := linelist.ReadTransitions(f, path)
	if err != nil {
		return nil, err
	}
	if err := linelist.CheckStates(list, c.States()); err != nil {
		return nil, err
	}
	ps, err := fit.PredictLines(c, list.Lines)
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	return ps, nil
}

// predictOpenSpecies predicts the bands of one species of a record with
// electronic states or fine structure: every electric-dipole line of each
// band (fit.OpenBandTransitions), without intensities.
func predictOpenSpecies(c *constants.Set, _ *constants.Record, sp string, o PredictOptions, _ *PredictOutcome) ([]fit.Prediction, error) {
	var out []fit.Prediction
	for _, b := range o.Bands {
		ts, err := fit.OpenBandTransitions(c, sp, b, o.Branches, o.JMax)
		if err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
		ps, err := fit.PredictTransitions(c, ts)
		if err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
		out = append(out, ps...)
	}
	return out, nil
}

// predictSpecies predicts the bands of one species: the transitions of each
// band's branches, their positions and, with a temperature, intensities.
func predictSpecies(c *constants.Set, rec *constants.Record, sp string, o PredictOptions, oc *PredictOutcome) ([]fit.Prediction, error) {
	var intens map[assign.Spectrum]*assign.IntensityModel
	if o.Temperature > 0 {
		intens = map[assign.Spectrum]*assign.IntensityModel{}
	}
	var out []fit.Prediction
	for _, b := range o.Bands {
		if err := checkPlaced(c, rec, sp, b); err != nil {
			return nil, err
		}
		spec, branches, err := bandBranches(b, o.Spectrum, o.Branches, sp, oc)
		if err != nil {
			return nil, err
		}
		ts, err := fit.BandTransitions(sp, b, branches, o.JMax)
		if err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
		ps, err := fit.PredictTransitions(c, ts)
		if err != nil {
			if failure.KindOf(err) == failure.CannotCompute {
				return nil, err
			}
			return nil, failure.Wrap(failure.BadInput, err)
		}
		if intens != nil {
			if err := addIntensities(ps, c, sp, spec, o.Temperature, intens); err != nil {
				return nil, err
			}
		}
		out = append(out, ps...)
	}
	return out, nil
}

// checkPlaced refuses a band between two levels of species sp whose energy
// difference the fit did not determine: when the fit held a term value at 0
// for want of a connecting line (constants.Set.Unconnected), the levels fall
// into groups the observed bands (rec.Bands) connect, and a band across two
// groups has no known origin.
func checkPlaced(c *constants.Set, rec *constants.Record, sp string, b linelist.Band) error {
	s := model.SpeciesIndex(c.Model, sp)
	if s < 0 || b.VUp == b.VLo {
		return nil
	}
	group := map[int]int{}
	var find func(int) int
	find = func(v int) int {
		if g, ok := group[v]; ok && g != v {
			group[v] = find(g)
			return group[v]
		}
		group[v] = v
		return v
	}
	held := false
	for _, bd := range rec.Bands {
		if bd.Species != sp {
			continue
		}
		held = held || c.Unconnected(s, bd.VUp) || c.Unconnected(s, bd.VLo)
		if bd.VUp != bd.VLo {
			group[find(max(bd.VUp, bd.VLo))] = find(min(bd.VUp, bd.VLo))
		}
	}
	if !held || find(b.VUp) == find(b.VLo) {
		return nil
	}
	return failure.Errorf(failure.BadInput, "band %s of %s: the energy of v=%d above v=%d is not known (no line connected the two levels in the fit, which held a term value at 0); its lines cannot be predicted — fit a band that connects them, or fix the term value (--fix T_v%d=VALUE)", b, sp, b.VUp, b.VLo, max(b.VUp, b.VLo))
}

// bandBranches returns the spectrum of band b (o.Spectrum, or rotation for
// v′ = v″ and infrared otherwise) and the branches to predict: those asked
// for, or the spectrum's. A branch the spectrum does not have in a ¹Σ–¹Σ
// band is still predicted, with a warning (its intensity is 0).
func bandBranches(b linelist.Band, spectrum string, asked []string, sp string, oc *PredictOutcome) (assign.Spectrum, []string, error) {
	spec := assign.Infrared
	if b.VUp == b.VLo {
		spec = assign.Rotation
	}
	if spectrum != "" {
		var err error
		if spec, err = assign.ParseSpectrum(spectrum); err != nil {
			return 0, nil, failure.Wrap(failure.BadInput, err)
		}
	}
	djs, err := spec.DeltaJ(b)
	if err != nil {
		return 0, nil, failure.Wrap(failure.BadInput, err)
	}
	if len(asked) == 0 {
		var br []string
		for _, dj := range djs {
			br = append(br, linelist.BranchLetter(dj))
		}
		return spec, br, nil
	}
	for _, name := range asked {
		dj, ok := linelist.BranchDeltaJ(name)
		if !ok || slices.Contains(djs, dj) {
			continue
		}
		oc.Warnings = append(oc.Warnings, branchWarning(b, sp, spec, name, dj, djs))
	}
	return spec, asked, nil
}

// branchWarning says that branch name (ΔJ = dj) is not among the branches djs
// a ¹Σ–¹Σ band b of spectrum spec has.
func branchWarning(b linelist.Band, sp string, spec assign.Spectrum, name string, dj int, djs []int) string {
	var have []string
	for _, d := range djs {
		have = append(have, linelist.BranchLetter(d))
	}
	what := fmt.Sprintf("its %s lines are written as asked, with intensity 0", name)
	switch {
	case b.VUp == b.VLo && dj == 0:
		what = fmt.Sprintf("no %s lines are written (within one level they have zero frequency)", name)
	case b.VUp == b.VLo && dj < 0:
		what = fmt.Sprintf("no %s lines are written (within one level they are the lines of ΔJ = %+d read backwards)", name, -dj)
	}
	dJ := "0"
	if dj != 0 {
		dJ = fmt.Sprintf("%+d", dj)
	}
	return fmt.Sprintf("band %s of %s: a ¹Σ–¹Σ band of %s spectrum has no %s branch (ΔJ = %s; it has %s); %s",
		b, sp, spectrumName(spec), name, dJ, strings.Join(have, ", "), what)
}

// spectrumName names a spectrum with its article, for messages.
func spectrumName(s assign.Spectrum) string {
	switch s {
	case assign.Raman:
		return "a Raman"
	case assign.Rotation:
		return "a pure-rotation"
	}
	return "an infrared"
}

// addIntensities sets the relative intensities of ps at temperature T with
// assign's intensity model (Boltzmann population, 2J+1 and Hönl–London
// factors, nuclear-spin weights, natural abundance; one model per spectrum).
func addIntensities(ps []fit.Prediction, c *constants.Set, sp string, spec assign.Spectrum, T float64, models map[assign.Spectrum]*assign.IntensityModel) error {
	im := models[spec]
	if im == nil {
		st, err := assign.StartFromConstants(c, "", nil)
		if err != nil {
			return failure.Wrap(failure.BadInput, err)
		}
		if err := st.Select([]string{sp}); err != nil {
			return failure.Wrap(failure.BadInput, err)
		}
		if im, err = assign.NewIntensityModel(spec, T, st.Species[0]); err != nil {
			return failure.Wrap(failure.BadInput, err)
		}
		models[spec] = im
	}
	for i := range ps {
		p := &ps[i]
		t := assign.Transition{Species: sp, VUp: p.Up.V, JUp: p.Up.J, VLo: p.Lo.V, JLo: p.Lo.J}
		p.Intensity = im.RelativeIntensity(t, p.Position)
	}
	return nil
}

// writeFileAtomic writes a single file through a temporary file renamed into
// place (google/renameio). Missing parent folders are created, and removed
// again when the write fails.
func writeFileAtomic(path string, fn func(io.Writer) error) (err error) {
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		return fmt.Errorf("pipelines: %s is a folder; give a file name", path)
	}
	abs, err := filepath.Abs(path)
	if err != nil {
		return fmt.Errorf("pipelines: %w", err)
	}
	var created []string
	for p := filepath.Dir(abs); ; p = filepath.Dir(p) {
		if _, err := os.Lstat(p); err == nil || filepath.Dir(p) == p {
			break
		}
		created = append(created, p) // innermost first
	}
	defer func() {
		if err != nil {
			for _, p := range created {
				if os.Remove(p) != nil {
					break
				}
			}
		}
	}()
	if err := os.MkdirAll(filepath.Dir(abs), 0o755); err != nil {
		return fmt.Errorf("pipelines: %w", err)
	}
	t, err := renameio.NewPendingFile(path)
	if err != nil {
		return fmt.Errorf("pipelines: %w", err)
	}
	defer t.Cleanup()
	if err := fn(t); err != nil {
		return fmt.Errorf("pipelines: writing %s: %w", path, err)
	}
	if err := t.CloseAtomicallyReplace(); err != nil {
		return fmt.Errorf("pipelines: writing %s: %w", path, err)
	}
	return nil
}

// LoadStates reads the electronic-states file at path (states.Read); an
// empty path gives nil.
func LoadStates(path string) (*states.File, error) {
	if path == "" {
		return nil, nil
	}
	if why := textcheck.NotRegular(path); why != "" {
		return nil, failure.Errorf(failure.BadInput, "pipelines: %s %s", path, why)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("pipelines: %w", err)
	}
	defer f.Close()
	sf, err := states.Read(f, path)
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	return sf, nil
}
