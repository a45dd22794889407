package pipelines

import (
	"path/filepath"
	"strings"
	"testing"

	"bandwright/internal/failure"
	"bandwright/thermo"
)

func TestParsePipeline(t *testing.T) {
	good := `name = "co-cell-nightly"
input = "peaks"
states = "/abs/states.toml"
[assign]
start = "start.toml"
bands = ["1-0", "2-1"]
[fit]
model = "dunham"
terms = ["Y10", "Y20", "Y01", "Y11", "Y02"]
reject = 0
[thermo]
temperatures = [298.15, 1000.0]
composition = "natural"
[report]
formats = ["html", "md"]
`
	p, err := ParsePipeline([]byte(good), filepath.Join("lab", "pipe.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if p.Assign.Start != filepath.Join("lab", "start.toml") {
		t.Errorf("relative path not resolved against the pipeline's folder: %q", p.Assign.Start)
	}
	if p.States != "/abs/states.toml" {
		t.Errorf("absolute path changed: %q", p.States)
	}
	if p2, err := ParsePipeline([]byte("[fit]\nunit = \"MHz\"\n"), "pipe.toml"); err != nil || p2.FitOptions(nil, "").Unit != "MHz" {
		t.Errorf("fit.unit not carried over: %v", err)
	}
	o := p.FitOptions([]string{"x.csv"}, "out")
	if o.Reject != 0 || o.Model != "dunham" || len(o.Terms) != 5 || o.States != "/abs/states.toml" {
		t.Errorf("fit options not carried over: %+v", o)
	}
	if to, err := p.thermoOptions("c.json"); err != nil || to.Composition != "natural" || to.Temperatures != "298.15,1000" || to.States != "/abs/states.toml" {
		t.Errorf("thermo options not carried over: %+v %v", to, err)
	}
	if len(p.Hash) != 64 {
		t.Errorf("pipeline hash %q", p.Hash)
	}

	bad := []struct{ text, want string }{
		{"name = \"x\"\n[fit]\nmodle = \"dunham\"\n", "unknown key fit.modle"},
		{"colour = 3\n", "unknown key colour"},
		{"input = \"spectra\"\n", "input"},
		{"input = \"peaks\"\n", "[assign]"},
		{"[fit]\nmodel = \"spline\"\n", "fit.model"},
		{"[fit]\nunit = \"THz\"\n", "pipe.toml:2: fit.unit: \"THz\"; use cm-1, MHz or GHz"},
		{"[fit]\nreject = -1\n", "fit.reject"},
		{"[report]\nformats = [\"pdf\"]\n", "report.formats"},
		{"[thermo]\nnasa_limits = \"200-6000\"\n", "thermo.nasa_limits"},
		{"name = \n", "pipe.toml:1"},
		{"", "the file is empty"},
		{"# only a comment\n\n", "the file is empty"},
		// The line of the key, and hints for what hand-made files get wrong.
		{"name = \"x\"\n[fit]\nmodle = \"dunham\"\n", "pipe.toml:3: unknown key fit.modle"},
		{"# a pipeline\n[fit]\nreject = -1\n", "pipe.toml:3: fit.reject"},
		{"[fit]\nreject = nan\n", "pipe.toml:2: fit.reject"},
		{"[assign]\nstart = \"s.toml\"\nbands = [\"1-0\"]\ntemperature = 296,5\n", "pipe.toml:4: "},
		{"[assign]\nstart = \"s.toml\"\nbands = [\"1-0\"]\ntemperature = 296,5\n", "(decimal comma?"},
		{"[assign]\nstart = \"s.toml\"\ntemperature = -296.0\n", "pipe.toml:3: assign.temperature"},
		{"[thermo]\ntemperatures = [298.15, inf]\n", "pipe.toml:2: thermo.temperatures: entry 2"},
		{"[thermo]\ntemperatures = [0.001]\n", "thermo.temperatures: entry 1: 0.001 K is outside"},
		{"[thermo]\nrange = \"10:1e9:1\"\n", "pipe.toml:2: thermo.range"},
		{"[thermo]\nmc = -5\n", "pipe.toml:2: thermo.mc"},
		{"name = \"caf\xe9\"\n", "pipe.toml:1: "},
		{"\xef\xbb\xbfname = \"x\"\ninput = \"spectra\"\n", "pipe.toml:2: input"},
	}
	for _, c := range bad {
		_, err := ParsePipeline([]byte(c.text), "pipe.toml")
		if err == nil {
			t.Errorf("%q: no error", c.text)
			continue
		}
		if failure.KindOf(err) != failure.BadInput || failure.ExitCode(err) != 1 {
			t.Errorf("%q: want bad input (exit 1), got %T of kind %v", c.text, err, failure.KindOf(err))
		}
		if !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "pipe.toml") {
			t.Errorf("%q: error %q should name the file and %q", c.text, err, c.want)
		}
	}
}

// TestSeedDefault: a pipeline file without thermo.seed draws with the seed of
// --seed's default, and an explicit seed (0 included) is taken as given.
func TestSeedDefault(t *testing.T) {
	for _, tc := range []struct {
		text string
		want uint64
	}{
		{"[thermo]\nmc = 10\n", thermo.DefaultSeed},
		{"name = \"x\"\n", thermo.DefaultSeed},
		{"[thermo]\nmc = 10\nseed = 0\n", 0},
		{"[thermo]\nmc = 10\nseed = 7\n", 7},
	} {
		p, err := ParsePipeline([]byte(tc.text), "pipe.toml")
		if err != nil {
			t.Fatal(err)
		}
		to, err := p.thermoOptions("c.json")
		if err != nil || to.Seed != tc.want {
			t.Errorf("%q: seed %d (%v), want %d", tc.text, to.Seed, err, tc.want)
		}
	}
}
