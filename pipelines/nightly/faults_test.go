package nightly_test

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bandwright/pipelines/nightly"
)

// TestHostileNamesDoneOnce: files whose names hold a line break, a carriage
// return, a quote and comma, or bytes that are not UTF-8 are each done once:
// the ledger and history read their own rows back (a second and third run do
// nothing and add no history row), every record stays UTF-8 text, and no
// line of the progress log is split by a name.
func TestHostileNamesDoneOnce(t *testing.T) {
	e := newEnv(t)
	names := []string{"new\nline.csv", "carriage\rreturn.csv", `quote",comma.csv`, "latin1-caf\xe9.csv", "plain.csv"}
	want := map[string]bool{}
	for i, n := range names {
		b := lineList(uint64(500+i), 1, 30)
		write(t, filepath.Join(e.inbox, n), b)
		want[shaOf(b)] = true
	}
	var log bytes.Buffer
	o := e.opts(fitJob)
	o.Progress = &log
	rep := run(t, o)
	if rep.Succeeded != len(names) || rep.ExitCode() != 0 {
		t.Fatalf("first run: %s\n%s", counts(rep), log.String())
	}
	checkArchive(t, e.archive, want)
	histRows := len(readCSV(t, filepath.Join(e.archive, "history.csv")))
	for run2 := range 2 {
		rep = run(t, e.opts(fitJob))
		if rep.Processed != 0 || rep.Recovered != 0 || rep.AlreadyDone != len(names) {
			t.Fatalf("run %d: %s", run2+2, counts(rep))
		}
	}
	checkArchive(t, e.archive, want)
	if n := len(readCSV(t, filepath.Join(e.archive, "history.csv"))); n != histRows {
		t.Errorf("history grew from %d to %d rows on runs with nothing to do", histRows, n)
	}
	for _, f := range []string{"ledger.csv", "history.csv"} {
		b, _ := os.ReadFile(filepath.Join(e.archive, f))
		if !bytes.Contains(b, []byte(`latin1-caf\xE9.csv`)) || bytes.Contains(b, []byte("\xe9")) {
			t.Errorf("%s: the name that is not UTF-8 is not written as latin1-caf\\xE9.csv", f)
		}
	}
	lines := strings.Split(strings.TrimSuffix(log.String(), "\n"), "\n")
	for _, l := range lines {
		if !strings.HasPrefix(l, "nightly: ") {
			t.Errorf("a log line split by a name: %q", l)
		}
	}
	for _, n := range []string{`"new\nline.csv"`, `"carriage\rreturn.csv"`} {
		if !strings.Contains(log.String(), n) {
			t.Errorf("the log does not show %s quoted:\n%s", n, log.String())
		}
	}
	m, err := nightly.ReadManifest(filepath.Join(e.archive, filepath.FromSlash(readOutput(t, e.archive, "new\nline.csv"))))
	if err != nil || m.Input.Name != "new\nline.csv" {
		t.Errorf("manifest of the name with a line break: %+v, %v", m, err)
	}
}

// readOutput returns the results folder of the ok row of input.
func readOutput(t *testing.T, archive, input string) string {
	t.Helper()
	for _, r := range readLedger(t, archive) {
		if r.Input == input && r.Status == "ok" {
			return r.Output
		}
	}
	t.Fatalf("no ok row for %q", input)
	return ""
}
