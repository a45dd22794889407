package textcheck

import (
	"errors"
	"strings"
	"testing"
)

func TestJSONNesting(t *testing.T) {
	for _, c := range []struct {
		name string
		text string
		line int // 0: accepted
	}{
		{"record-like", `{"a": [1, 2, {"b": [3]}], "s": "[[[[[[["}`, 0},
		{"exactly 64", strings.Repeat("[", 64) + strings.Repeat("]", 64), 0},
		{"65", strings.Repeat("[", 65) + strings.Repeat("]", 65), 1},
		{"on line 3", "{\n\"a\":\n" + strings.Repeat(`{"a":`, 70), 3},
		{"escaped quote in string", `{"a\"[[": ` + strings.Repeat("[", 64) + strings.Repeat("]", 64) + "}", 1},
		{"100 000 deep", strings.Repeat(`{"a":`, 100000), 1},
	} {
		checkNesting(t, c.name, JSONNesting([]byte(c.text), MaxNesting), c.line)
	}
}

func TestTOMLNesting(t *testing.T) {
	pipeline := `name = "co" # [[[[
input = "lines"
[fit]
terms = ["Y10", "Y01"]
fix = ['Y03=0']
[thermo]
range = "10:6000:1"
s = """
[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[
"""
[[state]]
a.b.c = { d = [1, {e = 2}], f.g = 3 }
`
	dotted := strings.Repeat("a.", 64) + "z = 1\n"
	for _, c := range []struct {
		name string
		text string
		line int
	}{
		{"pipeline", pipeline, 0},
		{"dotted key of 64", "\n" + strings.Repeat("a.", 63) + "z = 1\n", 0},
		{"dotted key of 65", "\n" + dotted, 2},
		{"dotted key under a table", "[t]\n" + strings.Repeat("a.", 63) + "z = 1\n", 2},
		{"table header of 20 000", "[" + strings.Repeat("a.", 20000) + "z]\n", 1},
		{"array table header", "[[" + strings.Repeat("a.", 70) + "z]]\n", 1},
		{"inline tables of 8 000", "x = " + strings.Repeat("{a = ", 8000) + "1" + strings.Repeat("}", 8000), 1},
		{"arrays", "x = " + strings.Repeat("[", 70) + strings.Repeat("]", 70), 1},
		{"arrays over lines", "x = [\n" + strings.Repeat("[\n", 70), 64},
		{"quoted dots", `"a.b.c.d.e.f.g.h.i.j.k.l.m.n.o.p.q.r.s.t.u.v.w.x.y.z.a.b.c.d.e.f.g.h.i.j.k.l.m.n.o.p.q.r.s.t.u.v.w.x.y.z.1.2.3.4.5.6.7.8.9" = 1`, 0},
		{"inline table keys", "x = {" + strings.Repeat("a.", 70) + "b = 1}", 1},
	} {
		checkNesting(t, c.name, TOMLNesting([]byte(c.text), MaxNesting), c.line)
	}
}

// checkNesting checks the result of a nesting check: no error where line is
// 0, else a *NestingError that names that line.
func checkNesting(t *testing.T, name string, err error, line int) {
	t.Helper()
	var ne *NestingError
	switch {
	case line == 0 && err != nil:
		t.Errorf("%s: %v", name, err)
	case line > 0 && !errors.As(err, &ne):
		t.Errorf("%s: want a nesting error, got %v", name, err)
	case line > 0 && ne.Line != line:
		t.Errorf("%s: line %d, want %d", name, ne.Line, line)
	}
}

func TestReadLimited(t *testing.T) {
	b, err := ReadLimited(strings.NewReader("abc"), 3, "a test file")
	if err != nil || string(b) != "abc" {
		t.Fatalf("3 bytes within 3: %q, %v", b, err)
	}
	_, err = ReadLimited(strings.NewReader("abcd"), 3, "a test file")
	var te *TooLargeError
	if !errors.As(err, &te) || !strings.Contains(err.Error(), "larger than 3 bytes, the limit for a test file") {
		t.Fatalf("4 bytes within 3: %v", err)
	}
	if got := FormatBytes(1 << 20); got != "1 MiB" {
		t.Errorf("FormatBytes(1<<20) = %q", got)
	}
}
