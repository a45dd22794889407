package pipelines

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/pipelines/nightly"
	"bandwright/thermo"
)

// ScaleFactor is the calibration statistic of a line list against reference
// constants: the one factor κ of ν_obs = (1 + κ)·ν_ref over every line the
// reference describes, by weighted least squares (w = 1/unc²):
//
//	κ = Σ w ν_ref (ν_obs − ν_ref) / Σ w ν_ref²,
//	σ_κ = s / √(Σ w ν_ref²),  s² = Σ w (ν_obs − (1+κ)ν_ref)² / (n − 1),
//
// scaled by s like every σ of bandwright (constants.CovarianceConvention). It
// does not depend on the model fitted to the new lines: a drift of the
// wavenumber scale shows in it directly.
type ScaleFactor struct {
	Kappa, Sigma float64
	Lines        int
}

// scaleAgainst fits the scale factor of lines (those with use[i]; all when
// use is nil) against the reference ref. ok is false with fewer than two
// lines the reference describes.
func scaleAgainst(ref *constants.Set, lines []linelist.Line, use []bool) (ScaleFactor, bool) {
	var sw, swr, n float64
	type pt struct{ w, c, r float64 }
	var pts []pt
	for i, l := range lines {
		if use != nil && !use[i] {
			continue
		}
		sp := model.SpeciesIndex(ref.Model, l.Species)
		if sp < 0 || !ref.Model.HasLevel(sp, l.VUp) || !ref.Model.HasLevel(sp, l.VLo) {
			continue
		}
		calc := ref.Model.Energy(sp, l.VUp, l.JUp, ref.Values, nil) - ref.Model.Energy(sp, l.VLo, l.JLo, ref.Values, nil)
		u := l.UncWavenumber()
		if math.IsNaN(calc) || calc == 0 || !(u > 0) {
			continue
		}
		w := 1 / (u * u)
		r := l.Wavenumber() - calc
		sw += w * calc * calc
		swr += w * calc * r
		pts = append(pts, pt{w, calc, r})
		n++
	}
	if n < 2 || !(sw > 0) {
		return ScaleFactor{}, false
	}
	k := swr / sw
	chi2 := 0.0
	for _, p := range pts {
		e := p.r - k*p.c
		chi2 += p.w * e * e
	}
	s := math.Sqrt(chi2 / (n - 1))
	return ScaleFactor{Kappa: k, Sigma: s / math.Sqrt(sw), Lines: len(pts)}, true
}

// ScaleConstantName is the history name of the scale factor against the
// archive's reference.
const ScaleConstantName = "kappa_vs_reference"

// nightlyConstants returns the constants a nightly result records: the
// record's main constants (nightly.RecordConstants, keyed on its model), and
// the scale factor of the used lines against the archive's reference record
// of the same species set when there is one (model-independent); when there
// is none, the result's own record is offered as the reference.
func nightlyConstants(rec *constants.Record, lines []linelist.Line, used []bool, refDir string) ([]nightly.Constant, *nightly.ReferenceOffer, []string) {
	cs := nightly.RecordConstants(rec)
	key := nightly.ReferenceKey(rec.Species)
	path := filepath.Join(refDir, key+".json")
	if _, err := os.Stat(path); err != nil {
		return cs, &nightly.ReferenceOffer{Key: key, Path: constants.ConstantsFile}, nil
	}
	_, ref, err := LoadConstants(path)
	if err != nil {
		return cs, nil, []string{"the archive's reference " + path + " cannot be read (" + err.Error() + "): no scale factor against it"}
	}
	sf, ok := scaleAgainst(ref, lines, used)
	if !ok {
		return cs, nil, []string{"fewer than two lines the archive's reference describes: no scale factor against it"}
	}
	return append(cs, nightly.Constant{Species: key, Name: ScaleConstantName, Value: sf.Kappa, Sigma: sf.Sigma, Unit: "1"}), nil, nil
}

// dominanceNote is the nightly note of a thermo table whose model σ exceeds
// its statistical σ: the functions and from which temperature ("" when none).
func dominanceNote(ds []thermo.Dominance) string {
	if len(ds) == 0 {
		return ""
	}
	var parts []string
	for _, d := range ds {
		parts = append(parts, fmt.Sprintf("%s from %g K", d.Function, d.From))
	}
	return "thermo: the model part of the uncertainty exceeds the statistical part for " + strings.Join(parts, ", ") + " (thermo.json names the contributions)"
}
