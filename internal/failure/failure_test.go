package failure

import (
	"errors"
	"fmt"
	"io/fs"
	"testing"
)

// undetermined stands for a stage's own error type that states its kind.
type undetermined struct{}

func (undetermined) Error() string     { return "the data cannot determine Y02" }
func (undetermined) FailureKind() Kind { return CannotCompute }

// TestExitCodes checks the mapping the README and the command's help state:
// 0 success, 1 bad input or usage, 2 no honest result, 3 a batch with failures.
func TestExitCodes(t *testing.T) {
	for _, c := range []struct {
		name string
		err  error
		kind Kind
		code int
	}{
		{"nil", nil, Unclassified, 0},
		{"plain error", errors.New("disk full"), Unclassified, 1},
		{"file system error", &fs.PathError{Op: "open", Path: "x", Err: fs.ErrNotExist}, Unclassified, 1},
		{"bad input", Errorf(BadInput, "fit: --fix %q: want NAME=VALUE", "D"), BadInput, 1},
		{"cannot compute", Errorf(CannotCompute, "fit: 3 lines for 5 parameters"), CannotCompute, 2},
		{"own type", undetermined{}, CannotCompute, 2},
		{"wrapped own type", fmt.Errorf("thermo stage: %w", undetermined{}), CannotCompute, 2},
		{"wrapped kind", fmt.Errorf("run: %w", Wrap(BadInput, errors.New("no bands"))), BadInput, 1},
		{"batch", &BatchError{Failed: 1, Total: 4}, PartialBatch, 3},
		{"kind closest to the cause wins", Wrap(BadInput, fmt.Errorf("predict: %w", undetermined{})), CannotCompute, 2},
		{"joined", errors.Join(errors.New("a"), Errorf(CannotCompute, "b")), CannotCompute, 2},
	} {
		if got := KindOf(c.err); got != c.kind {
			t.Errorf("%s: kind %v, want %v", c.name, got, c.kind)
		}
		if got := ExitCode(c.err); got != c.code {
			t.Errorf("%s: exit code %d, want %d", c.name, got, c.code)
		}
	}
	if Wrap(BadInput, nil) != nil {
		t.Error("Wrap(kind, nil) must be nil")
	}
	inner := errors.New("cause")
	if !errors.Is(Errorf(BadInput, "outer: %w", inner), inner) {
		t.Error("Errorf must keep the %w chain")
	}
}
