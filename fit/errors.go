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
	if _, rest, ok := strings.Cut(id, ":"); ok && !strings.HasPrefix(id, "kappa[") {
		id = rest // a parameter of an excited state: the same hint
	}
	switch {
	case strings.HasPrefix(id, "T_e"):
		return "The term energy of an electronic state needs lines between that state and another one (an electronic band)."
	case strings.HasPrefix(id, "A_v"), strings.HasPrefix(id, "A_e"), strings.HasPrefix(id, "lambda_v"), strings.HasPrefix(id, "lambda_e"):
		return "A spin–orbit or spin–spin constant needs lines that reach both spin components of the level (satellite lines, or an electronic band), or J over which their mixing changes."
	case strings.HasPrefix(id, "p_v"), strings.HasPrefix(id, "q_v"), strings.HasPrefix(id, "p_e"), strings.HasPrefix(id, "q_e"):
		return "Λ-doubling constants need lines that reach both e and f levels of the same J (Q lines of a band, or Λ-doubling transitions)."
	case strings.HasPrefix(id, "gamma"):
		return "A spin–rotation constant needs lines that resolve the spin components over a range of N."
	case strings.HasPrefix(id, "alpha_"):
		return "An α term of a fine-structure constant needs that constant in at least 2 vibrational levels."
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

// doubletPiPairs refuses a fit in which A_D and γ of one ²Π level (the same
// state, v and isotopologue; in the Dunham model the same state) both float:
// the levels of an isolated ²Π state determine only a combination of the two
// (Brown, Colbourn, Watson and Wayne, J. Mol. Spectrosc. 74, 294 (1979)). The
// design does not show it as an exact rank defect — the equivalence is a
// contact transformation, not a linear relation — but the pair then drifts
// along a curved valley of χ² that its linearised σ do not cover.
func (w *work) doubletPiPairs() error {
	type level struct {
		state, species string
		v              int
	}
	seen := map[level][2]string{}
	for _, j := range w.free {
		p := w.params[j]
		name, k, ok := model.FineConstant(p)
		if !ok || k != 0 || (name != "A_D" && name != "gamma") {
			continue
		}
		key := level{p.State, p.Species, p.V}
		pair := seen[key]
		if name == "A_D" {
			pair[0] = p.ID()
		} else {
			pair[1] = p.ID()
		}
		seen[key] = pair
		if pair[0] != "" && pair[1] != "" {
			return &UndeterminedError{Groups: [][]string{{pair[0], pair[1]}},
				Hints: []string{"The levels of a ²Π state determine only a combination of A_D and γ (Brown, Colbourn, Watson and Wayne, J. Mol. Spectrosc. 74, 294 (1979)); hold one, e.g. --fix gamma=0, or leave A_D out of --terms."}}
		}
	}
	return nil
}
