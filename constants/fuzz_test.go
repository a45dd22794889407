package constants

import (
	"bytes"
	"math"
	"os"
	"strings"
	"testing"
)

// FuzzReadRecord feeds arbitrary bytes to the constants-record reader: it must
// never panic, and a record it accepts must rebuild a model whose energies
// are finite at low v, J and whose covariance has the size of the fitted set.
func FuzzReadRecord(f *testing.F) {
	if b, err := os.ReadFile("testdata/record-demo.json"); err == nil {
		f.Add(b)
	}
	f.Add([]byte(`{"schema":"bandwright.constants/2","model":"term-values","species":["12C16O"],"parameters":[{"name":"T","v":0,"species":"12C16O","value":0,"sigma":0,"fixed":true},{"name":"B","v":0,"species":"12C16O","value":1.9,"sigma":1e-6,"fixed":false}],"covariance":[[1e-12]]}`))
	f.Add([]byte(`{"schema":"bandwright.constants/2"}`))
	// Deep nesting: refused before the parser and the duplicate-key check see it.
	f.Add([]byte(`{"schema":"bandwright.constants/2","x":` + strings.Repeat(`{"a":`, 2000) + "1" + strings.Repeat("}", 2000) + "}"))
	f.Add([]byte(strings.Repeat("[", 65) + strings.Repeat("]", 65)))
	f.Add([]byte("\xef\xbb\xbf" + `{"schema":"bandwright.constants/2","model":"term-values","unit":"cm-1","species":["12C16O"],"parameters":[{"name":"T","v":0,"species":"12C16O","value":0,"sigma":0,"fixed":true},{"name":"B","v":0,"species":"12C16O","value":1.9,"value":2,"sigma":1e-6,"fixed":false}],"covariance":[[1e-12]]} {}`))
	f.Add([]byte(`{"schema":"bandwright.constants/2","model":"dunham","unit":"cm-1","species":["12C16O"],"parameters":[{"name":"Y01","k":0,"l":1,"value":1.9,"sigma":1e-6,"fixed":false},{"name":"Y11","k":1,"l":1,"value":-0.0175,"sigma":1e-6,"fixed":false}],"covariance":[[1e-12,2e-12],[2e-12,1e-12]]}`))
	f.Add([]byte(`{"schema":"bandwright.constants/2","model":"dunham","species":["12C16O"],"parameters":[{"name":"Y01","k":0,"l":1,"value":1.9,"sigma":0,"fixed":false}],"covariance":[[NaN]]}`))
	f.Fuzz(func(t *testing.T, b []byte) {
		rec, err := Read(bytes.NewReader(b), "fuzz.json")
		if err != nil {
			return
		}
		c, err := rec.Constants()
		if err != nil {
			t.Fatalf("Read accepted a record whose Constants fail: %v", err)
		}
		if c.Cov.SymmetricDim() != max(len(c.Free), 1) {
			t.Fatalf("covariance %d for %d fitted parameters", c.Cov.SymmetricDim(), len(c.Free))
		}
		for s := range c.Model.Species() {
			if !c.Model.HasLevel(s, 0) {
				continue
			}
			e := c.Energy(s, 0, 1, make([]float64, len(c.Free)))
			if math.IsNaN(e) && !anyNaN(c.Values) {
				t.Fatalf("NaN energy from finite parameters")
			}
		}
	})
}

func anyNaN(xs []float64) bool {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return true
		}
	}
	return false
}
