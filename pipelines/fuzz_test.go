package pipelines

import (
	"strings"
	"testing"

	"bandwright/internal/failure"
)

// FuzzParsePipeline: arbitrary pipeline-file content never panics, and every
// refusal is bad input (exit code 1) that names the file.
func FuzzParsePipeline(f *testing.F) {
	f.Add([]byte("name = \"co\"\ninput = \"lines\"\n[fit]\nmodel = \"dunham\"\nterms = [\"Y10\", \"Y01\"]\n"))
	f.Add([]byte("input = \"peaks\"\n[assign]\nstart = \"s.toml\"\nbands = [\"1-0\"]\n[thermo]\nrange = \"10:6000:1\"\n[report]\nformats = [\"md\"]\n"))
	f.Add([]byte("[fit]\nreject = -1\n"))
	f.Add([]byte("[fit]\nx = " + strings.Repeat("{a = ", 8000) + "1" + strings.Repeat("}", 8000) + "\n"))
	f.Add([]byte("[" + strings.Repeat("fit.", 2000) + "x]\n"))
	f.Add([]byte("[thermo]\ntemperatures = " + strings.Repeat("[", 100) + strings.Repeat("]", 100) + "\n"))
	f.Add([]byte("[[fit]]\n"))
	f.Add([]byte("\xff\xfe"))
	f.Add([]byte(""))
	f.Add([]byte("\xef\xbb\xbfinput = \"lines\"\n[fit]\nreject = nan\n[thermo]\ntemperatures = [298.15, 1e9]\nrange = \"10:20:1\"\n"))
	f.Add([]byte("[assign]\nstart = \"s.toml\"\ntemperature = 296,5\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		p, err := ParsePipeline(b, "fuzz.toml")
		if err != nil {
			if failure.KindOf(err) != failure.BadInput {
				t.Fatalf("refusal is not a usage error: %T %v", err, err)
			}
			return
		}
		if p.Input != InputLines && p.Input != InputPeaks {
			t.Fatalf("accepted input %q", p.Input)
		}
	})
}
