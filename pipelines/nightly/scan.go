package nightly

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"unicode"
	"unicode/utf8"
)

// found is a regular file of the inbox.
type found struct {
	name string // relative to the inbox, '/' separators
	real string // absolute path with links resolved (what is opened)
	sha  string
	size int64
}

// scanInbox lists the regular files of the inbox (recursively; hidden entries
// skipped; links followed only to regular files inside the inbox; files
// include does not match listed as ignored) and hashes each. The inbox is
// only read.
func scanInbox(inbox, include string) ([]found, []Ignored) {
	var files []found
	var ign []Ignored
	_ = filepath.WalkDir(inbox, func(p string, d fs.DirEntry, err error) error {
		if p == inbox {
			return err // an unreadable inbox is reported by the caller's stat
		}
		rel, rerr := filepath.Rel(inbox, p)
		if rerr != nil {
			return nil
		}
		name := inboxName(filepath.ToSlash(rel))
		if err != nil {
			ign = append(ign, Ignored{name, "cannot be read: " + errText(err)})
			if d != nil && d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if strings.HasPrefix(d.Name(), ".") {
			if d.IsDir() {
				return fs.SkipDir
			}
			return nil
		}
		if !d.IsDir() && !included(include, name) {
			ign = append(ign, Ignored{name, fmt.Sprintf("not matched by --include %s", include)})
			return nil
		}
		switch t := d.Type(); {
		case t.IsDir():
			return nil
		case t.IsRegular():
			files = append(files, found{name: name, real: p})
		case t&fs.ModeSymlink != 0:
			target, err := filepath.EvalSymlinks(p)
			if err != nil {
				ign = append(ign, Ignored{name, "symbolic link that cannot be resolved: " + errText(err)})
				return nil
			}
			if !within(inbox, target) {
				ign = append(ign, Ignored{name, "symbolic link pointing outside the inbox (not followed)"})
				return nil
			}
			st, err := os.Stat(target)
			if err != nil || !st.Mode().IsRegular() {
				ign = append(ign, Ignored{name, "symbolic link to something other than a regular file (not followed)"})
				return nil
			}
			files = append(files, found{name: name, real: target})
		default:
			ign = append(ign, Ignored{name, "not a regular file"})
		}
		return nil
	})
	kept := files[:0]
	for _, f := range files {
		sha, size, err := hashInput(f.real)
		if err != nil {
			ign = append(ign, Ignored{f.name, "cannot be read: " + errText(err)})
			continue
		}
		f.sha, f.size = sha, size
		kept = append(kept, f)
	}
	return kept, ign
}

// included reports whether the file name (relative to the inbox, '/'
// separators) matches the glob, ignoring letter case: its base name, or the
// whole name when the glob holds a '/'. Every file matches "".
func included(glob, name string) bool {
	if glob == "" {
		return true
	}
	target := path.Base(name)
	if strings.Contains(glob, "/") {
		target = name
	}
	ok, _ := path.Match(strings.ToLower(glob), strings.ToLower(target))
	return ok
}

// inboxName is the name under which an inbox file is recorded (ledger,
// history, manifest, summary, messages): its path relative to the inbox with
// '/' separators, each byte that is not part of UTF-8 text written as \xNN,
// so that every record stays UTF-8 text. The file itself is opened by its
// real path.
func inboxName(rel string) string {
	if utf8.ValidString(rel) {
		return rel
	}
	var b strings.Builder
	for i := 0; i < len(rel); {
		r, n := utf8.DecodeRuneInString(rel[i:])
		if r == utf8.RuneError && n <= 1 {
			fmt.Fprintf(&b, "\\x%02X", rel[i])
			i++
			continue
		}
		b.WriteString(rel[i : i+n])
		i += n
	}
	return b.String()
}

// shown is a name as a line of the progress log shows it: quoted (Go syntax)
// when it holds a control character, so that a line break or carriage return
// in a file name cannot split or overwrite a line of the log.
func shown(name string) string {
	if strings.IndexFunc(name, unicode.IsControl) >= 0 {
		return strconv.Quote(name)
	}
	return name
}

func errText(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

// bufs holds the copy buffers of hashing and snapshots (32 KiB each), so the
// memory of a run does not grow with the number of files.
var bufs = sync.Pool{New: func() any { b := make([]byte, 32<<10); return &b }}

// copyBuf copies src to dst through a pooled buffer (src is wrapped so that
// io.CopyBuffer cannot bypass the buffer with a WriterTo of its own).
func copyBuf(dst io.Writer, src io.Reader) (int64, error) {
	b := bufs.Get().(*[]byte)
	defer bufs.Put(b)
	return io.CopyBuffer(dst, struct{ io.Reader }{src}, *b)
}

// hashInput returns the SHA-256 and size of an inbox file.
func hashInput(p string) (string, int64, error) {
	f, err := openInput(p)
	if err != nil {
		return "", 0, err
	}
	defer f.Close()
	if st, err := f.Stat(); err != nil || !st.Mode().IsRegular() {
		return "", 0, fmt.Errorf("not a regular file")
	}
	h := sha256.New()
	n, err := copyBuf(h, f)
	if err != nil {
		return "", 0, err
	}
	return hex.EncodeToString(h.Sum(nil)), n, nil
}

// snapshot copies an inbox file to dst (created) and returns the SHA-256 of
// the bytes copied.
func snapshot(src, dst string) (string, error) {
	in, err := openInput(src)
	if err != nil {
		return "", err
	}
	defer in.Close()
	if st, err := in.Stat(); err != nil || !st.Mode().IsRegular() {
		return "", fmt.Errorf("not a regular file")
	}
	out, err := os.OpenFile(dst, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o444)
	if err != nil {
		return "", err
	}
	h := sha256.New()
	if _, err := copyBuf(io.MultiWriter(out, h), in); err != nil {
		out.Close()
		return "", err
	}
	if err := out.Close(); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// folderStem is the <input-stem> of a results folder: the base name without
// its extension, with characters other than letters, digits, '.', '_', '-'
// and '+' replaced by '_', no leading dot, at most 80 bytes.
func folderStem(name string) string {
	base := path.Base(name)
	stem := strings.TrimSuffix(base, path.Ext(base))
	var b strings.Builder
	for _, r := range stem {
		switch {
		case unicode.IsLetter(r) || unicode.IsDigit(r) || r == '.' || r == '_' || r == '-' || r == '+':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	s := strings.TrimLeft(b.String(), ".")
	for len(s) > 80 {
		_, n := utf8.DecodeLastRuneInString(s)
		s = s[:len(s)-n]
	}
	if s == "" {
		s = "input"
	}
	return s
}
