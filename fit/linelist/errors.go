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
	// kind identifies the problem's kind for the summary of FormatProblems
	// (the format of its reason); more counts the problems of the same kind
	// found after the collector was full, in rows moreLo … moreHi.
	kind                 string
	more, moreLo, moreHi int
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

// Limits of an error message that lists problems: a person reads the first
// few of each kind and fixes them all at once, so a file with the same
// mistake in every row gives a short message with a count.
const (
	// ShownPerKind is the number of problems of one kind (same file, field
	// and reason apart from its numbers) listed before the rest are counted.
	ShownPerKind = 3
	// ShownProblems caps the problems listed in one message.
	ShownProblems = 12
)

// FormatProblems writes problems as the error message of a reader of bandwright's CSV
// files: "PKG: " and the single problem, or "PKG: N problems" and one problem per
// line — at most ShownPerKind of each kind and ShownProblems in all — followed by a
// line per kind that was cut short ("FILE: ... and 17 more rows with the same
// problem in position (rows 5–21)") and "... and N more" for the rest. The peak-list
// reader of package assign shares it.
func FormatProblems(pkg string, probs []Problem, omitted int) string {
	if len(probs) == 1 && omitted == 0 {
		return pkg + ": " + probs[0].String()
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %d problems", pkg, len(probs)+omitted)
	type kind struct {
		file, field, reason string
	}
	type cut struct{ n, lo, hi int }
	shown, rest := 0, omitted
	perKind := map[kind]int{}
	cuts := map[kind]*cut{}
	var order []kind
	addCut := func(k kind, n, lo, hi int) {
		c := cuts[k]
		if c == nil {
			c = &cut{lo: lo, hi: hi}
			cuts[k] = c
			order = append(order, k)
		}
		c.n += n
		c.lo, c.hi = min(c.lo, lo), max(c.hi, hi)
	}
	for _, p := range probs {
		k := kind{p.File, p.Field, p.kind}
		if k.reason == "" {
			k.reason = stripDigits(p.Reason)
		}
		switch {
		case perKind[k] < ShownPerKind && shown < ShownProblems:
			perKind[k]++
			shown++
			b.WriteString("\n")
			b.WriteString(p.String())
		case perKind[k] < ShownPerKind:
			rest++ // a kind the overall cap left out entirely
		default:
			addCut(k, 1, p.Row, p.Row)
		}
		if p.more > 0 && perKind[k] > 0 {
			// Counted in omitted, but of a kind listed: summarised with it.
			rest -= p.more
			addCut(k, p.more, p.moreLo, p.moreHi)
		}
	}
	for _, k := range order {
		c := cuts[k]
		what := "rows"
		if c.n == 1 {
			what = "row"
		}
		field := ""
		if k.field != "" {
			field = " in " + k.field
		}
		rows := ""
		if c.lo > 0 {
			rows = fmt.Sprintf(" (row %d)", c.lo)
			if c.hi > c.lo {
				rows = fmt.Sprintf(" (rows %d–%d)", c.lo, c.hi)
			}
		}
		fmt.Fprintf(&b, "\n%s: ... and %d more %s with the same problem%s%s", k.file, c.n, what, field, rows)
	}
	if rest > 0 {
		fmt.Fprintf(&b, "\n... and %d more", rest)
	}
	return b.String()
}

// stripDigits returns s without its digits, so that two reasons that differ
// only in the numbers they quote count as one kind.
func stripDigits(s string) string {
	return strings.Map(func(r rune) rune {
		if r >= '0' && r <= '9' {
			return -1
		}
		return r
	}, s)
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
// Once the collector is full, a problem of a kind it kept (same field and
// format) is counted on that problem, any other in omitted.
func (c *collector) add(row int, field string, format string, args ...any) {
	if c.full() {
		c.countMore(row, field, format)
		return
	}
	c.probs = append(c.probs, Problem{File: c.file, Row: row, Field: field, Reason: fmt.Sprintf(format, args...), kind: format})
}

// addErr records a problem with an underlying cause.
func (c *collector) addErr(row int, field, reason string, err error) {
	if c.full() {
		c.countMore(row, field, reason)
		return
	}
	c.probs = append(c.probs, Problem{File: c.file, Row: row, Field: field, Reason: reason, Err: err, kind: reason})
}

// countMore counts a problem found after the collector was full in omitted
// and, when a problem of its kind was kept, on the first such problem too.
func (c *collector) countMore(row int, field, kind string) {
	c.omitted++
	for i := range c.probs {
		p := &c.probs[i]
		if p.Field == field && p.kind == kind {
			if p.more == 0 {
				p.moreLo, p.moreHi = row, row
			}
			p.more++
			p.moreLo, p.moreHi = min(p.moreLo, row), max(p.moreHi, row)
			return
		}
	}
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
