package pipelines

import (
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

func TestParsePipeline(t *testing.T) {
	good := `name = "co-cell-nightly"
input = "peaks"
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
card = "/abs/card.toml"
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
	if p.Thermo.Card != "/abs/card.toml" {
		t.Errorf("absolute path changed: %q", p.Thermo.Card)
	}
	o := p.FitOptions([]string{"x.csv"}, "out")
	if o.Reject != 0 || o.Model != "dunham" || len(o.Terms) != 5 {
		t.Errorf("fit options not carried over: %+v", o)
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
		{"[fit]\nreject = -1\n", "fit.reject"},
		{"[report]\nformats = [\"pdf\"]\n", "report.formats"},
		{"name = \n", "pipe.toml:1"},
	}
	for _, c := range bad {
		_, err := ParsePipeline([]byte(c.text), "pipe.toml")
		if err == nil {
			t.Errorf("%q: no error", c.text)
			continue
		}
		var ue UsageError
		if !errors.As(err, &ue) || ExitCode(err) != 1 {
			t.Errorf("%q: want a usage error (exit 1), got %T", c.text, err)
		}
		if !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "pipe.toml") {
			t.Errorf("%q: error %q should name the file and %q", c.text, err, c.want)
		}
	}
}
