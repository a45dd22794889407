package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// sample has functions of known complexity, counted by hand with gocyclo's
// rules (1 + if, for, range, non-default case, &&, ||).
const sample = `package sample

// Simple has no decision: complexity 1.
func Simple() int { return 1 }

// Branches: 1 + if + && + for + range + 2 cases (default not counted) + || = 8.
func Branches(xs []int, a, b bool) int {
	n := 0
	if a && b {
		n++
	}
	for i := 0; i < 3; i++ {
		n += i
	}
	for range xs {
		n++
	}
	switch n {
	case 1:
		n = 2
	case 2:
	default:
	}
	return map[bool]int{true: 1}[a || b] + n
}

type T struct{}

// Method holds a function literal whose if counts toward it: 2.
func (*T) Method() func() {
	return func() {
		if true {
		}
	}
}
`

func writeTree(t *testing.T, files map[string]string) string {
	t.Helper()
	root := t.TempDir()
	for name, body := range files {
		p := filepath.Join(root, name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return root
}

func TestComplexityAndLength(t *testing.T) {
	root := writeTree(t, map[string]string{"sample/sample.go": sample})
	fs, err := parseTree(root)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string][2]int{ // complexity, lines
		"Simple":      {1, 1},
		"Branches":    {8, 19},
		"(*T).Method": {2, 6},
	}
	got := functions(fs)
	if len(got) != len(want) {
		t.Fatalf("found %d functions, want %d: %v", len(got), len(want), got)
	}
	for _, f := range got {
		w, ok := want[f.name]
		if !ok {
			t.Errorf("unexpected function %s", f.name)
			continue
		}
		if f.complexity != w[0] || f.lines != w[1] {
			t.Errorf("%s: complexity %d, %d lines; want %d, %d", f.name, f.complexity, f.lines, w[0], w[1])
		}
	}
}

func TestRunFailsOnOffendersOnly(t *testing.T) {
	long := "package long\n\nfunc Long() {\n" + strings.Repeat("\t_ = 1\n", 130) + "}\n"
	root := writeTree(t, map[string]string{
		"sample/sample.go":  sample,
		"long/long.go":      long,
		"long/long_test.go": "package long\n\nfunc helper() {\n" + strings.Repeat("\t_ = 1\n", 200) + "}\n",
		".hidden/skip.go":   "package skip\n\nfunc Skip() {\n" + strings.Repeat("\t_ = 1\n", 200) + "}\n",
	})
	var out, errOut bytes.Buffer
	if code := run(&out, &errOut, root, 30, 120, false); code != 1 {
		t.Fatalf("exit %d, want 1; output %q", code, out.String())
	}
	if !strings.Contains(out.String(), "long/long.go:3: long.Long: cyclomatic complexity 1, 132 lines") {
		t.Errorf("the long function is not reported: %q", out.String())
	}
	if strings.Count(out.String(), "\n") != 1 {
		t.Errorf("want exactly one offender (tests and hidden folders are not checked): %q", out.String())
	}
	out.Reset()
	if code := run(&out, &errOut, root, 7, 200, false); code != 1 || !strings.Contains(out.String(), "sample.Branches") {
		t.Errorf("complexity 8 above a limit of 7 must fail: exit %d, %q", code, out.String())
	}
	out.Reset()
	if code := run(&out, &errOut, root, 8, 200, false); code != 0 || out.Len() != 0 {
		t.Errorf("every function within the limits must pass: exit %d, %q", code, out.String())
	}
}

func TestStats(t *testing.T) {
	root := writeTree(t, map[string]string{
		"sample/sample.go": sample + "\nconst Exported, unexported = 1, 2\nvar V int\n",
	})
	var out, errOut bytes.Buffer
	if code := run(&out, &errOut, root, 30, 120, true); code != 0 {
		t.Fatalf("exit %d", code)
	}
	// Simple, Branches, T, Method, Exported, V.
	if !strings.Contains(out.String(), "exported    6") {
		t.Errorf("stats: %q, want 6 exported identifiers", out.String())
	}
}
