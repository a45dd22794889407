package textcheck

import (
	"fmt"
	"io"
)

// Limits checked before a file is parsed, so that no file, however made, can
// make a reader use memory or time out of proportion to what bandwright does
// with it. Each reader states which limits apply to it; every message names
// the file.
const (
	// MaxNesting is the deepest nesting of tables, arrays or objects accepted in
	// a TOML or JSON file: a constants record nests 3 levels, a pipeline or
	// start file 2 to 3, so 64 leaves room for any hand-written file while the
	// parsers (and the duplicate-key check of records, whose paths grow with
	// the depth) stay linear in the size.
	MaxNesting = 64
	// MaxSettingsBytes bounds a hand-written TOML file (pipeline, start and
	// electronic-states files): one holds a few hundred bytes to a few
	// kilobytes, and long comments fit.
	MaxSettingsBytes = 4 << 20
)

// TooLargeError is the error of a file larger than its reader accepts.
type TooLargeError struct {
	Limit int64 // bytes
	What  string
}

func (e *TooLargeError) Error() string {
	return fmt.Sprintf("the file is larger than %s, the limit for %s (is it the right file?)", FormatBytes(e.Limit), e.What)
}

// FormatBytes writes a byte count in the largest binary unit that divides it
// ("1 MiB", "512 MiB", "1 GiB"), in bytes otherwise.
func FormatBytes(n int64) string {
	for _, u := range []struct {
		shift uint
		name  string
	}{{30, "GiB"}, {20, "MiB"}, {10, "KiB"}} {
		if n >= 1<<u.shift && n%(1<<u.shift) == 0 {
			return fmt.Sprintf("%d %s", n>>u.shift, u.name)
		}
	}
	return fmt.Sprintf("%d bytes", n)
}

// ReadLimited reads r to the end, refusing more than limit bytes with a
// *TooLargeError (what names the kind of file, "a pipeline file"). At most
// limit+1 bytes are read.
func ReadLimited(r io.Reader, limit int64, what string) ([]byte, error) {
	b, err := io.ReadAll(io.LimitReader(r, limit+1))
	if err != nil {
		return nil, err
	}
	if int64(len(b)) > limit {
		return nil, &TooLargeError{Limit: limit, What: what}
	}
	return b, nil
}

// NestingError is the error of a file nested deeper than MaxNesting.
type NestingError struct {
	Line int // 1-based line where the limit is passed
	Max  int
}

func (e *NestingError) Error() string {
	return fmt.Sprintf("nested more than %d levels deep (tables, arrays or objects within each other); no bandwright file needs that", e.Max)
}

// JSONNesting returns nil when the arrays and objects of the JSON text b nest
// at most max levels deep, and otherwise a *NestingError at the line where
// the limit is passed. It only counts brackets outside strings; syntax is left
// to the parser.
func JSONNesting(b []byte, max int) error {
	depth, line := 0, 1
	for i := 0; i < len(b); i++ {
		switch b[i] {
		case '\n':
			line++
		case '"':
			i = skipJSONString(b, i)
		case '[', '{':
			depth++
			if depth > max {
				return &NestingError{Line: line, Max: max}
			}
		case ']', '}':
			depth--
		}
	}
	return nil
}

// skipJSONString returns the index of the quote closing the string opened at
// b[i] (or the last index when it is not closed).
func skipJSONString(b []byte, i int) int {
	for i++; i < len(b); i++ {
		switch b[i] {
		case '\\':
			i++
		case '"':
			return i
		}
	}
	return len(b) - 1
}
