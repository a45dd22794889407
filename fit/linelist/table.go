package linelist

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"reflect"
	"strconv"
	"strings"

	"github.com/gocarina/gocsv"

	"bandwright/internal/textcheck"
)

// This file shares the mechanism of the line-list reader with the other
// readers of bandwright's CSV input (the peak list of package assign): the
// problem collector, the header row with its checks, and the mapping of the
// header onto a file's standard columns. Every message reads as the line-list
// reader's own.

// Collector gathers the problems of one file, keeping the first MaxProblems
// and counting the others: the collector of the line-list reader, for other
// readers of bandwright's input files.
type Collector struct{ c collector }

// NewCollector returns a collector for the problems of the named file.
func NewCollector(file string) *Collector { return &Collector{collector{file: file}} }

// Add records a problem at row (0: the file as a whole) and field (empty: no
// column); the reason is formatted only when it is kept.
func (c *Collector) Add(row int, field, format string, args ...any) {
	c.c.add(row, field, format, args...)
}

// AddErr records a problem with an underlying cause.
func (c *Collector) AddErr(row int, field, reason string, err error) {
	c.c.addErr(row, field, reason, err)
}

// Count returns the number of problems recorded, kept or not.
func (c *Collector) Count() int { return len(c.c.probs) + c.c.omitted }

// Full reports whether further problems are only counted.
func (c *Collector) Full() bool { return c.c.full() }

// Problems returns the problems kept and the number only counted.
func (c *Collector) Problems() ([]Problem, int) { return c.c.probs, c.c.omitted }

// Table is the header of a CSV file of bandwright, read by ReadHeader, with
// the reader of its rows.
type Table struct {
	// CSV reads the rows after the header: records of any length, reusing
	// their slice, with comment and blank lines skipped and the physical
	// line numbers of the file (FieldPos).
	CSV *csv.Reader
	// Header holds the header cells as written; Names the same trimmed of
	// surrounding white space ("" for a name that is not UTF-8); Keys the
	// form in which names are compared (zero-width characters removed,
	// trimmed, lower case), "" for a column without a usable name (none, a
	// duplicate, not UTF-8).
	Header, Names, Keys []string
	// Line is the physical line number of the header.
	Line int
}

// ReadHeader starts reading a CSV file of bandwright from r: a header row
// first; lines whose first non-blank character is '#' and blank lines are
// skipped; a UTF-8 byte-order mark is ignored. It reads the header and
// checks its names: each must be UTF-8 text, non-empty and, compared by its
// key, given once. Problems go to c, the reason empty when the file has no
// header row. It returns nil when no row can be read: the file is empty,
// unreadable, or has a name that is not UTF-8.
func ReadHeader(r io.Reader, c *Collector, empty string) *Table {
	return readHeader(r, &c.c, empty)
}

func readHeader(r io.Reader, c *collector, empty string) *Table {
	cr := csv.NewReader(newLineFilter(r))
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	h, err := cr.Read()
	if err == io.EOF {
		c.add(0, "", "%s", empty)
		return nil
	}
	if err != nil {
		c.readError(err)
		return nil
	}
	line, _ := cr.FieldPos(0)
	if len(h) > MaxColumns {
		c.add(line, "", "the header has %d columns; bandwright reads at most %d", len(h), MaxColumns)
		return nil
	}
	t := &Table{CSV: cr, Header: append([]string(nil), h...), Names: make([]string, len(h)), Keys: make([]string, len(h)), Line: line}
	first := make(map[string]int, len(h))
	bad := false
	for i, name := range h {
		if why := textcheck.InvalidUTF8(name); why != "" {
			c.add(t.Line, fmt.Sprintf("column %d", i+1), "name is %s", why)
			bad = true
			continue
		}
		t.Names[i] = strings.TrimSpace(name)
		k := headerKey(name)
		switch prev, dup := first[k]; {
		case k == "":
			c.add(t.Line, "", "column %d has no name", i+1)
		case dup:
			c.add(t.Line, strings.TrimSpace(name), "duplicate column name (columns %d and %d; names are matched ignoring case)", prev+1, i+1)
		default:
			first[k] = i
			t.Keys[i] = k
		}
	}
	if bad {
		return nil
	}
	return t
}

// ReportMissing reports required columns missing from the header: when the
// header looks separated by semicolons or tabs, that alone (and it returns
// true: no row can be read as CSV); else each column of missing, by name.
func (t *Table) ReportMissing(c *Collector, missing ...string) bool {
	return t.reportMissing(&c.c, missing)
}

func (t *Table) reportMissing(c *collector, missing []string) bool {
	if len(missing) == 0 {
		return false
	}
	joined := strings.Join(t.Header, ",")
	switch {
	case strings.Contains(joined, ";"):
		c.add(t.Line, "", "looks like semicolon-separated; bandwright reads comma-separated with a dot decimal separator")
		return true
	case strings.Contains(joined, "\t"):
		c.add(t.Line, "", "looks like tab-separated; bandwright reads comma-separated with a dot decimal separator")
		return true
	}
	for _, name := range missing {
		c.add(t.Line, name, "required column missing")
	}
	return false
}

// ReadError reports an error of encoding/csv (at its line and character) or
// of the underlying reader.
func (c *Collector) ReadError(err error) { c.c.readError(err) }

func (c *collector) readError(err error) {
	var pe *csv.ParseError
	var long *LineTooLongError
	var large *textcheck.TooLargeError
	switch {
	case errors.As(err, &long):
		c.add(long.Line, "", "%v", err)
		return
	case errors.As(err, &large), errors.Is(err, CROnlyError{}):
		c.add(0, "", "%v", err)
		return
	case errors.As(err, &pe):
		c.addErr(pe.Line, "", fmt.Sprintf("malformed CSV at character %d: %v", pe.Column, pe.Err), err)
		return
	}
	c.addErr(0, "", "read error: "+err.Error(), err)
}

// IndexColumns finds the column of each field of T, a struct of string fields
// whose csv tags are the keys of a file's standard columns, from the header
// keys (Table.Keys: distinct apart from empty ones). Absent columns get −1.
//
// It uses gocsv's header-to-struct mapping: it decodes the header followed
// by a row holding each column's own index into a T, whose fields then name
// their column. So that gocsv's package-wide switches
// (FailIfUnmatchedStructTags, FailIfDoubleHeaderNames), which another package
// may set, change nothing here, every tag is given a column (absent ones the
// index −1) and empty keys are made unique.
//
// The data rows themselves are not decoded by gocsv: its reflection costs
// more than 1 µs per row (measured on this 2-core machine: 100,000 rows into
// string fields in 103-185 ms through gocsv.Unmarshaller, see
// BenchmarkGocsvRows, and 145-157 ms through gocsv.UnmarshalDecoderToChan,
// against 25-33 ms for encoding/csv alone), which would be most of a read,
// so rows are taken from encoding/csv by the indices found here.
func IndexColumns[T any](keys []string) ([]int, error) {
	st := reflect.TypeFor[T]()
	tags := make([]string, st.NumField())
	for i := range tags {
		tags[i] = st.Field(i).Tag.Get("csv")
	}
	names := make([]string, 0, len(keys)+len(tags))
	pos := make([]string, 0, len(keys)+len(tags))
	present := make(map[string]bool, len(keys))
	for i, k := range keys {
		present[k] = true
		if k == "" {
			k = "\x00" + strconv.Itoa(i)
		}
		names = append(names, k)
		pos = append(pos, strconv.Itoa(i))
	}
	for _, tag := range tags {
		if !present[tag] {
			names = append(names, tag)
			pos = append(pos, "-1")
		}
	}
	var out []T
	if err := gocsv.UnmarshalCSV(&Rows{Rows: [][]string{names, pos}}, &out); err != nil {
		return nil, err
	}
	if len(out) != 1 {
		return nil, fmt.Errorf("gocsv decoded %d rows from a header and one row", len(out))
	}
	v := reflect.ValueOf(out[0])
	idx := make([]int, len(tags))
	for c := range tags {
		s := v.Field(c).String()
		i, err := strconv.Atoi(s)
		if err != nil || i < -1 || i >= len(keys) {
			return nil, fmt.Errorf("gocsv mapped column %s to %q", tags[c], s)
		}
		idx[c] = i
	}
	return idx, nil
}
