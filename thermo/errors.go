package thermo

import (
	"fmt"

	"bandwright/internal/failure"
)

// ErrCannotCompute marks a level sum or table that cannot be computed honestly
// (no bound levels, too many levels, non-finite results). Its kind is
// failure.CannotCompute, which the command line maps to exit code 2.
var ErrCannotCompute = cannotCompute{}

type cannotCompute struct{}

func (cannotCompute) Error() string { return "thermo: the level sum cannot be computed honestly" }

// FailureKind returns failure.CannotCompute.
func (cannotCompute) FailureKind() failure.Kind { return failure.CannotCompute }

type computeError struct{ msg string }

func (e *computeError) Error() string             { return e.msg }
func (e *computeError) Is(target error) bool      { return target == ErrCannotCompute }
func (e *computeError) FailureKind() failure.Kind { return failure.CannotCompute }

func cannot(format string, a ...any) error {
	return &computeError{msg: "thermo: " + fmt.Sprintf(format, a...)}
}
