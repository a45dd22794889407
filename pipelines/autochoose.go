package pipelines

import (
	"fmt"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/failure"
)

// FTestLevel is the significance level of the F-test that admits a term in
// the automatic model choice: a term is added only when the probability that
// its χ² reduction is chance is below 1 %.
const FTestLevel = 0.01

// Choice is the outcome of the automatic model choice.
type Choice struct {
	Model string
	Terms []string
	// Log says, step by step, what was tried and why it was kept or dropped.
	Log []string
}

// ChooseModel picks a model and its terms for lines when no pipeline file
// says: the term-values model when an isotopologue has fewer than three
// vibrational levels (one band, or a fundamental with pure rotation), whose
// derived constants then name what was measured (band origin, B_v) instead of
// a Dunham Y10 that would only be called ω_e; the Dunham model when every
// isotopologue connects three or more vibrational levels. Terms are added in order of expected size while the data
// determine them (no undetermined parameter, |value|/σ ≥ 3) and an F-test says
// the χ² reduction is significant: F = (χ²_old − χ²_new)/(χ²_new/dof_new) above
// the (1 − FTestLevel) quantile of F(1, dof_new) (F(m, dof_new) with m the
// number of parameters a term adds). Each candidate is fitted with the usual
// line rejection, and the model without it is refitted to exactly the lines
// the candidate kept, so that both sides of the F-test see the same lines and
// a few misassigned lines cannot hide a real term.
func ChooseModel(lines []linelist.Line, s fit.Settings) (*Choice, error) {
	type band struct {
		s      string
		vu, vl int
	}
	bands := map[string]map[band]bool{}
	levels := map[string]map[int]bool{}
	for _, l := range lines {
		if bands[l.Species] == nil {
			bands[l.Species] = map[band]bool{}
			levels[l.Species] = map[int]bool{}
		}
		bands[l.Species][band{l.Species, l.VUp, l.VLo}] = true
		levels[l.Species][l.VUp] = true
		levels[l.Species][l.VLo] = true
	}
	few := ""
	vib := false
	for sp := range bands {
		if len(levels[sp]) < 3 && (few == "" || sp < few) {
			few = sp
		}
		for b := range bands[sp] {
			if b.vu != b.vl {
				vib = true
			}
		}
	}
	c := &Choice{}
	var start, candidates []string
	if few != "" {
		c.Model = model.KindTermValues
		start = []string{"B"}
		candidates = []string{"D", "H", "L"}
		c.Log = append(c.Log, fmt.Sprintf("%s has %d vibrational level(s), fewer than the three a Dunham model needs to determine ω_e and ω_e x_e: term-values model (term values T_v and B_v per level)", few, len(levels[few])))
	} else {
		c.Model = model.KindDunham
		start = []string{"Y01"}
		if vib {
			start = append([]string{"Y10"}, start...)
		}
		candidates = []string{"Y20", "Y11", "Y02", "Y30", "Y21", "Y12", "Y03", "Y40", "Y31", "Y22", "Y13", "Y04"}
		c.Log = append(c.Log, "three or more vibrational levels of every isotopologue: Dunham model")
	}
	sel := s
	sel.Round = false
	try := func(terms []string, ls []linelist.Line, reject bool) (*fit.Result, error) {
		m, err := fit.BuildModel(ls, fit.ModelSpec{Kind: c.Model, Terms: terms})
		if err != nil {
			return nil, err
		}
		st := sel
		if !reject {
			st.Reject = 0
		}
		return fit.Fit(fit.Problem{Lines: ls, Model: m}, st)
	}
	terms := append([]string(nil), start...)
	cur, err := try(terms, lines, true)
	if err != nil {
		return nil, fmt.Errorf("pipelines: automatic model choice: the starting model (%s %s) cannot be fitted: %w", c.Model, strings.Join(terms, ","), err)
	}
	c.Log = append(c.Log, fmt.Sprintf("start %s: χ² %.6g, dof %d", strings.Join(terms, ","), cur.Stats.Chi2, cur.Stats.DOF))
	for _, t := range candidates {
		next := append(append([]string(nil), terms...), t)
		res, err := try(next, lines, s.Reject > 0)
		if err != nil {
			if failure.KindOf(err) == failure.CannotCompute {
				c.Log = append(c.Log, fmt.Sprintf("%s: not determined by the data, left out", t))
				continue
			}
			return nil, err
		}
		var kept []linelist.Line
		for i, lr := range res.Lines {
			if lr.Used {
				kept = append(kept, lines[i])
			}
		}
		base, err := try(terms, kept, false)
		if err != nil {
			c.Log = append(c.Log, fmt.Sprintf("%s: the model without it cannot be fitted to the lines it keeps (%v), left out", t, err))
			continue
		}
		added := res.Stats.Params - base.Stats.Params
		if added <= 0 || res.Stats.DOF <= 0 {
			c.Log = append(c.Log, fmt.Sprintf("%s: no degrees of freedom left, left out", t))
			continue
		}
		weak := false
		for _, j := range res.Free {
			p := res.Params[j]
			if p.Name == t && p.Sigma > 0 && abs(p.Value) < 3*p.Sigma {
				weak = true
			}
		}
		f := ((base.Stats.Chi2 - res.Stats.Chi2) / float64(added)) / (res.Stats.Chi2 / float64(res.Stats.DOF))
		pval := 1.0
		if f > 0 {
			pval = 1 - distuv.F{D1: float64(added), D2: float64(res.Stats.DOF)}.CDF(f)
		}
		if weak || pval >= FTestLevel {
			c.Log = append(c.Log, fmt.Sprintf("%s: F = %.3g, %s, %s: left out", t, f, pText(pval), map[bool]string{true: "less than 3σ from zero", false: "not significant"}[weak]))
			continue
		}
		c.Log = append(c.Log, fmt.Sprintf("%s: F = %.3g, %s: added", t, f, pText(pval)))
		terms, cur = next, res
	}
	c.Terms = terms
	return c, nil
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// pText writes a p-value; below 1e-12 the F distribution's tail is beyond
// what its CDF resolves in double precision, so it is written as a bound.
func pText(p float64) string {
	if p < 1e-12 {
		return "p < 1e-12"
	}
	return fmt.Sprintf("p = %.2g", p)
}
