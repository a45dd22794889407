// Package synth makes synthetic peak lists of diatomic spectra with known
// assignments, for the tests and benchmarks of package assign and for people
// who want to look at such files (testdata/assign/generate.go).
//
// Line positions come from a Dunham expansion
//
//	E(v, J) = Σ_kl Y_kl (v+½)^k [J(J+1)]^l   (cm⁻¹)
//
// of a reference isotopologue, carried to the others by the first-order mass
// scaling Y_kl(s) = Y_kl(ref)·(μ_ref/μ_s)^((k+2l)/2) with AME2020 masses from
// package species. Intensities follow the Boltzmann population of the lower
// level at the stated temperature, its 2J+1 degeneracy through the Hönl–London
// (infrared, rotation) or Placzek–Teller (Raman) factors, the nuclear-spin
// weights of homonuclear molecules, the abundance, and for absorption the
// factor ν(1 − exp(−c₂ν/T)). This implementation is independent of package
// assign's own intensity model, so a test compares two codings of the same
// physics.
//
// Then the peak list is spoiled like a real one: Gaussian position noise of
// the stated uncertainty (which grows as the line weakens), lognormal
// intensity noise, a detection limit, a share of lines lost at random,
// spurious peaks at random positions, and lines closer than the resolution
// merged into one peak.
package synth

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"

	"bandwright/fit/linelist"
	"bandwright/fit/species"
	"bandwright/units"
)

// Term is one Dunham coefficient Y_kl in cm⁻¹.
type Term struct {
	K, L int
	Y    float64
}

// Equilibrium turns constants in the equilibrium notation into Dunham terms:
// Y10 = ωe, Y20 = −ωexe, Y30 = ωeye, Y01 = Be, Y11 = −αe, Y02 = −De.
func Equilibrium(we, wexe, weye, be, ae, de float64) []Term {
	return []Term{{1, 0, we}, {2, 0, -wexe}, {3, 0, weye}, {0, 1, be}, {1, 1, -ae}, {0, 2, -de}}
}

// Reference constants of ground electronic states, Huber & Herzberg,
// Constants of Diatomic Molecules (1979), as widely quoted; from memory
// (docs/references.md).
var (
	CO  = Equilibrium(2169.81358, 13.28831, 0.010511, 1.93128087, 0.01750441, 6.12147e-6) // 12C16O X¹Σ⁺
	HCl = Equilibrium(2990.946, 52.8186, 0.2243, 10.59341, 0.30718, 5.3194e-4)            // 1H35Cl X¹Σ⁺
	N2  = Equilibrium(2358.57, 14.324, -0.00226, 1.99824, 0.017318, 5.76e-6)              // 14N14N X¹Σg⁺
)

// Species is one isotopologue in the sample.
type Species struct {
	Label     string
	Abundance float64 // relative
}

// Spec describes a synthetic spectrum.
type Spec struct {
	Reference string // isotopologue whose constants Terms are
	Terms     []Term
	Species   []Species
	Bands     [][2]int // v′, v″
	Spectrum  string   // "ir", "raman" or "rotation"
	// Temperature in K.
	Temperature float64
	// Unit of the peak list: "cm-1" (default) or "MHz".
	Unit string
	// Range limits the peak list to [Range[0], Range[1]] cm⁻¹ when set.
	Range [2]float64
	// Threshold is the detection limit relative to the strongest line.
	Threshold float64
	// Unc is the position 1σ (cm⁻¹) of the strongest lines; a line of
	// relative intensity I gets Unc/√I, at most UncMax.
	Unc, UncMax float64
	// IntensityNoise is the σ of ln I.
	IntensityNoise float64
	// Missing is the share of detectable lines dropped at random; Spurious the
	// number of spurious peaks as a share of the lines kept.
	Missing, Spurious float64
	// SpuriousMax is the largest relative intensity of a spurious peak
	// (log-uniform between the threshold and it); 0 means 1.
	SpuriousMax float64
	// Resolution (cm⁻¹): lines closer than this form one peak at their
	// intensity-weighted mean position.
	Resolution float64
	Seed       uint64
}

// Line is a true transition.
type Line struct {
	Species            string
	VUp, JUp, VLo, JLo int
	Position           float64 // cm⁻¹, noise-free
	Intensity          float64 // relative to the strongest line
}

// Peak is a synthetic peak with the transitions it truly holds (none for a
// spurious peak).
type Peak struct {
	Position  float64 // in the spec's unit
	Unc       float64 // in the spec's unit
	Intensity float64
	Truth     []Line
}

// Lines returns the noise-free lines of the spec above its threshold.
func Lines(s Spec) ([]Line, error) {
	ref, err := species.Parse(s.Reference)
	if err != nil {
		return nil, err
	}
	var out []Line
	for _, sp := range s.Species {
		iso, err := species.Parse(sp.Label)
		if err != nil {
			return nil, err
		}
		E := energy(s.Terms, ref.ReducedMass()/iso.ReducedMass())
		gns := spinWeight(iso)
		q := partitionFunction(E, gns, s.Temperature)
		for _, b := range s.Bands {
			dJs, err := branches(s.Spectrum, b[0], b[1])
			if err != nil {
				return nil, err
			}
			for _, dJ := range dJs {
				out = append(out, branchLines(s, iso.Label, sp.Abundance, b[0], b[1], dJ, E, gns, q)...)
			}
		}
	}
	return keepDetected(s, out), nil
}

// energy returns E(v, J) in cm⁻¹ of an isotopologue whose reduced mass is
// that of the reference over ratio: the reference's Dunham terms scaled by
// ratio^((k+2l)/2).
func energy(terms []Term, ratio float64) func(v, J int) float64 {
	return func(v, J int) float64 {
		x := float64(J) * float64(J+1)
		e := 0.0
		for _, t := range terms {
			e += t.Y * math.Pow(ratio, float64(t.K+2*t.L)/2) * math.Pow(float64(v)+0.5, float64(t.K)) * math.Pow(x, float64(t.L))
		}
		return e
	}
}

// spinWeight returns the nuclear-spin weight of rotational level J: 1 for a
// heteronuclear molecule; for a homonuclear one of nuclear spin I,
// (2I+1)(I+1) for the levels symmetric in the exchange of the nuclei (even J
// for bosons, odd J for fermions, in a ¹Σg⁺ state) and (2I+1)I for the others.
// It is coded here independently of package assign's rule, as a check.
func spinWeight(iso species.Isotopologue) func(J int) float64 {
	return func(J int) float64 {
		if !iso.Homonuclear() {
			return 1
		}
		I := iso.A.Spin()
		sym, anti := (2*I+1)*(I+1), (2*I+1)*I
		if (J%2 == 0) == iso.A.IsBoson() {
			return sym
		}
		return anti
	}
}

// partitionFunction sums g_ns(J)·(2J+1)·exp(−c₂(E(v,J) − E(0,0))/T) over the
// levels the expansion describes (the energy must grow with v and with J).
func partitionFunction(E func(v, J int) float64, gns func(int) float64, T float64) float64 {
	q := 0.0
	for v := 0; v < 30; v++ {
		if v > 0 && E(v, 0) <= E(v-1, 0) {
			break
		}
		for J := 0; J < 400; J++ {
			if J > 0 && E(v, J) <= E(v, J-1) {
				break
			}
			q += gns(J) * float64(2*J+1) * math.Exp(-units.SecondRadiation*(E(v, J)-E(0, 0))/T)
		}
	}
	return q
}

// branches returns the ΔJ of the branches of band v′-v″ in a spectrum.
func branches(spectrum string, vu, vl int) ([]int, error) {
	switch spectrum {
	case "ir":
		return []int{-1, 1}, nil
	case "rotation":
		return []int{1}, nil
	case "raman":
		if vu == vl {
			return []int{2}, nil
		}
		return []int{-2, 0, 2}, nil
	}
	return nil, fmt.Errorf("synth: spectrum %q", spectrum)
}

// lineStrength returns the rotational line-strength factor of the line with
// lower level J and ΔJ = dJ: Hönl–London J+1 (R) and J (P) for infrared and
// rotational spectra; Placzek–Teller factors for the Raman O and S
// branches; for the Raman Q branch 2J+1 with a small anisotropic part (the
// isotropic part dominates the vibrational Q branch).
func lineStrength(spectrum string, dJ, J int) float64 {
	Jf := float64(J)
	switch {
	case spectrum != "raman" && dJ == 1:
		return Jf + 1
	case spectrum != "raman" && dJ == -1:
		return Jf
	case dJ == 2:
		return (2*Jf + 1) * 3 * (Jf + 1) * (Jf + 2) / (2 * (2*Jf + 1) * (2*Jf + 3))
	case dJ == -2:
		return (2*Jf + 1) * 3 * Jf * (Jf - 1) / (2 * (2*Jf + 1) * (2*Jf - 1))
	case dJ == 0:
		return (2*Jf + 1) * (1 + 0.2*Jf*(Jf+1)/((2*Jf-1)*(2*Jf+3)))
	}
	return 0
}

// branchLines returns the lines of branch dJ of band vu-vl of one
// isotopologue (label, abundance, energies E, spin weights gns, partition
// function q), up to where the expansion stops describing the levels. The
// intensity is the Boltzmann population of the lower level times the line
// strength, the spin weight and the abundance, times v′ for a Δv = 1 band,
// and for absorption (not Raman) times ν(1 − exp(−c₂ν/T)); not yet
// normalised.
func branchLines(s Spec, label string, abundance float64, vu, vl, dJ int, E func(v, J int) float64, gns func(int) float64, q float64) []Line {
	var out []Line
	for J := 0; J < 300; J++ {
		if (J > 0 && E(vl, J) <= E(vl, J-1)) || (J+dJ > 0 && E(vu, J+dJ) <= E(vu, J+dJ-1)) {
			break
		}
		ju := J + dJ
		if ju < 0 || (dJ == 0 && J == 0) {
			continue
		}
		hl := lineStrength(s.Spectrum, dJ, J)
		nu := E(vu, ju) - E(vl, J)
		if nu <= 0 || hl <= 0 {
			continue
		}
		in := abundance * gns(J) * hl * math.Exp(-units.SecondRadiation*(E(vl, J)-E(0, 0))/s.Temperature) / q
		if vu-vl == 1 {
			in *= float64(vu)
		}
		if s.Spectrum != "raman" {
			in *= nu * (1 - math.Exp(-units.SecondRadiation*nu/s.Temperature))
		}
		out = append(out, Line{Species: label, VUp: vu, JUp: ju, VLo: vl, JLo: J, Position: nu, Intensity: in})
	}
	return out
}

// keepDetected normalises the intensities to the strongest line and keeps,
// sorted by position, the lines at or above the spec's threshold and inside
// its range.
func keepDetected(s Spec, out []Line) []Line {
	top := 0.0
	for _, l := range out {
		top = math.Max(top, l.Intensity)
	}
	kept := out[:0]
	for _, l := range out {
		l.Intensity /= top
		if l.Intensity >= s.Threshold && (s.Range == [2]float64{} || (l.Position >= s.Range[0] && l.Position <= s.Range[1])) {
			kept = append(kept, l)
		}
	}
	sort.Slice(kept, func(i, j int) bool { return kept[i].Position < kept[j].Position })
	return kept
}

// Generate makes the peak list of a spec, sorted by position.
func Generate(s Spec) ([]Peak, error) {
	lines, err := Lines(s)
	if err != nil {
		return nil, err
	}
	if len(lines) == 0 {
		return nil, fmt.Errorf("synth: no line above the threshold")
	}
	rng := rand.New(rand.NewPCG(s.Seed, 0x5eed))
	type raw struct {
		pos, in float64
		truth   []Line
	}
	var rs []raw
	for _, l := range lines {
		if rng.Float64() < s.Missing {
			continue
		}
		rs = append(rs, raw{pos: l.Position, in: l.Intensity, truth: []Line{l}})
	}
	nLines := len(rs)
	lo, hi := lines[0].Position, lines[len(lines)-1].Position
	if s.Range != [2]float64{} {
		lo, hi = s.Range[0], s.Range[1]
	}
	smax := s.SpuriousMax
	if smax == 0 {
		smax = 1
	}
	nsp := int(math.Round(s.Spurious * float64(nLines)))
	for i := 0; i < nsp; i++ {
		in := s.Threshold * math.Pow(smax/s.Threshold, rng.Float64())
		rs = append(rs, raw{pos: lo + (hi-lo)*rng.Float64(), in: in})
	}
	sort.Slice(rs, func(i, j int) bool { return rs[i].pos < rs[j].pos })
	// Merge what the resolution cannot separate.
	var merged []raw
	for _, x := range rs {
		if n := len(merged); n > 0 && x.pos-merged[n-1].pos < s.Resolution {
			m := &merged[n-1]
			w := m.in + x.in
			m.pos = (m.pos*m.in + x.pos*x.in) / w
			m.in = w
			m.truth = append(m.truth, x.truth...)
			continue
		}
		merged = append(merged, x)
	}
	var out []Peak
	for _, x := range merged {
		u := s.Unc / math.Sqrt(math.Min(1, x.in))
		if s.UncMax > 0 {
			u = math.Min(u, s.UncMax)
		}
		p := Peak{Position: x.pos + u*rng.NormFloat64(), Unc: u, Intensity: x.in * math.Exp(s.IntensityNoise*rng.NormFloat64()), Truth: x.truth}
		if s.Unit == "MHz" {
			p.Position *= units.MHzPerWavenumber
			p.Unc *= units.MHzPerWavenumber
		}
		out = append(out, p)
	}
	return out, nil
}

// WriteCSV writes peaks as a peak list (position, unc, intensity, unit);
// with truth, the true assignment follows in a column "truth" (species v′-v″
// branch(J″), joined by "+" for merged peaks, empty for spurious peaks).
func WriteCSV(w io.Writer, peaks []Peak, unit string, truth bool) error {
	if unit == "" {
		unit = "cm-1"
	}
	cw := csv.NewWriter(w)
	head := []string{"position", "unc", "intensity", "unit"}
	if truth {
		head = append(head, "truth")
	}
	cw.Write(head)
	for _, p := range peaks {
		rec := []string{strconv.FormatFloat(p.Position, 'f', 6, 64), strconv.FormatFloat(p.Unc, 'g', 2, 64), strconv.FormatFloat(p.Intensity, 'g', 4, 64), unit}
		if truth {
			t := ""
			for i, l := range p.Truth {
				if i > 0 {
					t += "+"
				}
				t += Label(l)
			}
			rec = append(rec, t)
		}
		cw.Write(rec)
	}
	cw.Flush()
	return cw.Error()
}

// Label writes a line as "12C16O 1-0 P(12)".
func Label(l Line) string {
	return l.Species + " " + linelist.TransitionLabel(l.VUp, l.JUp, l.VLo, l.JLo)
}
