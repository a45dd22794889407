package textcheck

import (
	"errors"
	"os"
	"strings"
	"testing"
)

func TestInvalidUTF8(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"café", ""},
		{"caf\xe9", "not UTF-8 text: byte 0xE9 at character 4 (save the file as UTF-8)"},
		{"\xff", "byte 0xFF at character 1"},
		{"αβ\xc3", "byte 0xC3 at character 3"}, // a truncated two-byte sequence
		{"ok\uFFFDok", ""},                     // the replacement character itself is valid text
	} {
		if got := InvalidUTF8(c.in); (c.want == "") != (got == "") || !strings.Contains(got, c.want) {
			t.Errorf("%q: %q, want %q", c.in, got, c.want)
		}
	}
}

func TestLineCol(t *testing.T) {
	b := []byte("ab\ncde\n\nf")
	for _, c := range []struct {
		off       int64
		line, col int
	}{{0, 1, 1}, {2, 1, 3}, {3, 2, 1}, {5, 2, 3}, {7, 3, 1}, {8, 4, 1}, {9, 4, 2}, {99, 4, 2}, {-1, 1, 1}} {
		if l, col := LineCol(b, c.off); l != c.line || col != c.col {
			t.Errorf("offset %d: %d:%d, want %d:%d", c.off, l, col, c.line, c.col)
		}
	}
}

func TestDecimalCommaHint(t *testing.T) {
	b := []byte("a = 1.5\nb = 10,60\nc = [1, 2]\nd = \"x,1\"\n")
	for line, want := range map[int]bool{1: false, 2: true, 3: false, 4: false, 0: false, 9: false} {
		if got := DecimalCommaHint(b, line) != ""; got != want {
			t.Errorf("line %d: hint %v", line, got)
		}
	}
}

func TestKeyLine(t *testing.T) {
	b := []byte(`# an electronic-states file
species = "16O16O"
dissociation_energy = 41260.0
[[state]]
label = "X"
term_energy = 0.0
[[state]]
label = "a"
  "term_energy" = 7918.1
[fit]
reject = 3
`)
	for _, c := range []struct {
		table string
		index int
		key   string
		want  int
	}{
		{"", -1, "species", 2}, {"", -1, "dissociation_energy", 3}, {"", -1, "label", 0},
		{"state", 0, "label", 5}, {"state", 1, "label", 8}, {"state", 1, "term_energy", 9},
		{"state", 0, "", 4}, {"state", 1, "", 7}, {"state", 2, "label", 0},
		{"fit", -1, "reject", 11}, {"fit", -1, "", 10}, {"fit", -1, "model", 0},
	} {
		if got := KeyLine(b, c.table, c.index, c.key); got != c.want {
			t.Errorf("%s[%d].%s: line %d, want %d", c.table, c.index, c.key, got, c.want)
		}
	}
	if At("f.toml", 0) != "f.toml" || At("f.toml", 7) != "f.toml:7" {
		t.Error("At")
	}
}

// TestOpenReason: an open error names its cause once, without the path the
// problem report already gives.
func TestOpenReason(t *testing.T) {
	_, err := os.Open("/no/such/dir/x.csv")
	if got := OpenReason(err); got != "cannot open: no such file or directory" {
		t.Errorf("OpenReason = %q", got)
	}
	if got := OpenReason(errors.New("boom")); got != "boom" {
		t.Errorf("non-path error: %q", got)
	}
}
