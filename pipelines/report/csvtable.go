package report

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// csvTable is a CSV file with '#' comment lines, its header mapped
// case-insensitively.
type csvTable struct {
	name     string
	head     []string
	col      map[string]int
	rows     [][]string
	lineNo   []int // physical line of each row
	comments []string
}

// readCSV splits a CSV file with a header row; lines whose first non-blank
// character is '#' are comments (kept, without the '#'); blank lines are
// skipped. Row numbers in messages are physical lines of the file.
func readCSV(b []byte, name string) (*csvTable, error) {
	b = bytes.TrimPrefix(b, []byte("\xef\xbb\xbf"))
	t := &csvTable{name: name, col: map[string]int{}}
	var body bytes.Buffer
	var phys []int // physical line of each line of body
	for i, ln := range bytes.SplitAfter(b, []byte("\n")) {
		s := bytes.TrimSpace(ln)
		if len(s) == 0 {
			continue
		}
		if s[0] == '#' {
			t.comments = append(t.comments, strings.TrimSpace(string(s[1:])))
			continue
		}
		body.Write(ln)
		if !bytes.HasSuffix(ln, []byte("\n")) {
			body.WriteByte('\n')
		}
		phys = append(phys, i+1)
	}
	physical := func(line int) int {
		if line >= 1 && line <= len(phys) {
			return phys[line-1]
		}
		return line
	}
	r := csv.NewReader(&body)
	r.FieldsPerRecord = -1
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, fmt.Errorf("report: %s: row %d: %w", name, physical(pe.StartLine), pe.Err)
			}
			return nil, fmt.Errorf("report: %s: %w", name, err)
		}
		line, _ := r.FieldPos(0)
		if t.head == nil {
			t.head = rec
			continue
		}
		t.rows = append(t.rows, rec)
		t.lineNo = append(t.lineNo, physical(line))
	}
	if t.head == nil {
		return nil, fmt.Errorf("report: %s: no header row", name)
	}
	for i, h := range t.head {
		k := strings.ToLower(strings.TrimSpace(h))
		if _, dup := t.col[k]; !dup {
			t.col[k] = i
		}
	}
	return t, nil
}

func (t *csvTable) has(col string) bool { _, ok := t.col[strings.ToLower(col)]; return ok }

func (t *csvTable) cell(i int, col string) string {
	j, ok := t.col[strings.ToLower(col)]
	if !ok || j >= len(t.rows[i]) {
		return ""
	}
	return strings.TrimSpace(t.rows[i][j])
}

// float reads a number; an empty cell is NaN (shown as a dash).
func (t *csvTable) float(i int, col string) (float64, error) {
	s := t.cell(i, col)
	if s == "" {
		return math.NaN(), nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return 0, fmt.Errorf("report: %s: row %d: %s: %q is not a number", t.name, t.lineNo[i], col, s)
	}
	return v, nil
}

func (t *csvTable) int(i int, col string) (int, error) {
	s := t.cell(i, col)
	v, err := strconv.Atoi(s)
	if err != nil {
		return 0, fmt.Errorf("report: %s: row %d: %s: %q is not an integer", t.name, t.lineNo[i], col, s)
	}
	return v, nil
}

func (t *csvTable) require(cols ...string) error {
	var miss []string
	for _, c := range cols {
		if !t.has(c) {
			miss = append(miss, c)
		}
	}
	if len(miss) > 0 {
		return fmt.Errorf("report: %s: row 1: missing column(s) %s", t.name, strings.Join(miss, ", "))
	}
	return nil
}
