package fit

import (
	"fmt"
	"strings"

	"bandwright/fit/lsq"
	"bandwright/fit/model"
	"bandwright/internal/failure"
)

// The errors of a fit that no honest result exists for, and the hints that
// name the data which would determine an undetermined parameter.

// CannotFitError is a fit that cannot be done honestly, with the reason
// (fewer lines than parameters, lines a model cannot predict). Its kind is
// failure.CannotCompute: the command line maps it to exit code 2.
type CannotFitError struct{ Msg string }

func (e *CannotFitError) Error() string { return e.Msg }

// FailureKind returns failure.CannotCompute.
func (e *CannotFitError) FailureKind() failure.Kind { return failure.CannotCompute }

// FailureKind returns failure.CannotCompute.
func (e *UndeterminedError) FailureKind() failure.Kind { return failure.CannotCompute }

// UndeterminedError reports parameters the data cannot determine. Its kind is
// failure.CannotCompute: the command line maps it to exit code 2.
type UndeterminedError struct {
	Groups [][]string // parameter IDs of each null direction, strongest first
	Hints  []string   // what data would determine them
}

func (e *UndeterminedError) Error() string {
	var b strings.Builder
	b.WriteString("fit: the data cannot determine ")
	for i, g := range e.Groups {
		if i > 0 {
			b.WriteString("; nor ")
		}
		if len(g) == 1 {
			b.WriteString(g[0])
		} else {
			b.WriteString("the combination of " + strings.Join(g, ", "))
		}
	}
	if len(e.Hints) > 0 {
		b.WriteString(". ")
		b.WriteString(strings.Join(e.Hints, " "))
	}
	b.WriteString(" Remove the parameter from --terms, hold it with --fix NAME=VALUE, or add such lines.")
	return b.String()
}

// undetermined turns a rank error of the engine into a message naming the
// parameters and the data that would determine them.
func (w *work) undetermined(re *lsq.RankError) error {
	e := &UndeterminedError{Groups: re.Names}
	seen := map[string]bool{}
	for _, g := range re.Names {
		for _, id := range g {
			h := hintFor(id, w)
			if h != "" && !seen[h] {
				seen[h] = true
				e.Hints = append(e.Hints, h)
			}
		}
	}
	return e
}

func hintFor(id string, w *work) string {
	switch {
	case strings.HasPrefix(id, "kappa["):
		return "A calibration factor needs lines in that file that are also measured in the reference file or tied to it through the model."
	case strings.HasPrefix(id, "T_v"):
		return "A term value T_v needs a band that connects level v to another level of the same isotopologue (a vibrational band, not only pure-rotation lines within v)."
	case strings.HasPrefix(id, "B_v"):
		return "B_v needs lines with J > 0 in level v."
	case strings.HasPrefix(id, "D_v"), strings.HasPrefix(id, "H_v"), strings.HasPrefix(id, "L_v"):
		return "Centrifugal-distortion terms need lines over a wider J range (higher J) in that level."
	case strings.HasPrefix(id, "BOB"):
		return "A Born–Oppenheimer-breakdown term of element X needs isotopologues that differ in the isotope of X, measured well enough to separate the breakdown from the mass scaling."
	case strings.HasPrefix(id, "Y"):
		k, l, err := model.ParseDunhamTerm(id)
		if err != nil {
			return ""
		}
		if l == 0 {
			return fmt.Sprintf("Y%d%d needs bands reaching at least %d vibrational levels of one isotopologue (or several isotopologues).", k, l, k+1)
		}
		if k > 0 {
			return fmt.Sprintf("Y%d%d needs rotational structure in at least %d vibrational levels.", k, l, k+1)
		}
		return fmt.Sprintf("Y0%d needs lines reaching higher J.", l)
	}
	return ""
}
