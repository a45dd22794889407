package pipelines

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/google/renameio/v2"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
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

// RunPredict writes the predicted lines of the given bands to out (atomically)
// and returns how many were written.
func RunPredict(constants, sp string, bands []linelist.Band, jmax int, branches []string, out string) (int, error) {
	_, c, err := LoadConstants(constants)
	if err != nil {
		return 0, err
	}
	spp := c.Model.Species()
	if sp != "" {
		spp = []string{sp}
	}
	var all []fit.Prediction
	for _, s := range spp {
		ps, err := fit.Predict(c, s, bands, jmax, branches)
		if err != nil {
			return 0, failure.Wrap(failure.BadInput, err)
		}
		all = append(all, ps...)
	}
	if a, _ := filepath.Abs(out); a != "" {
		if b, _ := filepath.Abs(constants); a == b {
			return 0, failure.Errorf(failure.BadInput, "predict: --out %s would overwrite the constants record", out)
		}
	}
	if err := writeFileAtomic(out, func(w io.Writer) error { return fit.WritePredictions(w, all) }); err != nil {
		return 0, err
	}
	return len(all), nil
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
