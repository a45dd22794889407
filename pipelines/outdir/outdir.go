// Package outdir writes a folder of output files atomically: every file is
// written into a temporary folder beside the destination and moved into place
// only when all of them are complete, so a failure or a crash never leaves a
// partial set of outputs.
package outdir

import (
	"bandwright/internal/failure"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
)

// Dir is an output folder under construction.
type Dir struct {
	final     string
	tmp       string
	names     []string
	protected map[string]bool
	done      bool
	created   []string // parent folders Begin created, outermost first
}

// file is what Write writes into: an *os.File, or in tests a file that fails.
type file interface {
	io.Writer
	Sync() error
	Close() error
}

// createFile creates a new file for Write (a variable so that tests can make
// writing fail, as a full disk does).
var createFile = func(path string) (file, error) {
	return os.OpenFile(path, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
}

// Begin starts building the folder final. The parent folders are created (and
// removed again by Abort when they are left empty).
func Begin(final string) (*Dir, error) {
	if final == "" {
		return nil, errors.New("outdir: no output folder given (--out)")
	}
	abs, err := filepath.Abs(final)
	if err != nil {
		return nil, fmt.Errorf("outdir: %w", err)
	}
	if filepath.Dir(abs) == abs {
		return nil, failure.Errorf(failure.BadInput, "outdir: --out %s: the output folder is replaced as a whole, so it cannot be a file system's root; give a folder such as %s", final, filepath.Join(abs, "results"))
	}
	if st, err := os.Stat(abs); err == nil && !st.IsDir() {
		return nil, fmt.Errorf("outdir: %s exists and is not a folder", final)
	}
	parent := filepath.Dir(abs)
	var created []string
	for p := parent; ; p = filepath.Dir(p) {
		if _, err := os.Lstat(p); err == nil || filepath.Dir(p) == p {
			break
		}
		created = append([]string{p}, created...)
	}
	if err := os.MkdirAll(parent, 0o755); err != nil {
		removeEmpty(created)
		return nil, fmt.Errorf("outdir: %w", err)
	}
	tmp, err := os.MkdirTemp(parent, "."+filepath.Base(abs)+".partial-")
	if err != nil {
		removeEmpty(created)
		return nil, fmt.Errorf("outdir: cannot write in %s: %w", parent, err)
	}
	return &Dir{final: abs, tmp: tmp, protected: map[string]bool{}, created: created}, nil
}

// removeEmpty removes the folders of dirs (outermost first) that are empty,
// innermost first.
func removeEmpty(dirs []string) {
	for i := len(dirs) - 1; i >= 0; i-- {
		if os.Remove(dirs[i]) != nil {
			return
		}
	}
}

// Protect names files that must never be replaced (the user's inputs): Commit
// fails rather than overwrite one of them.
func (d *Dir) Protect(paths ...string) {
	for _, p := range paths {
		if a, err := filepath.Abs(p); err == nil {
			if r, err := filepath.EvalSymlinks(a); err == nil {
				a = r
			}
			d.protected[a] = true
		}
	}
}

// Path returns the final path of a file in the folder.
func (d *Dir) Path(name string) string { return filepath.Join(d.final, name) }

// TempPath returns the temporary path of a file being built (for writers that
// need a path, such as plots).
func (d *Dir) TempPath(name string) string { return filepath.Join(d.tmp, name) }

// Write creates the file name in the folder with the content written by fn,
// synced to disk.
func (d *Dir) Write(name string, fn func(io.Writer) error) error {
	if filepath.Base(name) != name || name == "." || name == ".." {
		return fmt.Errorf("outdir: %q is not a plain file name", name)
	}
	f, err := createFile(filepath.Join(d.tmp, name))
	if err != nil {
		return fmt.Errorf("outdir: %w", err)
	}
	if err := fn(f); err != nil {
		f.Close()
		return fmt.Errorf("outdir: writing %s: %w", name, err)
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return fmt.Errorf("outdir: writing %s: %w", name, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("outdir: writing %s: %w", name, err)
	}
	d.names = append(d.names, name)
	return nil
}

// Commit moves the files into place. A new folder is renamed into place in one
// step; into an existing folder each file is renamed over its old version
// (each rename atomic). Other files already in the folder are left alone.
func (d *Dir) Commit() error {
	if d.done {
		return errors.New("outdir: already committed or aborted")
	}
	for _, n := range d.names {
		p := filepath.Join(d.final, n)
		if r, err := filepath.EvalSymlinks(p); err == nil {
			p = r
		}
		if d.protected[p] {
			d.Abort()
			return fmt.Errorf("outdir: refusing to overwrite the input file %s; choose another --out folder", filepath.Join(d.final, n))
		}
	}
	if _, err := os.Stat(d.final); errors.Is(err, os.ErrNotExist) {
		if err := os.Rename(d.tmp, d.final); err == nil {
			d.done = true
			syncDir(filepath.Dir(d.final))
			return nil
		}
		if err := os.MkdirAll(d.final, 0o755); err != nil {
			d.Abort()
			return fmt.Errorf("outdir: %w", err)
		}
	}
	sort.Strings(d.names)
	for _, n := range d.names {
		if err := os.Rename(filepath.Join(d.tmp, n), filepath.Join(d.final, n)); err != nil {
			d.Abort()
			return fmt.Errorf("outdir: %w", err)
		}
	}
	syncDir(d.final)
	d.done = true
	return os.RemoveAll(d.tmp)
}

// Abort removes everything written so far, and the parent folders Begin
// created if they are empty. Safe to call after Commit (no-op).
func (d *Dir) Abort() {
	if d.done {
		return
	}
	d.done = true
	os.RemoveAll(d.tmp)
	removeEmpty(d.created)
}

func syncDir(p string) {
	if f, err := os.Open(p); err == nil {
		f.Sync()
		f.Close()
	}
}
