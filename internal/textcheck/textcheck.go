// Package textcheck holds the small checks that every reader of user files in
// bandwright shares: text that is not UTF-8, decimal commas in TOML files, the
// line and column of a byte offset, and the line of a key in a TOML file (the
// TOML library reports values without positions).
package textcheck

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"
)

// bom is the UTF-8 byte-order mark that some editors put at the start of a file.
var bom = []byte{0xEF, 0xBB, 0xBF}

// TrimBOM returns b without a leading UTF-8 byte-order mark.
func TrimBOM(b []byte) []byte { return bytes.TrimPrefix(b, bom) }

// InvalidUTF8 returns "" when s is valid UTF-8, and otherwise a reason naming
// the first bad byte and its place (1-based character count), for messages such
// as `peaks.csv:7: comment: not UTF-8 text: byte 0xE9 at character 4 (save the
// file as UTF-8)`.
func InvalidUTF8(s string) string {
	if utf8.ValidString(s) {
		return ""
	}
	n := 0
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		n++
		if r == utf8.RuneError && size <= 1 {
			return fmt.Sprintf("not UTF-8 text: byte 0x%02X at character %d (save the file as UTF-8)", s[i], n)
		}
		i += size
	}
	return "not UTF-8 text (save the file as UTF-8)"
}

// LineCol returns the 1-based line and column (in bytes) of byte offset off
// in b. An offset past the end gives the position just after the last byte.
func LineCol(b []byte, off int64) (line, col int) {
	if off < 0 {
		off = 0
	}
	if off > int64(len(b)) {
		off = int64(len(b))
	}
	head := b[:off]
	line = bytes.Count(head, []byte{'\n'}) + 1
	col = int(off) - (bytes.LastIndexByte(head, '\n') + 1) + 1
	return line, col
}

// decimalComma matches `key = 10,60` (a number with a comma where TOML wants a
// dot), outside strings as far as a one-line check can tell.
var decimalComma = regexp.MustCompile(`=\s*[-+]?[0-9]+,[0-9]`)

// DecimalCommaHint returns a hint when line (1-based) of a TOML text holds a
// number written with a decimal comma, and "" otherwise.
func DecimalCommaHint(b []byte, line int) string {
	lines := bytes.Split(b, []byte{'\n'})
	if line < 1 || line > len(lines) {
		return ""
	}
	if decimalComma.Match(lines[line-1]) {
		return " (decimal comma? numbers take a dot as decimal separator, e.g. 10.60)"
	}
	return ""
}

// tableHeader matches a TOML table header `[name]` or `[[name]]` at the start
// of a line (white space allowed), capturing the brackets and the name.
var tableHeader = regexp.MustCompile(`^\s*(\[\[?)\s*([A-Za-z0-9_.\-" ]+?)\s*\]\]?\s*(#.*)?$`)

// KeyLine returns the 1-based line of key in a TOML text, or 0 when it cannot
// be found. table names the table the key is in: "" for the top level (before
// the first table header), "fit" for [fit], "state" with index i ≥ 0 for the
// i-th (0-based) [[state]] array table; index < 0 means a plain table. With
// key "" the line of the table header itself is returned.
//
// The TOML library reports decoded values without positions; this plain scan
// of the text is good for messages (it does not follow dotted keys or inline
// tables, and then reports 0, which messages leave out).
func KeyLine(b []byte, table string, index int, key string) int {
	lines := strings.Split(string(b), "\n")
	keyRe := regexp.MustCompile(`^\s*("?)` + regexp.QuoteMeta(key) + `("?)\s*=`)
	count := -1
	inside := table == ""
	for i, l := range lines {
		if m := tableHeader.FindStringSubmatch(l); m != nil {
			name := strings.Trim(strings.TrimSpace(m[2]), `"`)
			array := m[1] == "[["
			inside = false
			if name == table {
				if array {
					count++
					inside = index >= 0 && count == index
				} else {
					inside = index < 0
				}
			}
			if inside && key == "" {
				return i + 1
			}
			continue
		}
		if inside && key != "" && keyRe.MatchString(l) {
			return i + 1
		}
	}
	return 0
}

// NotRegular returns "" when path names a regular file (after symbolic links),
// and otherwise why it cannot be read as one: a folder, or a device, pipe or
// socket, whose reading may never end (/dev/zero, a FIFO without a writer).
// It does not open the file. A path that does not exist gives "" (the open
// that follows reports it).
func NotRegular(path string) string {
	st, err := os.Stat(path)
	switch {
	case err != nil:
		return ""
	case st.IsDir():
		return "is a folder, not a file"
	case !st.Mode().IsRegular():
		return "is not a regular file (a device, pipe or socket); give a file"
	}
	return ""
}

// At formats "name:line" for messages, or name alone when line is 0.
func At(name string, line int) string {
	if line > 0 {
		return fmt.Sprintf("%s:%d", name, line)
	}
	return name
}

// OpenReason words an error from opening a user's file for a problem report
// that already names the file: "cannot open: no such file or directory"
// rather than the path twice.
func OpenReason(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return "cannot open: " + pe.Err.Error()
	}
	return err.Error()
}

// ParseDecimal parses a number of a CSV cell as strconv.ParseFloat does, but
// in decimal notation only: hexadecimal floats (0x1p-3) and digit separators
// (1_000), which ParseFloat also accepts, are a syntax error
// (strconv.ErrSyntax). No instrument or peak picker writes them, and a typo
// must not turn into a number.
func ParseDecimal(s string) (float64, error) {
	if strings.ContainsAny(s, "xX_") {
		return 0, &strconv.NumError{Func: "ParseFloat", Num: s, Err: strconv.ErrSyntax}
	}
	return strconv.ParseFloat(s, 64)
}

// DecimalHint returns a hint for a cell refused by ParseDecimal for its
// notation (hexadecimal, digit separators), and "" otherwise.
func DecimalHint(s string) string {
	if strings.ContainsAny(s, "xX_") {
		return " (write numbers in decimal notation, e.g. 2147.081 or 6.1e-6)"
	}
	return ""
}
