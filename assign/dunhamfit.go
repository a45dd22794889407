package assign

import (
	"errors"
	"math"
	"sort"

	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// refreshPrediction sets the lock prediction of band b from a joint Dunham
// fit of the lines already assigned in b's molecule (all its isotopologues,
// tied by the mass scaling Y_kl ∝ μ^−(k+2l)/2). The terms the lines
// determine float (see dunhamCoverage); the others keep their starting
// values. Without minLockFitLines assigned lines in the molecule, when the
// starting constants are not a Dunham expansion, or when the fit fails, b is
// locked from the starting constants.
func (r *run) refreshPrediction(b *band) error {
	b.lockPos, b.lockSig = nil, nil
	lines := r.moleculeLines(b)
	if len(lines) < minLockFitLines {
		return nil
	}
	// Put b's own species, when it has lines, first: it becomes the reference.
	ref := lines[0].Species
	for _, l := range lines {
		if l.Species == b.sp.sp.Label {
			ref = l.Species
			break
		}
	}
	refSp := r.speciesState(ref)
	dm, ok := refSp.sp.Constants.Model.(*model.Dunham)
	if !ok {
		return nil
	}
	startVal := func(name string) float64 {
		k, l, err := model.ParseDunhamTerm(name)
		if err != nil {
			return 0
		}
		return dm.Y(refSp.sp.Index, k, l, refSp.sp.Constants.Values, nil)
	}
	res := r.fitMolecule(lines, ref, dunhamCoverage(lines), startVal)
	if res == nil {
		return nil
	}
	// A species absent from the lines is added by refitting nothing:
	// build a predictor over a model that includes it.
	fp := newFitPredictor(res)
	if _, ok := fp.species[b.sp.sp.Label]; !ok {
		var err error
		fp, err = extendPredictor(res, b.sp.sp)
		if err != nil {
			return nil
		}
	}
	b.setLockPrediction(fp)
	return nil
}

// minLockFitLines is the number of assigned lines of a molecule from which
// its next band is locked from a fit of them: fewer cannot tell the band
// origin and the rotational constants apart.
const minLockFitLines = 4

// moleculeLines returns the assigned lines of b's molecule (any
// isotopologue), in peak-list order.
func (r *run) moleculeLines(b *band) []linelist.Line {
	var lines []linelist.Line
	for t, k := range r.assigned {
		sp := r.speciesState(t.Species)
		if sp == nil || !sameMolecule(sp.sp.Iso, b.sp.sp.Iso) {
			continue
		}
		lines = append(lines, r.lineOf(t, k))
	}
	sort.Slice(lines, func(i, j int) bool { return lines[i].Row < lines[j].Row })
	return lines
}

// dunhamTerms are the terms of the lock fit, in the order they are tried.
var dunhamTerms = []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y21", "Y02", "Y12", "Y03"}

// dunhamCoverage says which Dunham terms the lines determine: Y10 with a
// vibrational band; Y20 with three vibrational levels, Y30 with four; Y01;
// Y11 with two levels, Y21 with three; Y02 with J ≥ 10, Y12 with two levels
// and J ≥ 25, Y03 with J ≥ 30.
func dunhamCoverage(lines []linelist.Line) map[string]bool {
	levels := map[int]bool{}
	vib, jmax := false, 0
	for _, l := range lines {
		levels[l.VUp], levels[l.VLo] = true, true
		if l.VUp != l.VLo {
			vib = true
		}
		jmax = max(jmax, l.JUp, l.JLo)
	}
	nv := len(levels)
	return map[string]bool{
		"Y10": vib, "Y20": vib && nv >= 3, "Y30": vib && nv >= 4,
		"Y01": true, "Y11": nv >= 2, "Y21": nv >= 3,
		"Y02": jmax >= 10, "Y12": nv >= 2 && jmax >= 25, "Y03": jmax >= 30,
	}
}

// fitMolecule fits the lines with the Dunham terms that float (reference
// isotopologue ref), the others held at startVal (the leading terms always
// written, even when 0). Terms the fit reports undetermined are held too and
// the fit repeated, up to five times. It returns nil when no fit succeeds.
func (r *run) fitMolecule(lines []linelist.Line, ref string, float map[string]bool, startVal func(string) float64) *fit.Result {
	held := map[string]bool{}
	for attempt := 0; attempt < 6; attempt++ {
		var terms []string
		var fixes []model.Fix
		for _, n := range dunhamTerms {
			if float[n] && !held[n] {
				terms = append(terms, n)
			} else if v := startVal(n); v != 0 || n == "Y10" || n == "Y20" || n == "Y01" || n == "Y11" || n == "Y02" {
				fixes = append(fixes, model.Fix{Name: n, V: -1, Value: v})
			}
		}
		m, err := fit.BuildModel(lines, fit.ModelSpec{Kind: model.KindDunham, Terms: terms, Fixes: fixes, Reference: ref})
		if err != nil {
			return nil // the lines do not make a Dunham model (e.g. several molecules): lock from the start
		}
		res, err := fit.Fit(fit.Problem{Lines: lines, Model: m}, fit.Settings{Reject: r.s.sigmas()})
		if err == nil {
			return res
		}
		var ue *fit.UndeterminedError
		if !errors.As(err, &ue) || !holdUndetermined(ue, float, held) {
			return nil
		}
	}
	return nil
}

// holdUndetermined adds to held the floating terms (other than Y01) that the
// fit could not determine, and reports whether there were any.
func holdUndetermined(ue *fit.UndeterminedError, float, held map[string]bool) bool {
	added := false
	for _, g := range ue.Groups {
		for _, id := range g {
			if id != "Y01" && float[id] && !held[id] {
				held[id] = true
				added = true
			}
		}
	}
	return added
}

// setLockPrediction sets b's lock prediction (positions, σ and origin) from
// predictor fp.
func (b *band) setLockPrediction(fp *fitPredictor) {
	b.lockPos, b.lockSig = map[*branch][]float64{}, map[*branch][]float64{}
	for _, br := range b.branches {
		ps := make([]float64, len(br.start))
		ss := make([]float64, len(br.start))
		for j := range ps {
			ps[j] = math.NaN()
			if j >= br.jmin && j <= br.jmax {
				ps[j], ss[j] = fp.line(b.sp.sp.Label, b.vu, j+br.dJ, b.vl, j)
			}
		}
		b.lockPos[br], b.lockSig[br] = ps, ss
	}
	b.lockOrigin, b.lockSigOrigin = fp.line(b.sp.sp.Label, b.vu, 0, b.vl, 0)
}

// extendPredictor builds a predictor from a Dunham fit result over a model
// that also covers isotopologue sp (same parameters, mass-scaled).
func extendPredictor(res *fit.Result, sp StartSpecies) (*fitPredictor, error) {
	d, ok := res.Model.(*model.Dunham)
	if !ok {
		return nil, errors.New("assign: not a Dunham model")
	}
	var terms []string
	for _, p := range res.Params {
		terms = append(terms, p.Name)
	}
	isos := append(d.Isotopologues(), sp.Iso)
	m, err := model.NewDunham(isos, model.DunhamOptions{Terms: terms})
	if err != nil {
		return nil, err
	}
	r2 := *res
	r2.Model = m
	return newFitPredictor(&r2), nil
}
