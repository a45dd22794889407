package constants

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"runtime"
	"strings"
	"testing"
)

// demoRecord returns testdata/record-demo.json decoded into generic JSON, for
// edits such as a person makes by hand.
func demoRecord(t *testing.T) map[string]any {
	t.Helper()
	b, err := os.ReadFile("testdata/record-demo.json")
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

func encode(t *testing.T, m map[string]any) []byte {
	t.Helper()
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// covOf returns the covariance rows of a generic record.
func covOf(m map[string]any) [][]any {
	var out [][]any
	for _, r := range m["covariance"].([]any) {
		out = append(out, r.([]any))
	}
	return out
}

// TestReadRecordHandEdits: what a text editor or a careless edit does to a
// record is read, or refused with a message naming the file and the place.
func TestReadRecordHandEdits(t *testing.T) {
	good, err := os.ReadFile("testdata/record-demo.json")
	if err != nil {
		t.Fatal(err)
	}
	// Read as it is, with a byte-order mark, with CRLF line ends, on one line.
	var one bytes.Buffer
	if err := json.Compact(&one, good); err != nil {
		t.Fatal(err)
	}
	for name, b := range map[string][]byte{
		"plain": good, "bom": append([]byte("\xef\xbb\xbf"), good...),
		"crlf": bytes.ReplaceAll(good, []byte("\n"), []byte("\r\n")), "one line": one.Bytes(),
	} {
		if _, err := Read(bytes.NewReader(b), "c.json"); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}

	edit := func(f func(m map[string]any)) []byte {
		m := demoRecord(t)
		f(m)
		return encode(t, m)
	}
	param := func(m map[string]any, i int) map[string]any {
		return m["parameters"].([]any)[i].(map[string]any)
	}
	cases := []struct {
		name string
		in   []byte
		want string
	}{
		{"empty", nil, "c.json: not a constants record: the file is empty"},
		{"blank", []byte(" \n\t\n"), "the file is empty"},
		{"cut short", good[:len(good)/2], "the file ends in the middle of the JSON"},
		{"syntax", bytes.Replace(good, []byte(`"model": "dunham",`), []byte(`"model": "dunham"`), 1), "c.json:4:4: not a constants record: invalid character"},
		{"NaN", bytes.Replace(good, []byte(`"value": 2169.8118597955`), []byte(`"value": NaN`), 1), "c.json:16:17: not a constants record: invalid character 'N'"},
		{"trailing", append(append([]byte{}, good...), []byte("\n{\"schema\": 1}\n")...), "more follows the record's closing brace"},
		{"wrong type", bytes.Replace(good, []byte(`"value": 2169.8118597955`), []byte(`"value": "2169.8"`), 1), "c.json:16:24: parameters.value: "},
		{"duplicate key", bytes.Replace(good, []byte(`"value": 2169.8118597955,`), []byte(`"value": 2169.8118597955, "value": 2170.5,`), 1), "c.json:16:"},
		{"duplicate key path", bytes.Replace(good, []byte(`"value": 2169.8118597955,`), []byte(`"value": 2169.8118597955, "value": 2170.5,`), 1), "parameters[0].value: the key is given twice"},
		{"not UTF-8", bytes.Replace(good, []byte(`"model": "dunham"`), []byte("\"model\": \"dunh\xe4m\""), 1), "c.json:3:17: not UTF-8 text: byte 0xE4"},
		{"future schema", bytes.Replace(good, []byte(Schema), []byte("bandwright.constants/99"), 1), "written by a newer bandwright"},
		{"unit", edit(func(m map[string]any) { m["unit"] = "MHz" }), `unit: "MHz"; a constants record holds its constants in cm-1`},
		{"display unit", edit(func(m map[string]any) { m["display_unit"] = "THz" }), `display_unit: "THz"; use cm-1, MHz or GHz`},
		{"unconnected non-T", edit(func(m map[string]any) { param(m, 3)["unconnected"] = true }), "parameters: Y01: unconnected applies to a fixed term value T_v only"},
		{"Dunham indices", edit(func(m map[string]any) { param(m, 3)["k"] = 5.0 }), "parameters: Y01: k = 5, l = 1 do not match the name"},
		{"negative sigma", edit(func(m map[string]any) { param(m, 3)["sigma"] = -1e-6 }), "Y01: value and sigma must be finite"},
		{"negative variance", edit(func(m map[string]any) {
			c := covOf(m)
			c[3][3] = -c[3][3].(float64)
		}), "covariance: the variance of Y01 is negative"},
		{"sigma edited", edit(func(m map[string]any) { param(m, 3)["sigma"] = 2 * param(m, 3)["sigma"].(float64) }), "covariance: Y01 has sigma"},
		{"correlation beyond 1", edit(func(m map[string]any) {
			c := covOf(m)
			x := 1.5 * math.Sqrt(c[3][3].(float64)*c[4][4].(float64))
			c[3][4], c[4][3] = x, x
		}), "covariance: the correlation of Y01 and Y11 is 1.5, outside −1…1"},
		{"not positive semi-definite", edit(func(m map[string]any) {
			// Y10, Y20, Y30 pairwise correlated by −0.6: each pair is possible,
			// the three together are not (eigenvalue 1 + 2·(−0.6) = −0.2).
			c := covOf(m)
			for _, ij := range [][2]int{{0, 1}, {0, 2}, {1, 2}} {
				i, j := ij[0], ij[1]
				x := -0.6 * math.Sqrt(c[i][i].(float64)*c[j][j].(float64))
				c[i][j], c[j][i] = x, x
			}
			for _, k := range []int{3, 4, 5} {
				for _, i := range []int{0, 1, 2} {
					c[i][k], c[k][i] = 0.0, 0.0
				}
			}
		}), "covariance: not positive semi-definite (the correlation matrix has the eigenvalue -0.2"},
		{"zero variance", edit(func(m map[string]any) {
			c := covOf(m)
			c[5][5] = 0.0
			param(m, 5)["sigma"] = 0.0
		}), "covariance: Y02 has zero variance but covariance"},
	}
	for _, c := range cases {
		_, err := Read(bytes.NewReader(c.in), "c.json")
		if err == nil || !strings.HasPrefix(err.Error(), "constants: c.json") || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want %q", c.name, err, c.want)
		}
	}

	// A singular covariance that is positive semi-definite is a record the
	// uncertainty propagation can use: read.
	b := edit(func(m map[string]any) {
		c := covOf(m)
		for i := range c {
			c[5][i], c[i][5] = 0.0, 0.0
		}
		param(m, 5)["sigma"] = 0.0
	})
	if _, err := Read(bytes.NewReader(b), "c.json"); err != nil {
		t.Errorf("singular positive semi-definite covariance: %v", err)
	}
}

// BenchmarkReadMemory measures the memory the constants-record reader needs
// per MB of input, for the README's promises: records of about 1 and 5 MB
// (a term-values record with many levels and its full covariance).
func BenchmarkReadMemory(b *testing.B) {
	for _, n := range []int{95, 210} { // levels: about 1 and 5 MB of covariance
		rec := bigRecord(n)
		mb := float64(len(rec)) / (1 << 20)
		b.Run(fmt.Sprintf("%.0fMB", mb), func(b *testing.B) {
			var alloc float64
			for b.Loop() {
				var m0, m1 runtime.MemStats
				runtime.ReadMemStats(&m0)
				if _, err := Read(bytes.NewReader(rec), "big.json"); err != nil {
					b.Fatal(err)
				}
				runtime.ReadMemStats(&m1)
				alloc = float64(m1.TotalAlloc-m0.TotalAlloc) / (1 << 20)
			}
			b.ReportMetric(alloc/mb, "alloc-MB/MB")
		})
	}
}

// bigRecord writes a term-values record of five CO isotopologues with the
// term value and rotational constant of levels v = 0 … (up to 90 each), n
// levels in all (n ≤ 455), and the full covariance of the fitted ones (every
// entry written, as the writer does).
func bigRecord(n int) []byte {
	var b bytes.Buffer
	sp := []string{"12C16O", "13C16O", "12C18O", "13C18O", "12C17O"}
	used, _ := json.Marshal(sp[:(n+90)/91])
	fmt.Fprintf(&b, `{"schema":"bandwright.constants/1","model":"term-values","unit":"cm-1","species":%s,"parameters":[`, used)
	fitted := 0
	for i := range n {
		if i > 0 {
			b.WriteByte(',')
		}
		v := i % 91
		fmt.Fprintf(&b, `{"name":"T","v":%d,"species":%q,"value":%.10g,"sigma":%s,"fixed":%v},`, v, sp[i/91], 2143.0*float64(v), map[bool]string{true: "0", false: "1e-6"}[v == 0], v == 0)
		fmt.Fprintf(&b, `{"name":"B","v":%d,"species":%q,"value":%.10g,"sigma":1e-6,"fixed":false}`, v, sp[i/91], 1.93-0.0175*float64(v))
		fitted += 2
		if v == 0 {
			fitted--
		}
	}
	b.WriteString(`],"covariance":[`)
	for i := range fitted {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteByte('[')
		for j := range fitted {
			if j > 0 {
				b.WriteByte(',')
			}
			c := 1e-18
			if i == j {
				c = 1e-12
			}
			fmt.Fprintf(&b, "%.17g", c)
		}
		b.WriteByte(']')
	}
	b.WriteString("]}")
	return b.Bytes()
}
