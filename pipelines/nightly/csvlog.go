package nightly

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// csvLog is an append-only CSV file shared by several processes (ledger.csv,
// history.csv), written and read with encoding/csv (RFC 4180). Every method
// must be called with the archive's ledger lock held. Rows are appended with
// one write on an O_APPEND descriptor followed by fsync; a write that fails
// (a full disk) is cut back, and a crash leaves at most one incomplete last
// record, which is not read and which the next append cuts off before
// writing.
type csvLog struct {
	path   string
	name   string // for messages
	f      *os.File
	header []string
	off    int64 // bytes consumed (complete records)
	bad    int   // malformed records seen
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
		if err := l.write([][]string{header}); err != nil {
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

// refresh reads the complete records appended since the last call (by this
// or another process) and hands each data row to onRow. It returns whether an
// incomplete record follows (a write cut short by a crash or a full disk).
func (l *csvLog) refresh() (torn bool, err error) {
	st, err := l.f.Stat()
	if err != nil {
		return false, fmt.Errorf("nightly: %s: %w", l.path, err)
	}
	size := st.Size()
	if size <= l.off {
		return false, nil
	}
	end, err := l.scan(l.off, size, l.onRow)
	l.off = end
	return end < size, err
}

// scan reads the records between byte offsets from and size with
// encoding/csv, the codec the rows were written with (so a cell may hold a
// line break, such as a file name with a newline), and hands each complete
// data row with the header's number of fields to fn; the header (at offset
// 0) is checked. It returns the offset after the last complete record: a
// record is complete when a line break ends it.
func (l *csvLog) scan(from, size int64, fn func(rec []string)) (int64, error) {
	complete := true // the file ends with a line break
	if size > 0 {
		var last [1]byte
		if _, err := l.f.ReadAt(last[:], size-1); err != nil {
			return from, fmt.Errorf("nightly: reading %s: %w", l.path, err)
		}
		complete = last[0] == '\n'
	}
	cr := csv.NewReader(bufio.NewReaderSize(io.NewSectionReader(l.f, from, size-from), int(min(size-from, 64<<10))))
	cr.FieldsPerRecord = -1
	end := from
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			return end, nil
		}
		at := from + cr.InputOffset()
		if at >= size && !complete {
			return end, nil // torn: the rest of a record is missing
		}
		var pe *csv.ParseError
		if err != nil && !errors.As(err, &pe) {
			return end, fmt.Errorf("nightly: reading %s: %w", l.path, err)
		}
		header := end == 0
		end = at
		switch {
		case header && (err != nil || !sameHeader(rec, l.header)):
			return end, fmt.Errorf("nightly: %s: the first line is not the header %q; is this a bandwright %s?", l.path, strings.Join(l.header, ","), l.name)
		case header:
		case err != nil || len(rec) != len(l.header):
			l.bad++
		default:
			fn(rec)
		}
	}
}

// each reads the whole file from the start, handing each data row to fn
// (without changing the state of l).
func (l *csvLog) each(fn func(rec []string)) error {
	st, err := l.f.Stat()
	if err != nil {
		return fmt.Errorf("nightly: %s: %w", l.path, err)
	}
	bad := l.bad
	_, err = l.scan(0, st.Size(), fn)
	l.bad = bad
	return err
}

// append writes rows at the end in one write and syncs; the new rows are then
// read back through refresh (so onRow sees them like rows of other processes).
// An incomplete record at the end, left by a writer that died or ran out of
// space in the middle of its write (all writers hold the ledger lock, so none
// is writing now), is cut off first: it never held a finished outcome.
func (l *csvLog) append(rows [][]string) error {
	torn, err := l.refresh()
	if err != nil {
		return err
	}
	if torn {
		if err := l.f.Truncate(l.off); err != nil {
			return fmt.Errorf("nightly: %s: removing an incomplete last row: %w", l.path, err)
		}
	}
	if err := l.write(rows); err != nil {
		return err
	}
	_, err = l.refresh()
	return err
}

// write appends rows with encoding/csv in one write and syncs: all of them or
// none. A failed or short write (a full disk) is cut back to where the file
// ended before it (l.off, the end of its last complete record), so that no
// part of the rows stays — a result's history rows are recorded whole or,
// by the next run's backfill, later. Where even the cut fails, at most an
// incomplete last record can stay behind, which the next append cuts off; a
// process that dies mid-write leaves the same.
func (l *csvLog) write(rows [][]string) error {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	if err := w.WriteAll(rows); err != nil {
		return fmt.Errorf("nightly: %s: %w", l.path, err)
	}
	if _, err := l.f.Write(b.Bytes()); err != nil {
		l.f.Truncate(l.off)
		return fmt.Errorf("nightly: appending to %s: %w", l.path, err)
	}
	if err := l.f.Sync(); err != nil {
		l.f.Truncate(l.off)
		return fmt.Errorf("nightly: syncing %s: %w", l.path, err)
	}
	return nil
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
