package outdir

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// fullDisk is a file that takes limit bytes and then fails with ENOSPC, as a
// write to a full disk does.
type fullDisk struct {
	f     *os.File
	limit int
}

func (w *fullDisk) Write(p []byte) (int, error) {
	if len(p) > w.limit {
		n, _ := w.f.Write(p[:w.limit])
		w.limit = 0
		return n, &os.PathError{Op: "write", Path: w.f.Name(), Err: syscall.ENOSPC}
	}
	w.limit -= len(p)
	return w.f.Write(p)
}
func (w *fullDisk) Sync() error  { return w.f.Sync() }
func (w *fullDisk) Close() error { return w.f.Close() }

// entries lists the names in dir (nil when it does not exist).
func entries(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	var out []string
	for _, e := range es {
		out = append(out, e.Name())
	}
	return out
}

// TestDiskFullLeavesNothing: when the disk fills while the second of three files
// is written, the error names the file and the cause, and nothing is left: no
// output folder, no temporary folder, no parent folder Begin created.
func TestDiskFullLeavesNothing(t *testing.T) {
	root := t.TempDir()
	budget := 1000 // bytes the disk still takes
	createFile = func(path string) (file, error) {
		f, err := os.OpenFile(path, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
		if err != nil {
			return nil, err
		}
		w := &fullDisk{f: f, limit: budget}
		return w, nil
	}
	t.Cleanup(func() {
		createFile = func(path string) (file, error) {
			return os.OpenFile(path, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
		}
	})
	final := filepath.Join(root, "a", "b", "out")
	d, err := Begin(final)
	if err != nil {
		t.Fatal(err)
	}
	block := strings.Repeat("x", 800)
	if err := d.Write("one.txt", func(w io.Writer) error { _, err := io.WriteString(w, block); return err }); err != nil {
		t.Fatal(err)
	}
	budget = 500
	err = d.Write("two.txt", func(w io.Writer) error { _, err := io.WriteString(w, block); return err })
	if err == nil || !errors.Is(err, syscall.ENOSPC) || !strings.Contains(err.Error(), "two.txt") || !strings.Contains(err.Error(), "no space left on device") {
		t.Fatalf("error %v", err)
	}
	d.Abort()
	if got := entries(t, root); len(got) != 0 {
		t.Errorf("left behind in %s: %v", root, got)
	}
}

// TestNotAFolder: an --out whose parent is a regular file (a write that cannot
// be done, as with a permission denied) is a clear error, and nothing is
// created.
func TestNotAFolder(t *testing.T) {
	root := t.TempDir()
	blocker := filepath.Join(root, "results")
	if err := os.WriteFile(blocker, []byte("a file, not a folder\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, out := range []string{blocker, filepath.Join(blocker, "run1"), filepath.Join(blocker, "x", "run1")} {
		_, err := Begin(out)
		if err == nil || !strings.HasPrefix(err.Error(), "outdir: ") || !strings.Contains(err.Error(), "results") {
			t.Errorf("%s: %v", out, err)
		}
	}
	if got := entries(t, root); len(got) != 1 {
		t.Errorf("left behind: %v", got)
	}
	if b, _ := os.ReadFile(blocker); string(b) != "a file, not a folder\n" {
		t.Errorf("the file in the way changed: %q", b)
	}
}

// TestCommitAndAbort: files appear only on Commit, all together; Abort after a
// Commit changes nothing; an input named by Protect is never replaced.
func TestCommitAndAbort(t *testing.T) {
	root := t.TempDir()
	final := filepath.Join(root, "new", "out")
	d, err := Begin(final)
	if err != nil {
		t.Fatal(err)
	}
	for _, n := range []string{"a.txt", "b.txt"} {
		if err := d.Write(n, func(w io.Writer) error { _, err := io.WriteString(w, n); return err }); err != nil {
			t.Fatal(err)
		}
	}
	if got := entries(t, final); got != nil {
		t.Fatalf("visible before Commit: %v", got)
	}
	if err := d.Commit(); err != nil {
		t.Fatal(err)
	}
	d.Abort()
	if got := entries(t, final); len(got) != 2 {
		t.Fatalf("after Commit: %v", got)
	}
	if got := entries(t, filepath.Dir(final)); len(got) != 1 {
		t.Errorf("temporary folder left: %v", got)
	}

	// Writing over an input is refused and leaves the input alone.
	in := filepath.Join(final, "a.txt")
	d2, err := Begin(final)
	if err != nil {
		t.Fatal(err)
	}
	d2.Protect(in)
	if err := d2.Write("a.txt", func(w io.Writer) error { _, err := io.WriteString(w, "overwritten"); return err }); err != nil {
		t.Fatal(err)
	}
	if err := d2.Commit(); err == nil || !strings.Contains(err.Error(), "refusing to overwrite the input file") {
		t.Errorf("commit over an input: %v", err)
	}
	if b, _ := os.ReadFile(in); string(b) != "a.txt" {
		t.Errorf("input changed: %q", b)
	}
	if got := entries(t, filepath.Dir(final)); len(got) != 1 {
		t.Errorf("temporary folder left: %v", got)
	}
	for _, bad := range []string{"../x", "sub/x", "..", "."} {
		if err := d2.Write(bad, func(io.Writer) error { return nil }); err == nil {
			t.Errorf("file name %q accepted", bad)
		}
	}
}
