package thermo

import (
	"math/rand/v2"
	"testing"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// hh holds Huber–Herzberg constants of a ground state (cm⁻¹).
// Huber & Herzberg, Constants of Diatomic Molecules (1979), as widely quoted;
// from memory (see docs/references.md).
type hh struct {
	label                         string
	we, wexe, weye, be, alpha, de float64
	homonuclear                   bool
	vmax, jmax                    int
}

var (
	hhCO  = hh{label: "12C16O", we: 2169.81358, wexe: 13.28831, weye: 0.010511, be: 1.93128087, alpha: 0.01750441, de: 6.12147e-6, vmax: 3, jmax: 40}
	hhHCl = hh{label: "1H35Cl", we: 2990.946, wexe: 52.8186, weye: 0.2243, be: 10.59341, alpha: 0.30718, de: 5.3194e-4, vmax: 3, jmax: 20}
	hhN2  = hh{label: "14N14N", we: 2358.57, wexe: 14.324, weye: -0.00226, be: 1.99824, alpha: 0.017318, de: 5.76e-6, homonuclear: true, vmax: 3, jmax: 40}
	hhHF  = hh{label: "1H19F", we: 4138.32, wexe: 89.88, be: 20.9557, alpha: 0.798, de: 2.151e-3, vmax: 2, jmax: 18}
)

// dunhamValues maps the constants to Dunham coefficients (Y10=ωe, Y20=−ωexe,
// Y30=ωeye, Y01=Be, Y11=−αe, Y02=−De).
func (c hh) dunhamValues() map[string]float64 {
	m := map[string]float64{"Y10": c.we, "Y20": -c.wexe, "Y01": c.be, "Y11": -c.alpha, "Y02": -c.de}
	if c.weye != 0 {
		m["Y30"] = c.weye
	}
	return m
}

func (c hh) terms() []string {
	if c.weye != 0 {
		return []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02"}
	}
	return []string{"Y10", "Y20", "Y01", "Y11", "Y02"}
}

// lines generates the transitions of bands v–0 (v = 1…vmax) and pure rotation:
// P and R branches for heteronuclear molecules, O, Q and S (Raman) for
// homonuclear ones, J″ ≤ jmax, with unc = 0.001 cm⁻¹.
func (c hh) lines() []linelist.Line {
	var ls []linelist.Line
	row := 1
	add := func(vu, ju, vl, jl int) {
		if ju < 0 {
			return
		}
		row++
		ls = append(ls, linelist.Line{File: "synthetic", Row: row, Species: c.label, VUp: vu, JUp: ju, VLo: vl, JLo: jl, Unc: 0.001, Unit: linelist.Wavenumber})
	}
	for vu := 0; vu <= c.vmax; vu++ {
		for jl := 0; jl <= c.jmax; jl++ {
			if c.homonuclear {
				add(vu, jl+2, 0, jl)
				if vu > 0 {
					add(vu, jl, 0, jl)
					add(vu, jl-2, 0, jl)
				}
			} else {
				add(vu, jl+1, 0, jl)
				if vu > 0 {
					add(vu, jl-1, 0, jl)
				}
			}
		}
	}
	// Hot band 2-1 so that v=1 is observed as a lower level too.
	for jl := 1; jl <= c.jmax; jl++ {
		if c.homonuclear {
			add(2, jl, 1, jl)
		} else {
			add(2, jl+1, 1, jl)
			add(2, jl-1, 1, jl)
		}
	}
	return ls
}

// fitHH runs the chain lines → fit: lines generated from the constants with
// Gaussian noise of noise cm⁻¹ (fixed seed), fitted with the Dunham model, and
// turned into a record. It returns the record and its constants.
func fitHH(t testing.TB, c hh, noise float64, seed uint64) (*constants.Record, *constants.Set) {
	t.Helper()
	lines := c.lines()
	m, err := fit.BuildModel(lines, fit.ModelSpec{Kind: model.KindDunham, Terms: c.terms()})
	if err != nil {
		t.Fatal(err)
	}
	vals := c.dunhamValues()
	p := make([]float64, len(m.Params()))
	for i, par := range m.Params() {
		p[i] = vals[par.Name]
	}
	rng := rand.New(rand.NewPCG(seed, 7))
	for i := range lines {
		l := &lines[i]
		l.Position = m.Energy(0, l.VUp, l.JUp, p, nil) - m.Energy(0, l.VLo, l.JLo, p, nil) + noise*rng.NormFloat64()
		if noise > 0 {
			l.Unc = noise
		}
	}
	return fitRecord(t, lines, model.KindDunham, c.terms())
}

// termValuesFit fits a term-values model (terms) to the given lines' positions computed
// from the Dunham constants c.
func termValuesFit(t testing.TB, c hh, lines []linelist.Line, terms []string, noise float64) (*constants.Record, *constants.Set) {
	t.Helper()
	dm, err := fit.BuildModel(lines, fit.ModelSpec{Kind: model.KindDunham, Terms: c.terms()})
	if err != nil {
		t.Fatal(err)
	}
	vals := c.dunhamValues()
	p := make([]float64, len(dm.Params()))
	for i, par := range dm.Params() {
		p[i] = vals[par.Name]
	}
	rng := rand.New(rand.NewPCG(11, 13))
	for i := range lines {
		l := &lines[i]
		l.Position = dm.Energy(0, l.VUp, l.JUp, p, nil) - dm.Energy(0, l.VLo, l.JLo, p, nil) + noise*rng.NormFloat64()
		if noise > 0 {
			l.Unc = noise
		}
	}
	return fitRecord(t, lines, model.KindTermValues, terms)
}

// fitRecord fits lines with the model kind and terms (no rejection) and
// returns the record and its constants, as thermo reads them from a file.
func fitRecord(t testing.TB, lines []linelist.Line, kind string, terms []string) (*constants.Record, *constants.Set) {
	t.Helper()
	m, err := fit.BuildModel(lines, fit.ModelSpec{Kind: kind, Terms: terms})
	if err != nil {
		t.Fatal(err)
	}
	res, err := fit.Fit(fit.Problem{Lines: lines, Model: m}, fit.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	rec := fit.NewRecord(res)
	cs, err := rec.Constants()
	if err != nil {
		t.Fatal(err)
	}
	return rec, cs
}
