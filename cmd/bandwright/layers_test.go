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
	pkgs := []string{"bandwright/thermo", "bandwright/pipelines/report", "bandwright/pipelines/nightly", "bandwright/constants"}
	out, err := exec.Command(goTool(t), append([]string{"list", "-f", "{{.ImportPath}} {{join .Deps \" \"}}"}, pkgs...)...).Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	seen := 0
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		f := strings.Fields(line)
		pkg, deps := f[0], f[1:]
		seen++
		usesRecord := pkg == "bandwright/constants"
		for _, d := range deps {
			switch d {
			case "bandwright/fit", "bandwright/fit/lsq":
				t.Errorf("%s depends on %s", pkg, d)
			case "bandwright/constants":
				usesRecord = true
			}
		}
		if !usesRecord {
			t.Errorf("%s does not depend on bandwright/constants", pkg)
		}
	}
	if seen != len(pkgs) {
		t.Errorf("go list reported %d packages, want %d: %q", seen, len(pkgs), out)
	}
}
