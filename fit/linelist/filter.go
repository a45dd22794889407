package linelist

import (
	"bufio"
	"bytes"
	"fmt"
	"io"

	"bandwright/internal/textcheck"
)

// lineFilter prepares a line-list file for encoding/csv while keeping its physical line
// numbering: it drops a leading UTF-8 byte-order mark and turns every comment line (first
// non-blank character '#') and every blank line outside a quoted field into an empty
// line, which encoding/csv skips. Each physical line of the input gives exactly one line
// of output, so csv.Reader.FieldPos reports the line numbers of the file itself.
//
// Whether a line starts inside a quoted field is tracked by the parity of the '"'
// characters seen so far; in well-formed CSV (RFC 4180) an escaped quote is doubled and
// leaves the parity unchanged, so a quoted cell whose text continues on a line starting
// with '#' is left intact.
type lineFilter struct {
	br       *bufio.Reader
	pending  []byte
	started  bool // the byte-order mark check is done
	midLine  bool // the last chunk passed on did not end its line
	inQuote  bool // an odd number of '"' has been passed on
	skipping bool // inside a comment line longer than the buffer
	line     int  // physical lines passed on completely
	lineLen  int  // bytes of the current physical line so far
	err      error
}

// LineTooLongError is the error of a physical line longer than MaxLineBytes.
type LineTooLongError struct{ Line int }

func (e *LineTooLongError) Error() string {
	return fmt.Sprintf("the line is longer than %s, the limit of a line of a CSV file (a file without line breaks, or not a CSV file?)", textcheck.FormatBytes(MaxLineBytes))
}

// CROnlyError is the error of a file whose lines end in a carriage return
// alone.
type CROnlyError struct{}

func (CROnlyError) Error() string {
	return "the lines end in a carriage return alone (classic Mac OS line breaks); save the file with LF or CR LF line breaks"
}

var emptyLine = []byte{'\n'}

// crOnly reports whether the first chunk of a file breaks its first line with
// a carriage return not followed by a line feed, before any quote (a quoted
// cell may hold one).
func crOnly(chunk []byte) bool {
	end := len(chunk)
	if i := bytes.IndexAny(chunk, "\"\n"); i >= 0 {
		end = i
	}
	i := bytes.IndexByte(chunk[:end], '\r')
	return i >= 0 && i+1 < len(chunk) && chunk[i+1] != '\n'
}

func newLineFilter(r io.Reader) *lineFilter {
	return &lineFilter{br: bufio.NewReaderSize(r, 64<<10)}
}

func (f *lineFilter) Read(p []byte) (int, error) {
	for len(f.pending) == 0 {
		if f.err != nil {
			return 0, f.err
		}
		f.next()
	}
	n := copy(p, f.pending)
	f.pending = f.pending[n:]
	return n, nil
}

// next reads one chunk (a whole line, or a buffer's worth of a long line) and sets
// pending to what should be passed on.
func (f *lineFilter) next() {
	chunk, err := f.br.ReadSlice('\n')
	if err == bufio.ErrBufferFull {
		err = nil
	}
	f.err = err
	if !f.started {
		f.started = true
		chunk = textcheck.TrimBOM(chunk)
		if crOnly(chunk) {
			f.err, f.pending = CROnlyError{}, nil
			return
		}
	}
	complete := len(chunk) > 0 && chunk[len(chunk)-1] == '\n'
	f.lineLen += len(chunk)
	if f.lineLen > MaxLineBytes {
		f.err, f.pending = &LineTooLongError{Line: f.line + 1}, nil
		return
	}
	if complete {
		f.line++
		f.lineLen = 0
	}
	if f.skipping {
		if complete {
			f.skipping = false
			f.pending = emptyLine
		}
		return
	}
	if !f.midLine && !f.inQuote {
		t := bytes.TrimLeft(chunk, " \t\r\n\v\f")
		switch {
		case len(t) > 0 && t[0] == '#':
			if complete {
				f.pending = emptyLine
			} else {
				f.skipping = true
			}
			return
		case len(t) == 0 && (complete || f.err != nil):
			// Blank line, or trailing white space at the end of the input.
			if complete {
				f.pending = emptyLine
			}
			return
		}
	}
	f.midLine = !complete
	if bytes.Count(chunk, []byte{'"'})%2 == 1 {
		f.inQuote = !f.inQuote
	}
	f.pending = chunk
}
