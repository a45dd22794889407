package main

import (
	"os/exec"
	"strings"
	"testing"
)

// TestStagesDoNotImportTheFittingEngine: the stages that only read constants
// records (thermo, the reports, the nightly engine) depend on the record's
// package, not on the fitting engine, so a change in the engine cannot break
// them (DEVELOPERS.md, "one home for each idea").
func TestStagesDoNotImportTheFittingEngine(t *testing.T) {
	for _, pkg := range []string{"bandwright/thermo", "bandwright/pipelines/report", "bandwright/pipelines/nightly", "bandwright/constants"} {
		out, err := exec.Command(goTool(t), "list", "-deps", pkg).Output()
		if err != nil {
			t.Fatalf("go list -deps %s: %v", pkg, err)
		}
		deps := strings.Fields(string(out))
		for _, d := range deps {
			if d == "bandwright/fit" || d == "bandwright/fit/lsq" {
				t.Errorf("%s depends on %s", pkg, d)
			}
		}
		if !strings.Contains(string(out), "bandwright/constants\n") {
			t.Errorf("%s does not list bandwright/constants among its dependencies: %q", pkg, out)
		}
	}
}
