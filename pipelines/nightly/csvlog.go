package nightly

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// csvLog is an append-only CSV file shared by several processes (ledger.csv,
// history.csv). Every method must be called with the archive's ledger lock
// held. Rows are appended with one write on an O_APPEND descriptor followed by
// fsync, so a crash leaves at most one torn last line; a torn line is skipped
// when read (counted in bad) and the next row starts on a new line.
type csvLog struct {
	path   string
	name   string // for messages
	f      *os.File
	header []string
	off    int64 // bytes consumed (complete lines)
	bad    int   // malformed lines seen
	onRow  func(rec []string)
}

func openCSVLog(path, name string, header []string, onRow func([]string)) (*csvLog, error) {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|os.O_APPEND, 0o644)
	if err != nil {
		return nil, fmt.Errorf("nightly: cannot open %s: %w", path, err)
	}
	l := &csvLog{path: path, name: name, f: f, header: header, onRow: onRow}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, fmt.Errorf("nightly: %s: %w", path, err)
	}
	if st.Size() == 0 {
		// New file: the header, written once (we hold the ledger lock).
		if err := l.write([][]string{header}, false); err != nil {
			f.Close()
			return nil, err
		}
		syncPath(filepath.Dir(path)) // the new directory entry too
	}
	return l, nil
}

func (l *csvLog) close() {
	if l != nil && l.f != nil {
		l.f.Close()
	}
}

// refresh reads the complete lines appended since the last call (by this or
// another process) and hands each data row to onRow. It returns whether a
// torn (incomplete) last line follows.
func (l *csvLog) refresh() (torn bool, err error) {
	st, err := l.f.Stat()
	if err != nil {
		return false, fmt.Errorf("nightly: %s: %w", l.path, err)
	}
	size := st.Size()
	if size <= l.off {
		return false, nil
	}
	br := bufio.NewReaderSize(io.NewSectionReader(l.f, l.off, size-l.off), int(min(size-l.off, 64<<10)))
	for {
		line, err := br.ReadString('\n')
		if err == io.EOF {
			return line != "", nil
		}
		if err != nil {
			return false, fmt.Errorf("nightly: reading %s: %w", l.path, err)
		}
		first := l.off == 0
		l.off += int64(len(line))
		if err := l.line(line, first); err != nil {
			return false, err
		}
	}
}

func (l *csvLog) line(line string, first bool) error {
	rec, ok := parseLine(line)
	if first {
		if !ok || !sameHeader(rec, l.header) {
			return fmt.Errorf("nightly: %s: the first line is not the header %q; is this a bandwright %s?", l.path, strings.Join(l.header, ","), l.name)
		}
		return nil
	}
	if !ok || len(rec) != len(l.header) {
		l.bad++
		return nil
	}
	l.onRow(rec)
	return nil
}

// each reads the whole file from the start, handing each data row to fn
// (without changing the state of l).
func (l *csvLog) each(fn func(rec []string)) error {
	st, err := l.f.Stat()
	if err != nil {
		return fmt.Errorf("nightly: %s: %w", l.path, err)
	}
	br := bufio.NewReaderSize(io.NewSectionReader(l.f, 0, st.Size()), int(min(st.Size()+1, 64<<10)))
	first := true
	for {
		line, err := br.ReadString('\n')
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return fmt.Errorf("nightly: reading %s: %w", l.path, err)
		}
		if first {
			first = false
			continue
		}
		if rec, ok := parseLine(line); ok && len(rec) == len(l.header) {
			fn(rec)
		}
	}
}

// append writes rows at the end in one write and syncs; the new rows are then
// read back through refresh (so onRow sees them like rows of other processes).
func (l *csvLog) append(rows [][]string) error {
	torn, err := l.refresh()
	if err != nil {
		return err
	}
	if err := l.write(rows, torn); err != nil {
		return err
	}
	_, err = l.refresh()
	return err
}

func (l *csvLog) write(rows [][]string, newline bool) error {
	var b bytes.Buffer
	if newline {
		b.WriteByte('\n')
	}
	w := csv.NewWriter(&b)
	if err := w.WriteAll(rows); err != nil {
		return fmt.Errorf("nightly: %s: %w", l.path, err)
	}
	if _, err := l.f.Write(b.Bytes()); err != nil {
		return fmt.Errorf("nightly: appending to %s: %w", l.path, err)
	}
	if err := l.f.Sync(); err != nil {
		return fmt.Errorf("nightly: syncing %s: %w", l.path, err)
	}
	return nil
}

// parseLine parses one CSV line (the rows bandwright writes never contain a
// line break inside a field).
func parseLine(line string) ([]string, bool) {
	line = strings.TrimRight(line, "\r\n")
	if line == "" {
		return nil, false
	}
	r := csv.NewReader(strings.NewReader(line))
	r.FieldsPerRecord = -1
	rec, err := r.Read()
	if err != nil {
		return nil, false
	}
	return rec, true
}

func sameHeader(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if !strings.EqualFold(strings.TrimSpace(strings.TrimPrefix(a[i], "\ufeff")), b[i]) {
			return false
		}
	}
	return true
}
