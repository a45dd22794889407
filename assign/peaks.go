package assign

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/gocarina/gocsv"

	"bandwright/fit/linelist"
	"bandwright/internal/textcheck"
	"bandwright/units"
)

// Peak is one picked peak of a spectrum.
type Peak struct {
	// Index is the peak's 1-based place among the peaks of its file (the
	// first data row is peak 1); it is written as peak_index.
	Index int
	// Row is the physical line number in the file (the header is a line too).
	Row int
	// Text is the position exactly as written (surrounding blanks trimmed);
	// lines.csv repeats it unchanged.
	Text     string
	Position float64 // in Unit, > 0
	// Unc is the 1σ uncertainty of Position in Unit; 0 when the file gives
	// none for this peak. UncText is its text as written.
	Unc     float64
	UncText string
	// Intensity is the magnitude of the peak's intensity (arbitrary units);
	// 0 when not given. IntensityText is its text as written.
	Intensity     float64
	IntensityText string
	Unit          linelist.Unit
	Extra         []string // pass-through values, aligned with PeakList.Extra
}

// Wavenumber returns the position in cm⁻¹.
func (p Peak) Wavenumber() float64 { return toCm(p.Position, p.Unit) }

// UncWavenumber returns the uncertainty in cm⁻¹ (0 when none is given).
func (p Peak) UncWavenumber() float64 { return toCm(p.Unc, p.Unit) }

func toCm(x float64, u linelist.Unit) float64 {
	if u == linelist.MHz {
		return x / units.MHzPerWavenumber
	}
	return x
}

func fromCm(x float64, u linelist.Unit) float64 {
	if u == linelist.MHz {
		return x * units.MHzPerWavenumber
	}
	return x
}

// PeakList is a peak list read from one file.
type PeakList struct {
	File  string
	Peaks []Peak
	// Extra names the pass-through columns (any column other than position,
	// unc, intensity and unit), as first written.
	Extra []string
	// HasIntensity reports whether the file has an intensity column with at
	// least one value.
	HasIntensity bool
	// Warnings name the rows that do not stop an assignment but that a person
	// should see: a peak given twice (same position and unit).
	Warnings []linelist.Problem
}

// InputError lists the problems found in an input file (peak list or start
// file), each naming the file, row and field. Its message starts with
// "assign: ".
type InputError struct {
	Problems []linelist.Problem
	Omitted  int // problems beyond linelist.MaxProblems, counted only
}

func (e *InputError) Error() string {
	return linelist.FormatProblems("assign", e.Problems, e.Omitted)
}

// Unwrap returns the underlying causes, so errors.Is sees fs.ErrNotExist and
// the like.
func (e *InputError) Unwrap() []error { return linelist.Causes(e.Problems) }

// problems collects the problems of one file.
type problems struct {
	file string
	e    InputError
}

func (c *problems) add(row int, field, format string, a ...any) {
	if len(c.e.Problems) >= linelist.MaxProblems {
		c.e.Omitted++
		return
	}
	c.e.Problems = append(c.e.Problems, linelist.Problem{File: c.file, Row: row, Field: field, Reason: fmt.Sprintf(format, a...)})
}

func (c *problems) addErr(row int, field, reason string, err error) {
	if len(c.e.Problems) >= linelist.MaxProblems {
		c.e.Omitted++
		return
	}
	c.e.Problems = append(c.e.Problems, linelist.Problem{File: c.file, Row: row, Field: field, Reason: reason, Err: err})
}

func (c *problems) err() error {
	if len(c.e.Problems) == 0 && c.e.Omitted == 0 {
		return nil
	}
	e := c.e
	return &e
}

// peakHeader maps the header keys of a peak list onto its standard columns
// through gocsv (the same mapping, case-insensitive, as the line-list reader).
type peakHeader struct {
	Position  string `csv:"position"`
	Unc       string `csv:"unc"`
	Intensity string `csv:"intensity"`
	Unit      string `csv:"unit"`
}

const (
	pcPosition = iota
	pcUnc
	pcIntensity
	pcUnit
	pcN
)

var peakColumns = [pcN]string{"position", "unc", "intensity", "unit"}

// mapPeakHeader returns the column index of each standard column (-1 when
// absent) from distinct lower-case keys (empty keys are ignored).
func mapPeakHeader(keys []string) ([pcN]int, error) {
	var idx [pcN]int
	for i := range idx {
		idx[i] = -1
	}
	pos := make([]string, len(keys))
	for i := range keys {
		pos[i] = strconv.Itoa(i)
	}
	var out []peakHeader
	if err := gocsv.UnmarshalCSV(&linelist.Rows{Rows: [][]string{keys, pos}}, &out); err != nil {
		return idx, err
	}
	if len(out) != 1 {
		return idx, fmt.Errorf("gocsv decoded %d rows from a header and one row", len(out))
	}
	for c, v := range [pcN]string{out[0].Position, out[0].Unc, out[0].Intensity, out[0].Unit} {
		if v == "" {
			continue
		}
		i, err := strconv.Atoi(v)
		if err != nil || i < 0 || i >= len(keys) {
			return idx, fmt.Errorf("gocsv mapped column %s to %q", peakColumns[c], v)
		}
		idx[c] = i
	}
	return idx, nil
}

// headerKey is the form in which column names are compared: zero-width
// characters removed, blanks trimmed, lower case.
func headerKey(s string) string {
	s = strings.Map(func(r rune) rune {
		switch r {
		case '\u200B', '\u200C', '\u200D', '\uFEFF':
			return -1
		}
		return r
	}, s)
	return strings.ToLower(strings.TrimSpace(s))
}

// filterComments prepares a CSV file for encoding/csv while keeping its
// physical line numbering: a leading UTF-8 byte-order mark is dropped and
// every comment line (first non-blank character '#') or blank line outside a
// quoted field becomes an empty line, which encoding/csv skips. Whether a line
// starts inside a quoted field is tracked by the parity of '"' characters
// (RFC 4180 doubles an escaped quote).
func filterComments(data []byte) []byte {
	data = bytes.TrimPrefix(data, []byte{0xEF, 0xBB, 0xBF})
	out := make([]byte, 0, len(data))
	inQuote := false
	for len(data) > 0 {
		line := data
		if i := bytes.IndexByte(data, '\n'); i >= 0 {
			line = data[:i+1]
		}
		data = data[len(line):]
		if !inQuote {
			t := bytes.TrimLeft(line, " \t\r\n\v\f")
			if len(t) == 0 || t[0] == '#' {
				if line[len(line)-1] == '\n' {
					out = append(out, '\n')
				}
				continue
			}
		}
		if bytes.Count(line, []byte{'"'})%2 == 1 {
			inQuote = !inQuote
		}
		out = append(out, line...)
	}
	return out
}

// maxPeakBytes bounds the size of a peak list read into memory (a picked
// peak list of a million peaks is about 40 MB).
const maxPeakBytes = 512 << 20

// ReadPeaksFile reads the peak list in the file at path; see ReadPeaks.
func ReadPeaksFile(path string, defaultUnit linelist.Unit) (*PeakList, error) {
	if why := textcheck.NotRegular(path); why != "" {
		return nil, &InputError{Problems: []linelist.Problem{{File: path, Reason: why}}}
	}
	f, err := os.Open(path)
	if err != nil {
		reason := textcheck.OpenReason(err)
		return nil, &InputError{Problems: []linelist.Problem{{File: path, Reason: reason, Err: err}}}
	}
	defer f.Close()
	return ReadPeaks(f, path, defaultUnit)
}

// ReadPeaks reads a peak list: a CSV file with a header row, columns in any
// order, names matched case-insensitively, '#' comment lines and blank lines
// skipped, a UTF-8 byte-order mark ignored, numbers with a dot as decimal
// separator.
//
//	column     required  meaning
//	position   yes       peak position, > 0, in the row's unit
//	unc        no        1σ uncertainty of position, > 0, same unit (empty: not given)
//	intensity  no        peak intensity, any non-zero number (its magnitude is used;
//	                     all intensities of a file must have one sign); empty: not given
//	unit       no        "cm-1" or "MHz", any letter case (empty: defaultUnit)
//
// Every other column is passed through (PeakList.Extra, Peak.Extra). Every
// cell must be UTF-8 text. A position in cm⁻¹ must lie below
// linelist.MaxWavenumber (no transition within one electronic state of a
// diatomic molecule reaches it), which catches positions in MHz given without
// a unit. A peak given twice (same position and unit) is read, with a warning
// in PeakList.Warnings. name (a path or any label) is used in messages.
// Problems are returned as one *InputError, each naming the file, row and
// field.
func ReadPeaks(r io.Reader, name string, defaultUnit linelist.Unit) (*PeakList, error) {
	c := &problems{file: name}
	data, err := io.ReadAll(io.LimitReader(r, maxPeakBytes+1))
	if err != nil {
		c.addErr(0, "", "read error: "+err.Error(), err)
		return nil, c.err()
	}
	if len(data) > maxPeakBytes {
		c.add(0, "", "file larger than %d MB; split it", maxPeakBytes>>20)
		return nil, c.err()
	}
	cr := csv.NewReader(bytes.NewReader(filterComments(data)))
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	header, err := cr.Read()
	if err == io.EOF {
		c.add(0, "", "no peaks: the file is empty")
		return nil, c.err()
	}
	if err != nil {
		csvProblem(c, err)
		return nil, c.err()
	}
	hline, _ := cr.FieldPos(0)
	header = append([]string(nil), header...) // the reader reuses its record slice
	pl := &PeakList{File: name}
	nFields := len(header)
	keys := make([]string, nFields)
	first := map[string]int{}
	for i, h := range header {
		if why := textcheck.InvalidUTF8(h); why != "" {
			c.add(hline, fmt.Sprintf("column %d", i+1), "name is %s", why)
			continue
		}
		k := headerKey(h)
		switch prev, dup := first[k]; {
		case k == "":
			c.add(hline, "", "column %d has no name", i+1)
		case dup:
			c.add(hline, strings.TrimSpace(h), "duplicate column name (columns %d and %d; names are matched ignoring case)", prev+1, i+1)
		default:
			first[k] = i
			keys[i] = k
		}
	}
	col, err := mapPeakHeader(keys)
	if err != nil {
		c.addErr(hline, "", "cannot map the header: "+err.Error(), err)
		return nil, c.err()
	}
	if len(c.e.Problems) > 0 {
		return nil, c.err()
	}
	if col[pcPosition] < 0 {
		joined := strings.Join(header, ",")
		switch {
		case strings.Contains(joined, ";"):
			c.add(hline, "", "looks like semicolon-separated; bandwright reads comma-separated with a dot decimal separator")
		case strings.Contains(joined, "\t"):
			c.add(hline, "", "looks like tab-separated; bandwright reads comma-separated with a dot decimal separator")
		default:
			c.add(hline, "position", "required column missing")
		}
		return nil, c.err()
	}
	claimed := make([]bool, nFields)
	for _, i := range col {
		if i >= 0 {
			claimed[i] = true
		}
	}
	var extraCols []int
	for i, k := range keys {
		if !claimed[i] && k != "" {
			extraCols = append(extraCols, i)
			pl.Extra = append(pl.Extra, strings.TrimSpace(header[i]))
		}
	}
	if len(c.e.Problems) > 0 {
		return nil, c.err()
	}

	sign, signRow := 0, 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			csvProblem(c, err)
			if !errors.As(err, &pe) || len(c.e.Problems) >= linelist.MaxProblems {
				break
			}
			continue
		}
		row, _ := cr.FieldPos(0)
		if len(rec) != nFields {
			c.add(row, "", "row has %d fields, header has %d (quote text that contains commas; numbers take a dot as decimal separator)", len(rec), nFields)
			continue
		}
		n0 := len(c.e.Problems) + c.e.Omitted
		for i, cell := range rec {
			if why := textcheck.InvalidUTF8(cell); why != "" {
				name := strings.TrimSpace(header[i])
				if name == "" {
					name = fmt.Sprintf("column %d", i+1)
				}
				c.add(row, name, "%s", why)
			}
		}
		if len(c.e.Problems)+c.e.Omitted != n0 {
			continue
		}
		p := Peak{Index: len(pl.Peaks) + 1, Row: row, Unit: defaultUnit}
		p.Position, p.Text = number(c, rec[col[pcPosition]], "position", row, true)
		if p.Text != "" && !(p.Position > 0) && len(c.e.Problems)+c.e.Omitted == n0 {
			c.add(row, "position", "must be > 0, got %s", p.Text)
		}
		if i := col[pcUnc]; i >= 0 {
			p.Unc, p.UncText = number(c, rec[i], "unc", row, false)
			if p.UncText != "" && !(p.Unc > 0) && len(c.e.Problems)+c.e.Omitted == n0 {
				c.add(row, "unc", "must be > 0, got %s", p.UncText)
			}
		}
		if i := col[pcIntensity]; i >= 0 {
			n1 := len(c.e.Problems) + c.e.Omitted
			x, t := number(c, rec[i], "intensity", row, false)
			if t != "" && len(c.e.Problems)+c.e.Omitted == n1 {
				s := 1
				if x < 0 {
					s = -1
				}
				switch {
				case x == 0:
					c.add(row, "intensity", "must not be zero (leave the cell empty when unknown)")
				case sign == 0:
					sign, signRow = s, row
				case s != sign:
					c.add(row, "intensity", "%s has the opposite sign of the intensities above (row %d); give all intensities with one sign", t, signRow)
				}
				p.Intensity, p.IntensityText = math.Abs(x), t
				pl.HasIntensity = true
			}
		}
		if i := col[pcUnit]; i >= 0 {
			if t := strings.TrimSpace(rec[i]); t != "" {
				u, err := linelist.ParseUnit(t)
				if err != nil {
					c.add(row, "unit", "unknown unit %q: use cm-1 or MHz", t)
				}
				p.Unit = u
			}
		}
		if len(extraCols) > 0 {
			p.Extra = make([]string, len(extraCols))
			for k, i := range extraCols {
				p.Extra[k] = strings.ReplaceAll(rec[i], "\r", "")
			}
		}
		if p.Unit == linelist.Wavenumber && p.Position >= linelist.MaxWavenumber && len(c.e.Problems)+c.e.Omitted == n0 {
			hint := "is the row's unit MHz? say so in its unit column"
			if col[pcUnit] < 0 {
				hint = "if the peaks are in MHz, add a unit column (cm-1 or MHz) or give --unit MHz"
			}
			c.add(row, "position", "%s cm-1 is beyond the dissociation energy of every diatomic molecule (no transition within one electronic state reaches %g cm-1); %s",
				p.Text, linelist.MaxWavenumber, hint)
		}
		if len(c.e.Problems)+c.e.Omitted == n0 {
			pl.Peaks = append(pl.Peaks, p)
		}
	}
	if err := c.err(); err != nil {
		return nil, err
	}
	if len(pl.Peaks) == 0 {
		c.add(hline, "", "no peaks: the file has a header only")
		return nil, c.err()
	}
	type peakKey struct {
		pos  uint64
		unit linelist.Unit
	}
	seen := make(map[peakKey]int, len(pl.Peaks))
	for i, p := range pl.Peaks {
		k := peakKey{math.Float64bits(p.Position), p.Unit}
		if j, dup := seen[k]; dup {
			pl.Warnings = append(pl.Warnings, linelist.Problem{File: name, Row: p.Row, Field: "position",
				Reason: fmt.Sprintf("duplicate peak: the same position as row %d; both copies take part in the assignment (delete one if it was pasted twice)", pl.Peaks[j].Row)})
			continue
		}
		seen[k] = i
	}
	return pl, nil
}

func csvProblem(c *problems, err error) {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		c.addErr(pe.Line, "", fmt.Sprintf("malformed CSV at character %d: %v", pe.Column, pe.Err), err)
		return
	}
	c.addErr(0, "", "read error: "+err.Error(), err)
}

// number parses a numeric cell. An empty cell is a problem when required and
// returns ("", 0) otherwise. The trimmed text is returned for non-empty cells.
func number(c *problems, cell, field string, row int, required bool) (float64, string) {
	t := strings.TrimSpace(cell)
	if t == "" {
		if required {
			c.add(row, field, "missing value")
		}
		return 0, ""
	}
	x, err := strconv.ParseFloat(t, 64)
	if err != nil {
		switch {
		case errors.Is(err, strconv.ErrRange):
			c.add(row, field, "%s is out of the range of a 64-bit float", t)
		case strings.Contains(t, ","):
			c.add(row, field, "not a number: %q (decimal comma? bandwright reads comma-separated with a dot decimal separator)", t)
		default:
			c.add(row, field, "not a number: %q", t)
		}
		return 0, t
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		c.add(row, field, "must be a finite number, got %s", t)
		return 0, t
	}
	return x, t
}
