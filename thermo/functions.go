package thermo

import (
	"math"

	"gonum.org/v1/gonum/unit/constant"

	"bandwright/units"
)

// Standard pressures in Pa.
const (
	PressureBar = 1e5    // 1 bar, the standard pressure of current tables
	PressureAtm = 101325 // 1 atm, the older standard
)

// ReferenceTemperature is the 298.15 K of H°(T) − H°(298.15 K) and gef.
const ReferenceTemperature = 298.15

// Functions are the partition function and the ideal-gas thermodynamic
// functions at one temperature, per mole at the standard pressure.
type Functions struct {
	Q      float64 // internal partition function, energy zero at the lowest level
	Cp     float64 // Cp°, J mol⁻¹ K⁻¹
	S      float64 // S°, J mol⁻¹ K⁻¹
	HmH0   float64 // H°(T) − H°(0), kJ mol⁻¹
	HmH298 float64 // H°(T) − H°(298.15 K), kJ mol⁻¹
	Gef    float64 // −[G°(T) − H°(298.15 K)]/T, J mol⁻¹ K⁻¹
}

// Gradients are the derivatives of Functions with respect to the fitted
// parameters (combined order, see System.ParamNames), in the units of the
// functions per unit of each parameter.
type Gradients struct {
	Q, Cp, S, HmH0, HmH298, Gef []float64
}

func newGradients(p int) *Gradients {
	return &Gradients{make([]float64, p), make([]float64, p), make([]float64, p), make([]float64, p), make([]float64, p), make([]float64, p)}
}

// translationalEntropy returns the Sackur–Tetrode entropy of an ideal gas of
// molar mass M (g/mol) at temperature T (K) and pressure p (Pa), J mol⁻¹ K⁻¹:
//
//	S_tr = R [3/2 ln(2π m k T/h²) + ln(kT/p) + 5/2],   m = M/(1000 N_A) kg.
func translationalEntropy(M, T, p float64) float64 {
	k := float64(constant.Boltzmann)
	h := float64(constant.Planck)
	m := M / 1000 / float64(constant.Avogadro)
	lnA := math.Log(2*math.Pi) + math.Log(m) + math.Log(k) + math.Log(T) - 2*math.Log(h)
	return units.GasConstant * (1.5*lnA + math.Log(k) + math.Log(T) - math.Log(p) + 2.5)
}

// hmh0 returns H°(T) − H°(0) in kJ mol⁻¹ from ⟨E⟩ (cm⁻¹).
func hmh0(T, meanE float64) float64 {
	return (2.5*units.GasConstant*T + units.GasConstant*units.SecondRadiation*meanE) / 1000
}

// functions turns the moments at T (and the H°(T)−H°(0) at 298.15 K, kJ/mol)
// into the thermodynamic functions.
func (sys *System) functions(T float64, m *moments, h298 float64) Functions {
	beta := units.SecondRadiation / T
	meanE := m.a1 / m.a0
	meanE2 := m.a2 / m.a0
	variance := math.Max(0, meanE2-meanE*meanE)
	r := units.GasConstant
	var f Functions
	f.Q = m.a0
	f.Cp = 2.5*r + r*beta*beta*variance
	f.HmH0 = hmh0(T, meanE)
	f.S = translationalEntropy(sys.molarMass, T, sys.pressure) + r*math.Log(m.a0) + r*beta*meanE
	f.HmH298 = f.HmH0 - h298
	f.Gef = f.S - f.HmH298*1000/T
	return f
}

// gradients fills d with the parameter derivatives of the functions at T from the
// moments m (with gradients) and the derivative of H°−H°(0) at 298.15 K (dh298,
// kJ/mol per unit parameter), for every column of m (the fitted parameters,
// then the budget's directions):
//
//	∂ln Q = −β⟨g⟩,  ∂⟨E⟩ = ⟨g⟩ − β(⟨Eg⟩ − ⟨E⟩⟨g⟩),  ∂⟨E²⟩ = 2⟨Eg⟩ − β(⟨E²g⟩ − ⟨E²⟩⟨g⟩),
//	∂Cp = Rβ²(∂⟨E²⟩ − 2⟨E⟩∂⟨E⟩),  ∂(H−H0) = Rc₂∂⟨E⟩,  ∂S = R(∂ln Q + β∂⟨E⟩).
func (sys *System) gradients(T float64, m *moments, f Functions, dh298 []float64, d *Gradients) {
	beta := units.SecondRadiation / T
	inv := 1 / m.a0
	meanE := m.a1 * inv
	meanE2 := m.a2 * inv
	r := units.GasConstant
	for k := range d.Q {
		g := m.g0[k] * inv
		eg := m.g1[k] * inv
		e2g := m.g2[k] * inv
		dlnQ := -beta * g
		dE := g - beta*(eg-meanE*g)
		dE2 := 2*eg - beta*(e2g-meanE2*g)
		dVar := dE2 - 2*meanE*dE
		d.Q[k] = f.Q * dlnQ
		d.Cp[k] = r * beta * beta * dVar
		d.HmH0[k] = r * units.SecondRadiation * dE / 1000
		d.S[k] = r * (dlnQ + beta*dE)
		d.HmH298[k] = d.HmH0[k] - dh298[k]
		d.Gef[k] = d.S[k] - d.HmH298[k]*1000/T
	}
}

// Evaluate returns the functions at temperature T for the fitted parameters x
// (combined order, see ParamNames): every level energy is recomputed from the
// models at x and measured from the same zero level; the set of levels is the
// nominal one. It is the function the Monte Carlo draws and the derivative
// checks use.
func (sys *System) Evaluate(x []float64, T float64) Functions {
	e := sys.energiesAt(x, nil, nil)
	acc := newMoments(0)
	sys.accumulateAt(e, units.SecondRadiation/ReferenceTemperature, acc)
	h298 := hmh0(ReferenceTemperature, acc.a1/acc.a0)
	sys.accumulateAt(e, units.SecondRadiation/T, acc)
	return sys.functions(T, acc, h298)
}

// FunctionsAt returns the functions at T and their analytic gradients with
// respect to the fitted parameters at the nominal values.
func (sys *System) FunctionsAt(T float64) (Functions, *Gradients) {
	f, d := sys.functionsAll(T)
	p := sys.p
	return f, &Gradients{d.Q[:p], d.Cp[:p], d.S[:p], d.HmH0[:p], d.HmH298[:p], d.Gef[:p]}
}

// functionsAll is FunctionsAt with the derivatives along the uncertainty
// budget's first-order directions after those of the fitted parameters.
func (sys *System) functionsAll(T float64) (Functions, *Gradients) {
	f298, d298 := sys.reference()
	acc := newMoments(sys.p + sys.pm)
	sys.accumulate(units.SecondRadiation/T, acc, true)
	f := sys.functions(T, acc, f298.HmH0)
	d := newGradients(sys.p + sys.pm)
	sys.gradients(T, acc, f, d298.HmH0, d)
	return f, d
}

// reference returns the functions at the reference temperature 298.15 K and
// their derivatives along every direction (fitted parameters, then the
// budget's first-order ones): H°(298.15 K) − H°(0) is the reference of
// H°(T) − H°(298.15 K) and of its derivatives.
func (sys *System) reference() (Functions, *Gradients) {
	q := sys.p + sys.pm
	acc := newMoments(q)
	sys.accumulate(units.SecondRadiation/ReferenceTemperature, acc, true)
	f298 := sys.functions(ReferenceTemperature, acc, 0)
	d298 := newGradients(q)
	sys.gradients(ReferenceTemperature, acc, f298, make([]float64, q), d298)
	return f298, d298
}
