package linelist

import (
	"fmt"
	"strconv"
	"strings"

	"bandwright/internal/failure"
)

// MaxProblems is the number of problems kept per file; further ones are only counted
// (Error.Omitted).
const MaxProblems = 50

// Problem is one thing wrong with a line-list file.
type Problem struct {
	File   string // file name as given
	Row    int    // physical line number (the header is a line too); 0 for the file as a whole
	Field  string // column name (canonical spelling, e.g. "J_up"); empty when no column is concerned
	Reason string
	Err    error // underlying cause, if any (an I/O error, a species.ParseError); may be nil
}

// String formats the problem as FILE:ROW: field: reason, leaving out ROW when it is 0
// and field when it is empty.
func (p Problem) String() string {
	var b strings.Builder
	b.WriteString(p.File)
	if p.Row > 0 {
		b.WriteByte(':')
		b.WriteString(strconv.Itoa(p.Row))
	}
	if p.Field != "" {
		b.WriteString(": ")
		b.WriteString(p.Field)
	}
	b.WriteString(": ")
	b.WriteString(p.Reason)
	return b.String()
}

// Error is the error returned when one or more line-list files have problems. It holds
// every problem found, up to MaxProblems per file, in file and row order.
type Error struct {
	Problems []Problem
	Omitted  int // problems found beyond MaxProblems per file and not listed
}

// Error returns "linelist: " followed by the single problem, or by the count and one
// problem per line, ending with "... and N more" when problems were omitted.
func (e *Error) Error() string { return FormatProblems("linelist", e.Problems, e.Omitted) }

// Unwrap returns the underlying causes of the problems that have one, so errors.Is and
// errors.As see, for example, fs.ErrNotExist or a *species.ParseError.
func (e *Error) Unwrap() []error { return Causes(e.Problems) }

// FailureKind returns failure.BadInput: the files must be fixed (exit code 1).
func (e *Error) FailureKind() failure.Kind { return failure.BadInput }

// FormatProblems writes problems as the error message of a reader of bandwright's CSV
// files: "PKG: " and the single problem, or "PKG: N problems" and one problem per line,
// ending with "... and N more" when omitted problems were only counted. The peak-list
// reader of package assign shares it.
func FormatProblems(pkg string, probs []Problem, omitted int) string {
	if len(probs) == 1 && omitted == 0 {
		return pkg + ": " + probs[0].String()
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %d problems", pkg, len(probs)+omitted)
	for _, p := range probs {
		b.WriteString("\n")
		b.WriteString(p.String())
	}
	if omitted > 0 {
		fmt.Fprintf(&b, "\n... and %d more", omitted)
	}
	return b.String()
}

// Causes returns the underlying causes of the problems that have one.
func Causes(probs []Problem) []error {
	var errs []error
	for _, p := range probs {
		if p.Err != nil {
			errs = append(errs, p.Err)
		}
	}
	return errs
}

// collector gathers the problems of one file, keeping the first MaxProblems.
type collector struct {
	file    string
	probs   []Problem
	omitted int
}

func (c *collector) full() bool { return len(c.probs) >= MaxProblems }

func (c *collector) any() bool { return len(c.probs) > 0 }

// add records a problem; the reason is formatted only when it will be kept.
func (c *collector) add(row int, field string, format string, args ...any) {
	if c.full() {
		c.omitted++
		return
	}
	c.probs = append(c.probs, Problem{File: c.file, Row: row, Field: field, Reason: fmt.Sprintf(format, args...)})
}

// addErr records a problem with an underlying cause.
func (c *collector) addErr(row int, field, reason string, err error) {
	if c.full() {
		c.omitted++
		return
	}
	c.probs = append(c.probs, Problem{File: c.file, Row: row, Field: field, Reason: reason, Err: err})
}

// merge builds the error of several collectors, nil if none has a problem.
func merge(cs ...*collector) error {
	var e Error
	for _, c := range cs {
		e.Problems = append(e.Problems, c.probs...)
		e.Omitted += c.omitted
	}
	if len(e.Problems) == 0 {
		return nil
	}
	return &e
}
