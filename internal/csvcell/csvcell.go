// Package csvcell is the one home of how bandwright writes a text cell of a
// CSV file: Neutralise guards it against spreadsheet formula injection, and
// Append quotes it as RFC 4180 and encoding/csv do. Every CSV writer of the
// program goes through them (directly, or through encoding/csv for the
// quoting).
package csvcell

import (
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Append appends s to b as one CSV field, quoted as encoding/csv's Writer
// quotes it (RFC 4180): in double quotes, with inner quotes doubled, when s
// contains a comma, a quote, a carriage return or a line feed, starts with
// white space, or is the two characters \. (which some databases read as end
// of data). It adds no separator.
func Append(b []byte, s string) []byte {
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

// Neutralise guards a text cell against spreadsheet formula injection: a cell that
// starts with '=', '+', '-' or '@' (or a tab or carriage return, which some spreadsheets
// skip before looking for those) and is not a plain decimal number is returned with a
// single quote in front, so a spreadsheet shows it as text instead of evaluating it.
// Other cells, and numbers such as "-1.5" or "+3e-4", are returned unchanged. A cell
// already starting with a quote is unchanged, so the rule is idempotent.
//
// The rule follows the OWASP "CSV Injection" guidance (common practice).
func Neutralise(s string) string {
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
