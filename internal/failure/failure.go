// Package failure is the one home of bandwright's error kinds and exit codes.
//
// Every stage marks the errors a user must tell apart with a Kind; the command
// line reads it back with ExitCode:
//
//	exit 0  success
//	exit 1  BadInput: an input file, an option or a pipeline file is wrong (the
//	        message names the file, row and field); also every error that carries
//	        no kind (a file that cannot be read, a folder that cannot be written)
//	exit 2  CannotCompute: the input is well formed but admits no honest result
//	        (parameters the data cannot determine, fewer lines than parameters, a
//	        level sum the constants cannot support)
//	exit 3  PartialBatch: some files of a batch failed, the others completed
//
// An error has a kind when it, or an error it wraps, has a method
// FailureKind() Kind: the errors of Errorf and Wrap do, and so do the error
// types of the stages that carry more than a message (fit.UndeterminedError,
// assign.LockError, BatchError).
package failure

import "fmt"

// Kind classifies an error by what the user can do about it.
type Kind int

const (
	// Unclassified is the kind of an error that states none (exit code 1).
	Unclassified Kind = iota
	// BadInput: the input or the options are wrong; fix them (exit code 1).
	BadInput
	// CannotCompute: no honest result exists for this input; more or other
	// data, or a smaller model, are needed (exit code 2).
	CannotCompute
	// PartialBatch: some files of a batch failed (exit code 3).
	PartialBatch
)

// String names the kind.
func (k Kind) String() string {
	switch k {
	case BadInput:
		return "bad input"
	case CannotCompute:
		return "cannot compute honestly"
	case PartialBatch:
		return "batch with failures"
	}
	return "unclassified"
}

// ExitCode returns the exit code of the kind: 1 for BadInput and
// Unclassified, 2 for CannotCompute, 3 for PartialBatch.
func (k Kind) ExitCode() int {
	switch k {
	case CannotCompute:
		return 2
	case PartialBatch:
		return 3
	}
	return 1
}

// kinded is implemented by errors that state their kind.
type kinded interface{ FailureKind() Kind }

// KindOf returns the kind of err: the kind stated closest to its cause, since
// the stage that found the problem knows it best (an option error that wraps
// a fit which cannot be done honestly is CannotCompute). In a joined error the
// first branch that states a kind counts. It returns Unclassified when no
// error in the chain states a kind, and for nil.
func KindOf(err error) Kind {
	kind := Unclassified
	for err != nil {
		if k, ok := err.(kinded); ok {
			kind = k.FailureKind()
		}
		switch u := err.(type) {
		case interface{ Unwrap() error }:
			err = u.Unwrap()
		case interface{ Unwrap() []error }:
			for _, e := range u.Unwrap() {
				if k := KindOf(e); k != Unclassified {
					return k
				}
			}
			return kind
		default:
			err = nil
		}
	}
	return kind
}

// ExitCode maps err to bandwright's exit code: 0 for nil, otherwise the exit
// code of its kind.
func ExitCode(err error) int {
	if err == nil {
		return 0
	}
	return KindOf(err).ExitCode()
}

// Error is an error with a kind.
type Error struct {
	Kind Kind
	Err  error
}

func (e *Error) Error() string { return e.Err.Error() }

// Unwrap returns the cause.
func (e *Error) Unwrap() error { return e.Err }

// FailureKind returns e.Kind.
func (e *Error) FailureKind() Kind { return e.Kind }

// Errorf formats an error (as fmt.Errorf, %w included) of kind k.
func Errorf(k Kind, format string, a ...any) error {
	return &Error{Kind: k, Err: fmt.Errorf(format, a...)}
}

// Wrap gives err the kind k; it returns nil for a nil err.
func Wrap(k Kind, err error) error {
	if err == nil {
		return nil
	}
	return &Error{Kind: k, Err: err}
}

// BatchError reports a batch in which some files failed and the others
// completed (kind PartialBatch, exit code 3).
type BatchError struct{ Failed, Total int }

func (e *BatchError) Error() string {
	return fmt.Sprintf("pipelines: %d of %d files failed (see the ledger)", e.Failed, e.Total)
}

// FailureKind returns PartialBatch.
func (e *BatchError) FailureKind() Kind { return PartialBatch }
