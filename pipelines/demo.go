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

// DemoOutcome says where the demo wrote its results: the first scenario's
// (the CO cell: a peak list through assign) in Out/inputs and Out/results,
// the second's (the NO cell: an assigned open-shell line list) in
// Out/nitric-oxide/inputs and Out/nitric-oxide/results.
type DemoOutcome struct {
	Out    string
	Inputs string // folder of the copied inputs
	Chain  *ChainOutcome
	// OpenShell is the second scenario.
	OpenShell *DemoScenario
}

// DemoScenario is one scenario of the demo: where its inputs were copied
// and what its chain produced.
type DemoScenario struct {
	Inputs string
	Chain  *ChainOutcome
}

// The scenarios of the demo: the embedded folder, the input the chain
// runs on, and the folder under the demo's output (empty: the output itself).
var demoScenarios = []struct{ embedded, input, sub string }{
	{"testdata/demo", "peaks.csv", ""},
	{"testdata/demo/nitric-oxide", "lines.csv", "nitric-oxide"},
}

// RunDemo copies the embedded invented scenarios into out and runs the whole
// chain on each: a peak list of a CO cell (assign, fit, thermo, report) into
// out/results, and an assigned line list of an NO cell (fit with the ²Π fine
// structure, thermo, report) into out/nitric-oxide/results.
func RunDemo(out string) (*DemoOutcome, error) {
	if out == "" {
		out = "bandwright-demo"
	}
	var runs []*DemoScenario
	for _, sc := range demoScenarios {
		r, err := runDemoScenario(sc.embedded, sc.input, filepath.Join(out, sc.sub))
		if err != nil {
			return nil, err
		}
		runs = append(runs, r)
	}
	return &DemoOutcome{Out: out, Inputs: runs[0].Inputs, Chain: runs[0].Chain, OpenShell: runs[1]}, nil
}

// runDemoScenario copies the files of the embedded folder dir into
// base/inputs and runs its pipeline.toml on input into base/results.
func runDemoScenario(dir, input, base string) (*DemoScenario, error) {
	inDir := filepath.Join(base, "inputs")
	d, err := outdir.Begin(inDir)
	if err != nil {
		return nil, err
	}
	defer d.Abort()
	entries, err := fs.ReadDir(bandwright.Demo, dir)
	if err != nil {
		return nil, fmt.Errorf("pipelines: demo data: %w", err)
	}
	for _, e := range entries {
		if e.IsDir() {
			continue
		}
		name := e.Name()
		if err := d.Write(name, func(w io.Writer) error {
			b, err := fs.ReadFile(bandwright.Demo, path.Join(dir, name))
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
	oc, err := RunChain(ChainOptions{Inputs: []string{filepath.Join(inDir, input)}, Pipeline: p, Out: filepath.Join(base, "results")})
	if err != nil {
		return nil, err
	}
	return &DemoScenario{Inputs: inDir, Chain: oc}, nil
}
