package linelist

import (
	"bufio"
	"fmt"
	"io"
	"strconv"

	"bandwright/internal/csvcell"
)

// Write writes lines as a CSV line list that Read reads back: a header with the
// standard columns species, v_up, J_up, v_lo, J_lo, position, unc, unit, branch, comment,
// the open-shell columns (OpenColumns) when some line has open-shell labels (J
// is then written as a decimal, 3.5), then the pass-through columns named by extra (each line's Extra is aligned with extra;
// missing trailing values are written empty). Floats are written with
// strconv.FormatFloat(x, 'g', -1, 64), the shortest text that reads back to the same
// float64, so a Write followed by a Read preserves positions and uncertainties bit for
// bit. Text cells (species, branch, comment, pass-through names and values) go through
// csvcell.Neutralise. Lines end with "\n".
func Write(w io.Writer, lines []Line, extra []string) error {
	return WriteText(w, lines, extra, nil)
}

// Columns returns the standard columns of a line list in the order Write
// writes them: species, v_up, J_up, v_lo, J_lo, position, unc, unit, branch,
// comment.
func Columns() []string { return append([]string(nil), columnNames[:colNUp]...) }

// WriteText is Write with the position and unc of line i written as text(i)
// gives them instead of their shortest float form, for a writer that copies
// numbers from another file and keeps the digits the user wrote (assign
// repeats the peak list's position). An empty text, or a nil text, writes the
// float. Each text must read back as the line's Position or Unc.
func WriteText(w io.Writer, lines []Line, extra []string, text func(i int) (position, unc string)) error {
	seen := make(map[string]bool, len(columnNames)+len(extra))
	for _, n := range columnNames {
		seen[headerKey(n)] = true
	}
	for _, n := range extra {
		k := headerKey(csvcell.Neutralise(n))
		if k == "" {
			return fmt.Errorf("linelist: write: empty pass-through column name")
		}
		if seen[k] {
			return fmt.Errorf("linelist: write: pass-through column %q repeats a column name", n)
		}
		seen[k] = true
	}

	bw := bufio.NewWriterSize(w, 64<<10)
	var row []byte
	open := HasOpenShell(lines)
	for j, n := range columnNames[:colNUp] {
		row = appendCell(row, j, n)
	}
	if open {
		for _, n := range OpenColumns() {
			row = appendCell(row, 1, n)
		}
	}
	for j, n := range extra {
		row = appendCell(row, int(nColumns)+j, csvcell.Neutralise(n))
	}
	row = append(row, '\n')
	if _, err := bw.Write(row); err != nil {
		return fmt.Errorf("linelist: write: %w", err)
	}
	for i := range lines {
		l := &lines[i]
		if len(l.Extra) > len(extra) {
			return fmt.Errorf("linelist: write: line %d (%s:%d) has %d pass-through values for %d pass-through columns",
				i+1, l.File, l.Row, len(l.Extra), len(extra))
		}
		row = appendCell(row[:0], 0, csvcell.Neutralise(l.Species))
		row = strconv.AppendInt(append(row, ','), int64(l.VUp), 10)
		row = appendJ(append(row, ','), l.J2Up())
		row = strconv.AppendInt(append(row, ','), int64(l.VLo), 10)
		row = appendJ(append(row, ','), l.J2Lo())
		var pos, unc string
		if text != nil {
			pos, unc = text(i)
		}
		row = appendNumber(append(row, ','), pos, l.Position)
		row = appendNumber(append(row, ','), unc, l.Unc)
		row = append(append(row, ','), l.Unit.String()...)
		row = appendCell(row, 1, csvcell.Neutralise(l.Branch))
		row = appendCell(row, 1, csvcell.Neutralise(l.Comment))
		if open {
			row = appendOpen(row, l)
		}
		for j := range extra {
			v := ""
			if j < len(l.Extra) {
				v = csvcell.Neutralise(l.Extra[j])
			}
			row = appendCell(row, 1, v)
		}
		row = append(row, '\n')
		if _, err := bw.Write(row); err != nil {
			return fmt.Errorf("linelist: write: %w", err)
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("linelist: write: %w", err)
	}
	return nil
}

// appendNumber appends text, or the shortest form of x when text is empty.
func appendNumber(b []byte, text string, x float64) []byte {
	if text != "" {
		return csvcell.Append(b, text)
	}
	return strconv.AppendFloat(b, x, 'g', -1, 64)
}

// appendCell appends a comma (unless j is 0) and the text s as one CSV field
// (csvcell.Append).
func appendCell(b []byte, j int, s string) []byte {
	if j > 0 {
		b = append(b, ',')
	}
	return csvcell.Append(b, s)
}
