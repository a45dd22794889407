package fit

import (
	"errors"
	"fmt"
	"sort"
	"strings"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// ModelSpec chooses a model for a set of lines.
type ModelSpec struct {
	Kind      string   // model.KindTermValues or model.KindDunham
	Terms     []string // term values: B, D, H, L, A, gamma, …; Dunham: Y10, Y01, …, A_e, alpha_A, …; "STATE:NAME" for one state
	Fixes     []model.Fix
	Reference string   // Dunham reference isotopologue; empty: the first in the lines
	BOBTerms  []string // Dunham terms that get Born–Oppenheimer-breakdown parameters
	// States are the electronic states (the ground state first); nil: a ¹Σ⁺
	// ground state alone.
	States []states.State
}

// Defaults of the fit that the command line and the pipeline file apply when
// an option is not given. Each is written here once; the Go types of fit and
// pipelines work at their zero values (see Settings).
const (
	// DefaultModel is the model kind of --model and of the pipeline file's
	// fit.model.
	DefaultModel = model.KindDunham
	// DefaultReject is the rejection threshold of --reject and of fit.reject,
	// in units of the fit's dimensionless standard deviation.
	DefaultReject = 3.0
)

// DefaultBOBTerms returns the Dunham terms that get Born–Oppenheimer-breakdown
// parameters with --bob (pipeline file: bob = true) when no terms are named:
// Y10 and Y01.
func DefaultBOBTerms() []string { return []string{"Y10", "Y01"} }

// DefaultTerms returns the terms used when none are given: B and D for the
// term-values model; Y10, Y20, Y01, Y11, Y02 for Dunham.
func DefaultTerms(kind string) []string {
	if kind == model.KindDunham {
		return []string{"Y10", "Y20", "Y01", "Y11", "Y02"}
	}
	return []string{"B", "D"}
}

// DefaultFineTerms returns the fine-structure terms a state of case c gets
// when --terms names none: term values ²Σ gamma; ³Σ lambda, gamma; ¹Π q; ²Π
// A, gamma, p, q (not A_D, which the levels of one ²Π state cannot tell from
// gamma; Brown, Colbourn, Watson and Wayne 1979). The Dunham model takes
// their X_e, and α_X of the first (A, lambda or gamma) when the lines reach
// more than one vibrational level of the state (multiLevel).
func DefaultFineTerms(kind string, c states.Case, multiLevel bool) []string {
	names := map[states.Case][]string{
		states.DoubletSigma: {"gamma"}, states.TripletSigma: {"lambda", "gamma"},
		states.SingletPi: {"q"}, states.DoubletPi: {"A", "gamma", "p", "q"},
	}[c]
	if kind != model.KindDunham {
		return names
	}
	var out []string
	for i, n := range names {
		out = append(out, model.FineDunhamName(n, 0))
		if i == 0 && multiLevel {
			out = append(out, model.FineDunhamName(n, 1))
		}
	}
	return out
}

// vibronicLevels returns the species in order of appearance and, per species
// and state index, the vibrational levels the lines reach.
func vibronicLevels(lines []linelist.Line, sts []states.State) ([]string, map[string]map[int]map[int]bool, error) {
	var order []string
	levels := map[string]map[int]map[int]bool{}
	for _, l := range lines {
		if levels[l.Species] == nil {
			levels[l.Species] = map[int]map[int]bool{}
			order = append(order, l.Species)
		}
		for _, x := range []struct {
			label string
			v     int
		}{{stateOf(l.Open, true), l.VUp}, {stateOf(l.Open, false), l.VLo}} {
			st := 0
			if x.label != "" {
				if st = states.Index(sts, x.label); st < 0 {
					return nil, nil, fmt.Errorf("fit: %s:%d: no electronic state is labelled %q", l.File, l.Row, x.label)
				}
			}
			if levels[l.Species][st] == nil {
				levels[l.Species][st] = map[int]bool{}
			}
			levels[l.Species][st][x.v] = true
		}
	}
	return order, levels, nil
}

// reachedStates keeps the ground state and the states the lines reach (an
// electronic-states file may list states for the thermo stage that no line
// of the fit belongs to), renumbering the levels.
func reachedStates(sts []states.State, levels map[string]map[int]map[int]bool) ([]states.State, map[string]map[int]map[int]bool) {
	keep := []int{0}
	for st := 1; st < len(sts); st++ {
		for _, bySt := range levels {
			if len(bySt[st]) > 0 {
				keep = append(keep, st)
				break
			}
		}
	}
	out := make([]states.State, len(keep))
	renum := map[string]map[int]map[int]bool{}
	for i, st := range keep {
		out[i] = sts[st]
		for sp, bySt := range levels {
			if renum[sp] == nil {
				renum[sp] = map[int]map[int]bool{}
			}
			if vs := bySt[st]; vs != nil {
				renum[sp][i] = vs
			}
		}
	}
	return out, renum
}

func stateOf(o *linelist.OpenShell, up bool) string {
	switch {
	case o == nil:
		return ""
	case up:
		return o.Up.State
	}
	return o.Lo.State
}

// withFineDefaults adds the default fine-structure terms of the states
// present when terms names no fine-structure term, and per-state Y_kl lists
// for the excited states of a Dunham model when no terms were given.
func withFineDefaults(kind string, terms []string, given bool, sts []states.State, levels map[string]map[int]map[int]bool) []string {
	out := append([]string(nil), terms...)
	nv := make([]int, len(sts))
	for _, bySt := range levels {
		for st, vs := range bySt {
			nv[st] = max(nv[st], len(vs))
		}
	}
	for _, t := range terms {
		_, name, _ := strings.Cut(t, ":")
		if name == "" {
			name = t
		}
		if _, _, fine := model.FineConstant(model.Param{Name: name, V: -1}); fine {
			return out
		}
	}
	for st, s := range sts {
		if nv[st] == 0 {
			continue
		}
		prefix := ""
		if kind == model.KindDunham && st > 0 && !given {
			prefix = s.Label + ":"
			for _, y := range excitedDunhamTerms(nv[st]) {
				out = append(out, prefix+y)
			}
		}
		for _, f := range DefaultFineTerms(kind, s.Case(), nv[st] > 1) {
			if prefix != "" || !contains(out, f) {
				out = append(out, prefix+f)
			}
		}
	}
	return out
}

// excitedDunhamTerms are the default Y_kl of an excited state whose lines
// reach nv vibrational levels: Y01, Y02 for one; Y10, Y01, Y11, Y02 for two;
// the ground state's default for more.
func excitedDunhamTerms(nv int) []string {
	switch nv {
	case 1:
		return []string{"Y01", "Y02"}
	case 2:
		return []string{"Y10", "Y01", "Y11", "Y02"}
	}
	return DefaultTerms(model.KindDunham)
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}

// BuildModel builds the model of spec for the species and levels present in
// lines: the term-values model gets parameters for every vibrational level of
// every electronic state the lines reach; the Dunham model covers every
// isotopologue and state in the lines.
func BuildModel(lines []linelist.Line, spec ModelSpec) (model.Model, error) {
	if len(lines) == 0 {
		return nil, errors.New("fit: no lines")
	}
	sts := spec.States
	if len(sts) == 0 {
		sts = []states.State{states.Ground()}
	}
	order, levels, err := vibronicLevels(lines, sts)
	if err != nil {
		return nil, err
	}
	sts, levels = reachedStates(sts, levels)
	if spec.States != nil {
		spec.States = sts
	}
	terms := spec.Terms
	if len(terms) == 0 {
		terms = DefaultTerms(spec.Kind)
	}
	terms = withFineDefaults(spec.Kind, terms, len(spec.Terms) > 0, sts, levels)
	switch spec.Kind {
	case model.KindTermValues:
		if spec.Reference != "" {
			return nil, errors.New("fit: --reference applies to the Dunham model only")
		}
		if len(spec.BOBTerms) > 0 {
			return nil, errors.New("fit: Born–Oppenheimer-breakdown terms (--bob) apply to the Dunham model only")
		}
		var specs []model.LevelSpec
		for _, s := range order {
			for st := range sts {
				var vs []int
				for v := range levels[s][st] {
					vs = append(vs, v)
				}
				if len(vs) == 0 {
					continue
				}
				sort.Ints(vs)
				specs = append(specs, model.LevelSpec{Species: s, State: st, V: vs})
			}
		}
		m, err := model.NewTermValuesStates(spec.States, specs, terms, spec.Fixes)
		if err != nil {
			return nil, fmt.Errorf("fit: %w", err)
		}
		return m, nil
	case model.KindDunham:
		ref := 0
		if spec.Reference != "" {
			want, err := species.Parse(spec.Reference)
			if err != nil {
				return nil, fmt.Errorf("fit: --reference: %w", err)
			}
			ref = -1
			for i, s := range order {
				if s == want.Label {
					ref = i
				}
			}
			if ref < 0 {
				return nil, fmt.Errorf("fit: --reference %s: no lines of that isotopologue (the lines have %s)", spec.Reference, strings.Join(order, ", "))
			}
		}
		var isos []species.Isotopologue
		for _, s := range order {
			iso, err := species.Parse(s)
			if err != nil {
				return nil, fmt.Errorf("fit: %w", err)
			}
			isos = append(isos, iso)
		}
		m, err := model.NewDunham(isos, model.DunhamOptions{Terms: terms, BOBTerms: spec.BOBTerms, Reference: ref, Fixes: spec.Fixes, States: spec.States})
		if err != nil {
			return nil, fmt.Errorf("fit: %w", err)
		}
		return m, nil
	}
	return nil, fmt.Errorf("fit: model %q: choose term-values or dunham", spec.Kind)
}
