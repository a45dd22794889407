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

	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
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
func (p Peak) Wavenumber() float64 { return p.Unit.ToWavenumber(p.Position) }

// UncWavenumber returns the uncertainty in cm⁻¹ (0 when none is given).
func (p Peak) UncWavenumber() float64 { return p.Unit.ToWavenumber(p.Unc) }

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

// FailureKind returns failure.BadInput: the file must be fixed (exit code 1).
func (e *InputError) FailureKind() failure.Kind { return failure.BadInput }

// inputError returns the problems c collected as an *InputError, nil when
// there are none.
func inputError(c *linelist.Collector) error {
	probs, omitted := c.Problems()
	if len(probs) == 0 && omitted == 0 {
		return nil
	}
	return &InputError{Problems: probs, Omitted: omitted}
}

// peakHeader names the standard columns of a peak list for
// linelist.IndexColumns (the same mapping, case-insensitive, as the line-list
// reader's); the pc constants index them.
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
)

// MaxPeakBytes bounds the size of a peak list, which is read whole: 64 MiB
// hold about 1.5 million peaks, and the reader allocates about 26 bytes per
// byte of the file (45 for 100 MB) and keeps 5 to 12 (BenchmarkReadPeaksMemory).
const MaxPeakBytes = 64 << 20

// openInput opens a user's input file for reading, refusing what is not a
// regular file (a directory, a device, a pipe) with an InputError that names
// it, as it does when the file cannot be opened.
func openInput(path string) (*os.File, error) {
	if why := textcheck.NotRegular(path); why != "" {
		return nil, &InputError{Problems: []linelist.Problem{{File: path, Reason: why}}}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &InputError{Problems: []linelist.Problem{{File: path, Reason: textcheck.OpenReason(err), Err: err}}}
	}
	return f, nil
}

// ReadPeaksFile reads the peak list in the file at path; see ReadPeaks.
func ReadPeaksFile(path string, defaultUnit linelist.Unit) (*PeakList, error) {
	f, err := openInput(path)
	if err != nil {
		return nil, err
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
	c := linelist.NewCollector(name)
	data, err := textcheck.ReadLimited(r, MaxPeakBytes, "a peak list")
	var large *textcheck.TooLargeError
	switch {
	case errors.As(err, &large):
		c.Add(0, "", "%v", err)
		return nil, inputError(c)
	case err != nil:
		c.AddErr(0, "", "read error: "+err.Error(), err)
		return nil, inputError(c)
	}
	t := linelist.ReadHeader(bytes.NewReader(data), c, "no peaks: the file is empty")
	if t == nil {
		return nil, inputError(c)
	}
	pr := &peakReader{c: c, t: t, pl: &PeakList{File: name}, defaultUnit: defaultUnit}
	if !pr.columns() {
		return nil, inputError(c)
	}
	pr.rows()
	if err := inputError(c); err != nil {
		return nil, err
	}
	if len(pr.pl.Peaks) == 0 {
		c.Add(t.Line, "", "no peaks: the file has a header only")
		return nil, inputError(c)
	}
	pr.pl.warnDuplicates()
	return pr.pl, nil
}

// peakReader holds the state of reading one peak list.
type peakReader struct {
	c           *linelist.Collector
	t           *linelist.Table
	pl          *PeakList
	defaultUnit linelist.Unit
	col         []int // column of each standard column (pcPosition …), −1 when absent
	extraCols   []int // columns passed through
	// sign is the sign of the intensities read so far (0: none yet), given
	// first at signRow.
	sign, signRow int
}

// columns maps the header onto the standard columns and the pass-through
// ones; it reports false when rows cannot be read: a problem with the
// header, or no position column.
func (pr *peakReader) columns() bool {
	c, t := pr.c, pr.t
	col, err := linelist.IndexColumns[peakHeader](t.Keys)
	if err != nil {
		c.AddErr(t.Line, "", "cannot map the header: "+err.Error(), err)
		return false
	}
	if c.Count() > 0 {
		return false
	}
	if col[pcPosition] < 0 {
		t.ReportMissing(c, "position")
		return false
	}
	pr.col = col
	claimed := make([]bool, len(t.Keys))
	for _, i := range col {
		if i >= 0 {
			claimed[i] = true
		}
	}
	for i, k := range t.Keys {
		if !claimed[i] && k != "" {
			pr.extraCols = append(pr.extraCols, i)
			pr.pl.Extra = append(pr.pl.Extra, t.Names[i])
		}
	}
	return true
}

// rows reads the data rows into pr.pl, reporting every problem, until the
// end, an error of the underlying reader, or MaxProblems problems.
func (pr *peakReader) rows() {
	c, cr := pr.c, pr.t.CSV
	nFields := len(pr.t.Keys)
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			return
		}
		if err != nil {
			var pe *csv.ParseError
			c.ReadError(err)
			if !errors.As(err, &pe) || c.Full() {
				return
			}
			continue
		}
		row, _ := cr.FieldPos(0)
		if len(rec) != nFields {
			c.Add(row, "", "row has %d fields, header has %d (quote text that contains commas; numbers take a dot as decimal separator)", len(rec), nFields)
			continue
		}
		if p, ok := pr.peak(rec, row); ok {
			pr.pl.Peaks = append(pr.pl.Peaks, p)
		}
	}
}

// peak checks and converts one data row; it reports false when the row has
// a problem.
func (pr *peakReader) peak(rec []string, row int) (Peak, bool) {
	c := pr.c
	n0 := c.Count()
	for i, cell := range rec {
		if why := textcheck.InvalidUTF8(cell); why != "" {
			name := pr.t.Names[i]
			if name == "" {
				name = fmt.Sprintf("column %d", i+1)
			}
			c.Add(row, name, "%s", why)
		}
	}
	if c.Count() != n0 {
		return Peak{}, false
	}
	p := Peak{Index: len(pr.pl.Peaks) + 1, Row: row, Unit: pr.defaultUnit}
	p.Position, p.Text = number(c, rec[pr.col[pcPosition]], "position", row, true)
	if p.Text != "" && !(p.Position > 0) && c.Count() == n0 {
		c.Add(row, "position", "must be > 0, got %s", p.Text)
	}
	if i := pr.col[pcUnc]; i >= 0 {
		p.Unc, p.UncText = number(c, rec[i], "unc", row, false)
		switch {
		case p.UncText != "" && !(p.Unc > 0) && c.Count() == n0:
			c.Add(row, "unc", "must be > 0, got %s", p.UncText)
		case p.UncText != "" && p.Position > 0 && c.Count() == n0:
			if why := linelist.UncProblem(p.Position, p.Unc); why != "" {
				c.Add(row, "unc", "%s", why)
			}
		}
	}
	if i := pr.col[pcIntensity]; i >= 0 {
		pr.intensity(&p, rec[i], row)
	}
	if i := pr.col[pcUnit]; i >= 0 {
		if t := strings.TrimSpace(rec[i]); t != "" {
			u, err := linelist.ParseUnit(t)
			if err != nil {
				c.Add(row, "unit", "unknown unit %q: use %s", t, linelist.UnitChoices)
			}
			p.Unit = u
		}
	}
	if len(pr.extraCols) > 0 {
		p.Extra = make([]string, len(pr.extraCols))
		for k, i := range pr.extraCols {
			p.Extra[k] = strings.ReplaceAll(rec[i], "\r", "")
		}
	}
	if p.Unit == linelist.Wavenumber && p.Position >= linelist.MaxWavenumber && c.Count() == n0 {
		hint := "is the row's unit MHz? say so in its unit column"
		if pr.col[pcUnit] < 0 {
			hint = "if the peaks are in MHz, add a unit column (cm-1 or MHz) or give --unit MHz"
		}
		c.Add(row, "position", "%s cm-1 is beyond the dissociation energy of every diatomic molecule (no transition within one electronic state reaches %g cm-1); %s",
			p.Text, linelist.MaxWavenumber, hint)
	}
	return p, c.Count() == n0
}

// intensity reads the intensity cell of peak p: any non-zero number, all of
// one sign in a file; its magnitude is kept.
func (pr *peakReader) intensity(p *Peak, cell string, row int) {
	c := pr.c
	n1 := c.Count()
	x, t := number(c, cell, "intensity", row, false)
	if t == "" || c.Count() != n1 {
		return
	}
	s := 1
	if x < 0 {
		s = -1
	}
	switch {
	case x == 0:
		c.Add(row, "intensity", "must not be zero (leave the cell empty when unknown)")
	case pr.sign == 0:
		pr.sign, pr.signRow = s, row
	case s != pr.sign:
		c.Add(row, "intensity", "%s has the opposite sign of the intensities above (row %d); give all intensities with one sign", t, pr.signRow)
	}
	p.Intensity, p.IntensityText = math.Abs(x), t
	pr.pl.HasIntensity = true
}

// warnDuplicates warns of every peak that repeats the position and unit of
// an earlier one.
func (pl *PeakList) warnDuplicates() {
	type peakKey struct {
		pos  uint64
		unit linelist.Unit
	}
	seen := make(map[peakKey]int, len(pl.Peaks))
	for i, p := range pl.Peaks {
		k := peakKey{math.Float64bits(p.Position), p.Unit}
		if j, dup := seen[k]; dup {
			pl.Warnings = append(pl.Warnings, linelist.Problem{File: pl.File, Row: p.Row, Field: "position",
				Reason: fmt.Sprintf("duplicate peak: the same position as row %d; both copies take part in the assignment (delete one if it was pasted twice)", pl.Peaks[j].Row)})
			continue
		}
		seen[k] = i
	}
}

// number parses a numeric cell. An empty cell is a problem when required and
// returns ("", 0) otherwise. The trimmed text is returned for non-empty cells.
func number(c *linelist.Collector, cell, field string, row int, required bool) (float64, string) {
	t := strings.TrimSpace(cell)
	if t == "" {
		if required {
			c.Add(row, field, "missing value")
		}
		return 0, ""
	}
	x, err := textcheck.ParseDecimal(t)
	if err != nil {
		switch {
		case errors.Is(err, strconv.ErrRange):
			c.Add(row, field, "%s is out of the range of a 64-bit float", t)
		case strings.Contains(t, ","):
			c.Add(row, field, "not a number: %q (decimal comma? bandwright reads comma-separated with a dot decimal separator)", t)
		default:
			c.Add(row, field, "not a number: %q%s", t, textcheck.DecimalHint(t))
		}
		return 0, t
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		c.Add(row, field, "must be a finite number, got %s", t)
		return 0, t
	}
	return x, t
}
