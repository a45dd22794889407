package fit

import (
	"errors"
	"fmt"
	"sort"
	"strings"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
)

// ModelSpec chooses a model for a set of lines.
type ModelSpec struct {
	Kind      string   // model.KindTermValues or model.KindDunham
	Terms     []string // term values: B, D, H, L; Dunham: Y10, Y01, …
	Fixes     []model.Fix
	Reference string   // Dunham reference isotopologue; empty: the first in the lines
	BOBTerms  []string // Dunham terms that get Born–Oppenheimer-breakdown parameters
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

// BuildModel builds the model of spec for the species and levels present in
// lines: the term-values model gets parameters for every vibrational level the
// lines reach; the Dunham model covers every isotopologue in the lines.
func BuildModel(lines []linelist.Line, spec ModelSpec) (model.Model, error) {
	if len(lines) == 0 {
		return nil, errors.New("fit: no lines")
	}
	var order []string
	levels := map[string]map[int]bool{}
	for _, l := range lines {
		if levels[l.Species] == nil {
			levels[l.Species] = map[int]bool{}
			order = append(order, l.Species)
		}
		levels[l.Species][l.VUp] = true
		levels[l.Species][l.VLo] = true
	}
	terms := spec.Terms
	if len(terms) == 0 {
		terms = DefaultTerms(spec.Kind)
	}
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
			var vs []int
			for v := range levels[s] {
				vs = append(vs, v)
			}
			sort.Ints(vs)
			specs = append(specs, model.LevelSpec{Species: s, V: vs})
		}
		m, err := model.NewTermValues(specs, terms, spec.Fixes)
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
		m, err := model.NewDunham(isos, model.DunhamOptions{Terms: terms, BOBTerms: spec.BOBTerms, Reference: ref, Fixes: spec.Fixes})
		if err != nil {
			return nil, fmt.Errorf("fit: %w", err)
		}
		return m, nil
	}
	return nil, fmt.Errorf("fit: model %q: choose term-values or dunham", spec.Kind)
}
