package pipelines

import (
	"fmt"
	"io"
	"io/fs"
	"path"
	"path/filepath"

	"bandwright"
	"bandwright/pipelines/outdir"
)

// DemoOutcome says where the demo wrote its results.
type DemoOutcome struct {
	Out    string
	Inputs string // folder of the copied inputs
	Chain  *ChainOutcome
}

// RunDemo copies the embedded invented scenario (a peak list, starting
// constants and a pipeline file) into out/inputs and runs the whole chain on
// it — assign, fit, thermo, report — into out/results.
func RunDemo(out string) (*DemoOutcome, error) {
	if out == "" {
		out = "bandwright-demo"
	}
	inDir := filepath.Join(out, "inputs")
	d, err := outdir.Begin(inDir)
	if err != nil {
		return nil, err
	}
	defer d.Abort()
	entries, err := fs.ReadDir(bandwright.Demo, "testdata/demo")
	if err != nil {
		return nil, fmt.Errorf("pipelines: demo data: %w", err)
	}
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
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	p, err := LoadPipeline(filepath.Join(inDir, "pipeline.toml"))
	if err != nil {
		return nil, err
	}
	oc, err := RunChain(ChainOptions{Inputs: []string{filepath.Join(inDir, "peaks.csv")}, Pipeline: p, Out: filepath.Join(out, "results")})
	if err != nil {
		return nil, err
	}
	return &DemoOutcome{Out: out, Inputs: inDir, Chain: oc}, nil
}
