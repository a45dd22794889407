package textcheck

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"
)

// depthOf is the nesting depth of a decoded value: 0 for a scalar, one more
// than its deepest element for a map or a slice.
func depthOf(v any) int {
	d := 0
	switch x := v.(type) {
	case map[string]any:
		for _, e := range x {
			d = max(d, depthOf(e))
		}
		return d + 1
	case []any:
		for _, e := range x {
			d = max(d, depthOf(e))
		}
		return d + 1
	case []map[string]any:
		for _, e := range x {
			d = max(d, depthOf(e))
		}
		return d + 1
	}
	return 0
}

// FuzzTOMLNesting: the scan never panics, and never counts less than the
// depth of what the TOML library decodes (the top-level table not counted),
// so a file it accepts cannot nest deeper than MaxNesting.
func FuzzTOMLNesting(f *testing.F) {
	for _, s := range []string{
		"a.b.c = 1\n[t]\nx = [1, [2, {y = 3}]]\n",
		"[[s]]\nname = \"x\"\n[[s]]\nk = '''\n[[[\n'''\n",
		"[" + strings.Repeat("a.", 70) + "z]\n",
		"x = " + strings.Repeat("{a = ", 70) + "1" + strings.Repeat("}", 70),
		`"a.b" = { "c.d" = [ [ ] ] } # [[[`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		s := tomlScan{b: b, max: math.MaxInt, line: 1, keyMode: true}
		for s.i < len(s.b) {
			if err := s.step(); err != nil {
				t.Fatal(err)
			}
		}
		var v map[string]any
		if _, err := toml.Decode(string(b), &v); err != nil {
			return
		}
		if d := depthOf(v) - 1; d > s.seen {
			t.Fatalf("scan counted %d levels, the decoded value has %d", s.seen, d)
		}
	})
}

// FuzzJSONNesting: the scan never panics and never counts less than the
// depth of what encoding/json decodes.
func FuzzJSONNesting(f *testing.F) {
	for _, s := range []string{
		`{"a": [1, {"b": "[[[\"{"}]}`,
		strings.Repeat("[", 70) + strings.Repeat("]", 70),
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, b []byte) {
		err := JSONNesting(b, MaxNesting)
		var v any
		if json.Unmarshal(b, &v) != nil {
			return
		}
		if d := depthOf(v); err == nil && d > MaxNesting {
			t.Fatalf("accepted a value %d levels deep", d)
		}
	})
}
