package linelist

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Write writes lines as a CSV line list that Read reads back: a header with the
// standard columns species, v_up, J_up, v_lo, J_lo, position, unc, unit, branch, comment,
// then the pass-through columns named by extra (each line's Extra is aligned with extra;
// missing trailing values are written empty). Floats are written with
// strconv.FormatFloat(x, 'g', -1, 64), the shortest text that reads back to the same
// float64, so a Write followed by a Read preserves positions and uncertainties bit for
// bit. Text cells (species, branch, comment, pass-through names and values) go through
// NeutraliseCell. Lines end with "\n".
func Write(w io.Writer, lines []Line, extra []string) error {
	seen := make(map[string]bool, len(columnNames)+len(extra))
	for _, n := range columnNames {
		seen[headerKey(n)] = true
	}
	for _, n := range extra {
		k := headerKey(NeutraliseCell(n))
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
	for j, n := range columnNames {
		row = appendCell(row, j, n)
	}
	for j, n := range extra {
		row = appendCell(row, int(nColumns)+j, NeutraliseCell(n))
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
		row = appendCell(row[:0], 0, NeutraliseCell(l.Species))
		for _, q := range [4]int{l.VUp, l.JUp, l.VLo, l.JLo} {
			row = strconv.AppendInt(append(row, ','), int64(q), 10)
		}
		row = strconv.AppendFloat(append(row, ','), l.Position, 'g', -1, 64)
		row = strconv.AppendFloat(append(row, ','), l.Unc, 'g', -1, 64)
		row = append(append(row, ','), l.Unit.String()...)
		row = appendCell(row, 1, NeutraliseCell(l.Branch))
		row = appendCell(row, 1, NeutraliseCell(l.Comment))
		for j := range extra {
			v := ""
			if j < len(l.Extra) {
				v = NeutraliseCell(l.Extra[j])
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

// appendCell appends a comma (unless j is 0) and the text s, quoted as encoding/csv's
// Writer does (RFC 4180): in double quotes, with inner quotes doubled, when s contains
// a comma, a quote, a carriage return or a line feed, starts with white space, or is
// the two characters \. (which some databases read as end of data).
func appendCell(b []byte, j int, s string) []byte {
	if j > 0 {
		b = append(b, ',')
	}
	if !needsQuotes(s) {
		return append(b, s...)
	}
	b = append(b, '"')
	for {
		i := strings.IndexByte(s, '"')
		if i < 0 {
			break
		}
		b = append(b, s[:i+1]...)
		b = append(b, '"')
		s = s[i+1:]
	}
	b = append(b, s...)
	return append(b, '"')
}

func needsQuotes(s string) bool {
	if s == "" {
		return false
	}
	if s == `\.` || strings.ContainsAny(s, ",\"\r\n") {
		return true
	}
	r, _ := utf8.DecodeRuneInString(s)
	return unicode.IsSpace(r)
}

// NeutraliseCell guards a text cell against spreadsheet formula injection: a cell that
// starts with '=', '+', '-' or '@' (or a tab or carriage return, which some spreadsheets
// skip before looking for those) and is not a plain decimal number is returned with a
// single quote in front, so a spreadsheet shows it as text instead of evaluating it.
// Other cells, and numbers such as "-1.5" or "+3e-4", are returned unchanged. A cell
// already starting with a quote is unchanged, so the rule is idempotent.
//
// The rule follows the OWASP "CSV Injection" guidance (common practice).
func NeutraliseCell(s string) string {
	if s == "" {
		return s
	}
	switch s[0] {
	case '=', '+', '-', '@':
		if isDecimalNumber(s) {
			return s
		}
	case '\t', '\r':
	default:
		return s
	}
	return "'" + s
}

// isDecimalNumber reports whether s is a decimal floating-point literal (no Inf, NaN,
// hexadecimal or underscores).
func isDecimalNumber(s string) bool {
	if strings.Trim(s, "0123456789.eE+-") != "" {
		return false
	}
	_, err := strconv.ParseFloat(s, 64)
	return err == nil || isRangeErr(err)
}

func isRangeErr(err error) bool {
	ne, ok := err.(*strconv.NumError)
	return ok && ne.Err == strconv.ErrRange
}
