package pipelines

import (
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"

	"bandwright"
)

// DemoOutcome says where the demo wrote its results.
type DemoOutcome struct {
	Out    string
	Inputs []string
	Fit    *FitOutcome
}

// RunDemo copies the embedded invented scenario into out/inputs and runs every
// stage on it: today the fit, into out/fit.
func RunDemo(out string) (*DemoOutcome, error) {
	if out == "" {
		out = "bandwright-demo"
	}
	inDir := filepath.Join(out, "inputs")
	d, err := beginDir(inDir)
	if err != nil {
		return nil, err
	}
	defer d.Abort()
	entries, err := fs.ReadDir(bandwright.Demo, "testdata/demo")
	if err != nil {
		return nil, fmt.Errorf("pipelines: demo data: %w", err)
	}
	var inputs []string
	for _, e := range entries {
		name := e.Name()
		if err := d.Write(name, func(w io.Writer) error {
			b, err := fs.ReadFile(bandwright.Demo, path.Join("testdata/demo", name))
			if err != nil {
				return err
			}
			_, err = w.Write(b)
			return err
		}); err != nil {
			return nil, err
		}
		if path.Ext(name) == ".csv" {
			inputs = append(inputs, filepath.Join(inDir, name))
		}
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	oc := &DemoOutcome{Out: out, Inputs: inputs}
	fo, err := RunFit(FitOptions{
		Inputs: inputs, Model: "dunham",
		Terms:  []string{"Y10", "Y20", "Y01", "Y11", "Y21", "Y02"},
		Reject: 3, Calibrate: true, Out: filepath.Join(out, "fit"),
	})
	if err != nil {
		return nil, err
	}
	oc.Fit = fo
	return oc, nil
}

func beginDir(p string) (*outdirDir, error) { return outdirBegin(p) }

var _ = os.Stat
