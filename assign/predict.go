package assign

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/fit"
	"bandwright/fit/model"
	"bandwright/units"
)

// Prediction is a calculated line with its relative intensity.
type Prediction struct {
	Transition
	Position float64 // cm⁻¹
	// Sigma is the 1σ of Position propagated from the covariance of the
	// constants, σ² = gᵀCg with g = ∂ν/∂p (cm⁻¹); 0 for start-file constants,
	// which carry no covariance.
	Sigma float64
	// Intensity is the relative integrated intensity (see RelativeIntensity).
	Intensity float64
}

// IntensityModel computes relative line intensities of one isotopologue.
type IntensityModel struct {
	Spectrum    Spectrum
	Temperature float64 // K
	Species     StartSpecies
	// Q is the rovibrational partition function Σ_v Σ_J g_ns(J)(2J+1)
	// exp(−c₂[E(v,J) − E(v₀,0)]/T) over the levels the constants describe,
	// energy zero at the lowest level v₀, J = 0.
	Q   float64
	e00 float64
	v0  int
}

// NewIntensityModel prepares the intensity calculation of one species at
// temperature T (K).
func NewIntensityModel(spec Spectrum, T float64, sp StartSpecies) (*IntensityModel, error) {
	if !(T > 0) || math.IsInf(T, 0) {
		return nil, fmt.Errorf("assign: temperature must be > 0 K, got %g", T)
	}
	im := &IntensityModel{Spectrum: spec, Temperature: T, Species: sp}
	m := sp.Constants.Model
	im.v0 = -1
	for v := 0; v <= 100; v++ {
		if m.HasLevel(sp.Index, v) {
			im.v0 = v
			break
		}
	}
	if im.v0 < 0 {
		return nil, fmt.Errorf("assign: %s: the constants describe no vibrational level", sp.Label)
	}
	im.e00 = im.energy(im.v0, 0)
	q := 0.0
	for v := im.v0; v <= 100; v++ {
		if !m.HasLevel(sp.Index, v) {
			continue
		}
		if v > im.v0 && im.energy(v, 0) <= im.energy(v-1, 0) {
			break // beyond the top of the vibrational expansion
		}
		qv, top := 0.0, 0.0
		prev := math.Inf(-1)
		for J := 0; J <= 2000; J++ {
			e := im.energy(v, J)
			if e < prev {
				break
			}
			prev = e
			t := SpinWeight(sp.Iso, J) * float64(2*J+1) * math.Exp(-units.SecondRadiation*(e-im.e00)/T)
			qv += t
			top = math.Max(top, t)
			if J > 2 && t < 1e-15*top {
				break
			}
		}
		q += qv
		if v > im.v0+1 && qv < 1e-15*q {
			break
		}
	}
	im.Q = q
	return im, nil
}

func (im *IntensityModel) energy(v, J int) float64 {
	return im.Species.Constants.Energy(im.Species.Index, v, J, nil)
}

// LowerEnergy returns E(v, J) − E(v₀, 0) in cm⁻¹ from the starting constants.
func (im *IntensityModel) LowerEnergy(v, J int) float64 { return im.energy(v, J) - im.e00 }

// RelativeIntensity returns the relative integrated intensity of transition t
// at wavenumber nu (cm⁻¹):
//
//	I = A · g_ns(J″) · S(J″, ΔJ) · exp(−c₂E″/T) / Q · F_v · f(ν)
//
// with A the abundance, g_ns the nuclear-spin weight (SpinWeight), S the
// Hönl–London factor (HonlLondon; for the Raman Q branch ramanQWeight), E″ the
// lower-level energy above the lowest level, Q the partition function, F_v
// the vibrational factor |⟨v′|q|v″⟩|² of the harmonic oscillator, max(v′, v″),
// for |Δv| = 1 and 1 otherwise (pure rotation: the permanent dipole; overtones:
// unknown, scaled from the data), and f(ν) = ν(1 − exp(−c₂ν/T)) for absorption
// (infrared and rotation; the stimulated-emission correction included) and 1
// for Raman shifts. Intensities of different bands are comparable up to the
// band's transition moment, which the assignment scales to the observed peaks.
func (im *IntensityModel) RelativeIntensity(t Transition, nu float64) float64 {
	dJ := t.DeltaJ()
	var s float64
	if im.Spectrum == Raman && dJ == 0 {
		s = ramanQWeight(t.JLo)
	} else {
		s = HonlLondon(im.Spectrum, t.JLo, dJ)
	}
	if s <= 0 {
		return 0
	}
	T := im.Temperature
	I := im.Species.Abundance * SpinWeight(im.Species.Iso, t.JLo) * s *
		math.Exp(-units.SecondRadiation*im.LowerEnergy(t.VLo, t.JLo)/T) / im.Q
	dv := t.VUp - t.VLo
	if dv == 1 || dv == -1 {
		I *= float64(max(t.VUp, t.VLo))
	}
	if im.Spectrum != Raman {
		if !(nu > 0) {
			return 0
		}
		I *= nu * -math.Expm1(-units.SecondRadiation*nu/T)
	}
	return I
}

// fitPredictor predicts line positions with σ from a fit result.
type fitPredictor struct {
	m       model.Model
	vals    []float64
	freePos []int // parameter index → row of the covariance, −1 when fixed
	cov     *mat.SymDense
	species map[string]int
	gu, gl  []float64
	nz      []int
}

func newFitPredictor(res *fit.Result) *fitPredictor {
	ps := res.Params
	f := &fitPredictor{m: res.Model, vals: model.Values(ps), freePos: make([]int, len(ps)), cov: res.Cov, species: map[string]int{}}
	for i := range f.freePos {
		f.freePos[i] = -1
	}
	for c, j := range res.Free {
		f.freePos[j] = c
	}
	for i, s := range res.Model.Species() {
		f.species[s] = i
	}
	f.gu = make([]float64, len(ps))
	f.gl = make([]float64, len(ps))
	return f
}

// has reports whether the fit describes both levels of a band.
func (f *fitPredictor) has(sp string, vu, vl int) bool {
	s, ok := f.species[sp]
	return ok && f.m.HasLevel(s, vu) && f.m.HasLevel(s, vl)
}

// energyDiff returns E(vu, ju) − E(vl, jl) of species sp with its 1σ.
func (f *fitPredictor) line(sp string, vu, ju, vl, jl int) (float64, float64) {
	s := f.species[sp]
	eu := f.m.Energy(s, vu, ju, f.vals, f.gu)
	el := f.m.Energy(s, vl, jl, f.vals, f.gl)
	f.nz = f.nz[:0]
	for j := range f.gu {
		f.gu[j] -= f.gl[j]
		if f.gu[j] != 0 && f.freePos[j] >= 0 {
			f.nz = append(f.nz, j)
		}
	}
	v := 0.0
	for _, a := range f.nz {
		ra := f.freePos[a]
		for _, b := range f.nz {
			v += f.gu[a] * f.gu[b] * f.cov.At(ra, f.freePos[b])
		}
	}
	return eu - el, math.Sqrt(math.Max(v, 0))
}

// levelPrior returns the polynomial constants T, B, D, H, L of level v of a
// species from its starting constants, solving E(v, J) = T + Bx − Dx² + Hx³
// + Lx⁴ (x = J(J+1)) at J = 0…4: exact for expansions up to x⁴.
func levelPrior(sp StartSpecies, v int) (map[string]float64, error) {
	if d, ok := sp.Constants.Model.(*model.Dunham); ok {
		// Exact: X_l(v) = Σ_k Y_kl (v+½)^k.
		var c [5]float64
		for l := 0; l < 5; l++ {
			q := 1.0
			for k := 0; k < 10; k++ {
				c[l] += d.Y(sp.Index, k, l, sp.Constants.Values, nil) * q
				q *= float64(v) + 0.5
			}
		}
		return map[string]float64{"T": c[0], "B": c[1], "D": -c[2], "H": c[3], "L": c[4]}, nil
	}
	a := mat.NewDense(5, 5, nil)
	b := mat.NewVecDense(5, nil)
	for J := 0; J < 5; J++ {
		x := float64(J * (J + 1))
		p := 1.0
		for k := 0; k < 5; k++ {
			a.Set(J, k, p)
			p *= x
		}
		b.SetVec(J, sp.Constants.Energy(sp.Index, v, J, nil))
	}
	var s mat.VecDense
	if err := s.SolveVec(a, b); err != nil {
		return nil, fmt.Errorf("assign: level v=%d of %s: %w", v, sp.Label, err)
	}
	return map[string]float64{"T": s.AtVec(0), "B": s.AtVec(1), "D": -s.AtVec(2), "H": s.AtVec(3), "L": s.AtVec(4)}, nil
}
