package main

import (
	"bandwright/internal/failure"
	"os/exec"
	"slices"
	"strings"
	"testing"

	"github.com/urfave/cli/v2"
)

// TestInternalPackagesListed: every package of the module is in
// internalPackages, so no error message shows a package name to the user.
func TestInternalPackagesListed(t *testing.T) {
	out, err := exec.Command(goTool(t), "list", "-f", "{{.Name}}", "bandwright/...").Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	for _, name := range strings.Fields(string(out)) {
		if name != "main" && name != "bandwright" && !slices.Contains(internalPackages, name) {
			t.Errorf("package %s is not in internalPackages", name)
		}
	}
}

// TestUserMessage: package names are dropped from every line, the command
// leads, and the input file is named when the message does not name it.
func TestUserMessage(t *testing.T) {
	for _, tc := range []struct {
		err  error
		want string
	}{
		{&commandError{cmd: "predict", inputs: []string{"c.json"}, err: failureErr("pipelines: fit: band 1-0 of 12C16O: no parameters")}, "bandwright predict: c.json: band 1-0 of 12C16O: no parameters"},
		{&commandError{cmd: "fit", inputs: []string{"a.csv"}, err: failureErr("linelist: a.csv:3: unc: must be > 0")}, "bandwright fit: a.csv:3: unc: must be > 0"},
		{&commandError{cmd: "fit", inputs: []string{"a.csv", "b.csv"}, err: failureErr("fit: a\nfit: b")}, "bandwright fit: a.csv, b.csv: a\nb"},
		{&commandError{cmd: "run", inputs: []string{"p.csv"}, err: usageExit("run: give --bands")}, "bandwright run: give --bands"},
		{&commandError{cmd: "fit", inputs: []string{"1.csv", "2.csv", "3.csv", "4.csv"}, err: failureErr("fit: no")}, "bandwright fit: 1.csv and 3 more files: no"},
	} {
		if got := userMessage(tc.err); got != tc.want {
			t.Errorf("got %q, want %q", got, tc.want)
		}
	}
}

// TestSuggest: a mistyped command finds its nearest names.
func TestSuggest(t *testing.T) {
	cmds := []*cli.Command{{Name: "assign"}, {Name: "fit"}, {Name: "predict"}, {Name: "thermo"}, {Name: "report"}, {Name: "run"}}
	for in, want := range map[string][]string{"fti": {"fit"}, "predcit": {"predict"}, "thermos": {"thermo"}, "rn": {"run"}, "xyzzy": nil, "asign": {"assign"}} {
		if got := suggest(in, cmds); !slices.Equal(got, want) {
			t.Errorf("suggest(%q) = %q, want %q", in, got, want)
		}
	}
}

func failureErr(msg string) error { return failure.Errorf(failure.BadInput, "%s", msg) }
