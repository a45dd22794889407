package constants

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode/utf8"

	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
)

// maxRecordBytes bounds the size of a constants record read (a record of a large
// fit is well below a megabyte).
const maxRecordBytes = 64 << 20

// Read reads and checks a constants record. name is used in messages, which
// are bad input (failure.BadInput, exit code 1).
//
// The record must be one JSON object in UTF-8 (a byte-order mark is skipped);
// syntax errors name the line and column. Besides the structure, the checks
// refuse what a hand edit can break: a schema of another version, values or σ
// that are not finite, σ that disagree with the covariance, and a covariance
// that is not symmetric positive semi-definite (a negative variance, or a
// correlation outside −1…1, would make a propagated σ imaginary).
func Read(r io.Reader, name string) (*Record, error) {
	b, err := io.ReadAll(io.LimitReader(r, maxRecordBytes+1))
	if err != nil {
		return nil, fmt.Errorf("constants: %s: %w", name, err)
	}
	rec, err := decode(b, name)
	if err == nil {
		err = rec.check()
	}
	if err != nil {
		return nil, failure.Errorf(failure.BadInput, "constants: %s%w", name, err)
	}
	return rec, nil
}

// decode decodes b as one JSON record in UTF-8. Its errors start with the
// place (":LINE:COL: " or ": ") to follow the file name.
func decode(b []byte, name string) (*Record, error) {
	if len(b) > maxRecordBytes {
		return nil, fmt.Errorf(": larger than %d MB; not a constants record", maxRecordBytes>>20)
	}
	b = textcheck.TrimBOM(b)
	if len(strings.TrimSpace(string(b))) == 0 {
		return nil, errors.New(": not a constants record: the file is empty")
	}
	if !utf8.Valid(b) {
		off := 0
		for off < len(b) {
			r, size := utf8.DecodeRune(b[off:])
			if r == utf8.RuneError && size <= 1 {
				break
			}
			off += size
		}
		line, col := textcheck.LineCol(b, int64(off))
		return nil, fmt.Errorf(":%d:%d: not UTF-8 text: byte 0x%02X (save the file as UTF-8)", line, col, b[off])
	}
	var deep *textcheck.NestingError
	if err := textcheck.JSONNesting(b, textcheck.MaxNesting); errors.As(err, &deep) {
		return nil, fmt.Errorf(":%d: not a constants record: %w", deep.Line, err)
	}
	if key, off, dup := duplicateKey(b); dup {
		line, col := textcheck.LineCol(b, off)
		return nil, fmt.Errorf(":%d:%d: %s: the key is given twice; which one holds is not clear (the record was edited?)", line, col, key)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	var rec Record
	if err := dec.Decode(&rec); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := textcheck.LineCol(b, se.Offset)
			return nil, fmt.Errorf(":%d:%d: not a constants record: %w", line, col, err)
		case errors.As(err, &te):
			line, col := textcheck.LineCol(b, te.Offset)
			return nil, fmt.Errorf(":%d:%d: %s: not a constants record: %w", line, col, te.Field, err)
		case errors.Is(err, io.ErrUnexpectedEOF):
			return nil, errors.New(": not a constants record: the file ends in the middle of the JSON (cut short?)")
		}
		return nil, fmt.Errorf(": not a constants record: %w", err)
	}
	if _, err := dec.Token(); err != io.EOF {
		line, col := textcheck.LineCol(b, dec.InputOffset())
		return nil, fmt.Errorf(":%d:%d: not a constants record: more follows the record's closing brace", line, col)
	}
	return &rec, nil
}

// check refuses a record of another schema or unit, and one whose model
// cannot be rebuilt (see Constants). Its errors start with ": ".
func (rec *Record) check() error {
	if !strings.HasPrefix(rec.Schema, "bandwright.constants/") {
		return fmt.Errorf(": schema: %q is not a bandwright constants record (want %q)", rec.Schema, Schema)
	}
	if rec.Schema != Schema {
		got, err1 := strconv.Atoi(strings.TrimPrefix(rec.Schema, "bandwright.constants/"))
		own, err2 := strconv.Atoi(strings.TrimPrefix(Schema, "bandwright.constants/"))
		if err1 == nil && err2 == nil && got > own {
			return fmt.Errorf(": schema: %q was written by a newer bandwright; this version reads %q", rec.Schema, Schema)
		}
		return fmt.Errorf(": schema: %q is an older or unknown version of the constants record; this version reads %q (fit the lines again)", rec.Schema, Schema)
	}
	if rec.Unit != linelist.Wavenumber.String() {
		return fmt.Errorf(": unit: %q; a constants record holds its constants in %s", rec.Unit, linelist.Wavenumber)
	}
	if _, err := linelist.ParseUnit(rec.DisplayUnit); rec.DisplayUnit != "" && err != nil {
		return fmt.Errorf(": display_unit: %q; use %s", rec.DisplayUnit, linelist.UnitChoices)
	}
	if _, err := rec.Constants(); err != nil {
		return fmt.Errorf(": %w", err)
	}
	return nil
}

// duplicateKey finds the first key given twice in one JSON object of b (which
// encoding/json would read as the last one, silently): its path, such as
// "parameters[3].value", and the offset just after it. b that is not valid JSON
// reports no duplicate (the decoder reports the syntax error).
func duplicateKey(b []byte) (path string, off int64, found bool) {
	type frame struct {
		obj     bool
		keys    map[string]bool
		wantKey bool
		key     string // current key (objects)
		idx     int    // current index (arrays)
		name    string // path of this container
	}
	var st []*frame
	valueDone := func() {
		if n := len(st); n > 0 {
			if f := st[n-1]; f.obj {
				f.wantKey = true
			} else {
				f.idx++
			}
		}
	}
	childName := func() string {
		if len(st) == 0 {
			return ""
		}
		f := st[len(st)-1]
		if f.obj {
			if f.name == "" {
				return f.key
			}
			return f.name + "." + f.key
		}
		return fmt.Sprintf("%s[%d]", f.name, f.idx)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	for {
		tok, err := dec.Token()
		if err != nil {
			return "", 0, false
		}
		if n := len(st); n > 0 && st[n-1].obj && st[n-1].wantKey {
			f := st[n-1]
			if d, ok := tok.(json.Delim); ok && d == '}' {
				st = st[:n-1]
				valueDone()
				continue
			}
			k, _ := tok.(string)
			if f.keys[k] {
				f.key = k
				return childName(), dec.InputOffset(), true
			}
			f.keys[k], f.key, f.wantKey = true, k, false
			continue
		}
		switch d, _ := tok.(json.Delim); d {
		case '{':
			st = append(st, &frame{obj: true, keys: map[string]bool{}, wantKey: true, name: childName()})
		case '[':
			st = append(st, &frame{name: childName()})
		case ']':
			st = st[:len(st)-1]
			valueDone()
		default:
			valueDone()
		}
		if len(st) == 0 {
			return "", 0, false
		}
	}
}
