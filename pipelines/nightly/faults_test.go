package nightly_test

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
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

// TestArchiveFullMidRun: the archive is a small tmpfs that fills up part-way
// through a run of 20 good files. The run stops with an error (exit code 1),
// records no file as failed, and after space is freed the next run does
// exactly the files not yet done: every file ends with one ok row and no
// failed row. Needs a tmpfs mount (root, as in CI); skipped elsewhere.
func TestArchiveFullMidRun(t *testing.T) {
	mnt := t.TempDir()
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", 0, "size=256k"); err != nil {
		t.Skipf("cannot mount a small tmpfs here (%v)", err)
	}
	t.Cleanup(func() { syscall.Unmount(mnt, 0) })
	e := newEnv(t)
	e.archive = filepath.Join(mnt, "archive")
	want := fill(t, e.inbox, 20, 60)
	rep, err := nightly.Run(context.Background(), e.opts(fitJob))
	if err == nil || !strings.Contains(err.Error(), "no space left on device") || !strings.Contains(err.Error(), "cannot be written") {
		t.Fatalf("full archive: want an error naming the full disk, got %v", err)
	}
	if rep == nil || rep.Failed != 0 || rep.Succeeded >= 20 {
		t.Fatalf("full archive: %s", counts(rep))
	}
	t.Logf("first run: %s", counts(rep))
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", syscall.MS_REMOUNT, "size=16m"); err != nil {
		t.Fatalf("remount with room: %v", err)
	}
	rep = run(t, e.opts(fitJob))
	if rep.Failed != 0 || rep.FailedBefore != 0 || rep.ExitCode() != 0 {
		t.Fatalf("after space was freed: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)
	for _, r := range readLedger(t, e.archive) {
		if r.Status != "ok" {
			t.Errorf("row %s %s: %s", r.Input, r.Status, r.Message)
		}
	}
}

// TestArchiveReadOnly: an archive that cannot be written (a read-only bind
// mount) stops the run with an error and records nothing as failed; once it
// is writable again every file is done. Needs mount (root); skipped elsewhere.
func TestArchiveReadOnly(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 3, 40)
	run(t, e.opts(fitJob)) // creates the archive, ledger and history
	for i := range 3 {
		b := lineList(uint64(700+i), 1, 40)
		write(t, filepath.Join(e.inbox, fmt.Sprintf("b%d.csv", i)), b)
		want[shaOf(b)] = true
	}
	if err := syscall.Mount(e.archive, e.archive, "", syscall.MS_BIND, ""); err != nil {
		t.Skipf("cannot bind-mount here (%v)", err)
	}
	t.Cleanup(func() { syscall.Unmount(e.archive, 0) })
	if err := syscall.Mount("", e.archive, "", syscall.MS_REMOUNT|syscall.MS_BIND|syscall.MS_RDONLY, ""); err != nil {
		t.Skipf("cannot remount read-only here (%v)", err)
	}
	rep, err := nightly.Run(context.Background(), e.opts(fitJob))
	if err == nil {
		t.Fatalf("read-only archive: no error (%s)", counts(rep))
	}
	if rep != nil && rep.Failed != 0 {
		t.Errorf("read-only archive: %s", counts(rep))
	}
	if err := syscall.Unmount(e.archive, 0); err != nil {
		t.Fatal(err)
	}
	rep = run(t, e.opts(fitJob))
	if rep.Succeeded != 3 || rep.Failed != 0 || rep.FailedBefore != 0 {
		t.Fatalf("writable again: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)
}
