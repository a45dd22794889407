package thermo

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/internal/parallel"
	"bandwright/units"
)

// Table computes the rows at the temperatures with linearly propagated σ,
// σ_f = √(∇fᵀ C ∇f), in parallel over temperatures on up to workers
// goroutines (0: GOMAXPROCS; results do not depend on the number of workers).
func (sys *System) Table(temps []float64, workers int) []Row {
	acc := newMoments(sys.p)
	sys.accumulate(units.SecondRadiation/ReferenceTemperature, acc, true)
	f298 := sys.functions(ReferenceTemperature, acc, 0)
	d298 := newGradients(sys.p)
	sys.gradients(ReferenceTemperature, acc, f298, make([]float64, sys.p), d298)
	h298, dh298 := f298.HmH0, d298.HmH0

	rows := make([]Row, len(temps))
	type scratch struct {
		acc *moments
		d   *Gradients
	}
	newScratch := func() scratch { return scratch{newMoments(sys.p), newGradients(sys.p)} }
	parallel.ForScratch(len(temps), workers, newScratch, func(s scratch, i int) {
		acc, d := s.acc, s.d
		T := temps[i]
		beta := units.SecondRadiation / T
		sys.accumulate(beta, acc, true)
		f := sys.functions(T, acc, h298)
		sys.gradients(T, acc, f, dh298, d)
		r := Row{T: T, F: f}
		r.Sigma = Functions{
			Q: sys.sigma(d.Q), Cp: sys.sigma(d.Cp), S: sys.sigma(d.S),
			HmH0: sys.sigma(d.HmH0), HmH298: sys.sigma(d.HmH298), Gef: sys.sigma(d.Gef),
		}
		r.QClosed = sys.ClosedForm(T)
		r.QClosedError = r.QClosed/f.Q - 1
		r.ExtrapolatedShare = acc.ext / acc.a0
		if sh, ok := sys.missingShare(beta, f.Q); ok {
			r.MissingShare = &sh
		}
		rows[i] = r
	})
	return rows
}

// nominal returns the functions (no σ) at the temperatures.
func (sys *System) nominal(temps []float64, workers int) []Functions {
	acc := newMoments(0)
	sys.accumulate(units.SecondRadiation/ReferenceTemperature, acc, false)
	h298 := hmh0(ReferenceTemperature, acc.a1/acc.a0)
	out := make([]Functions, len(temps))
	parallel.ForScratch(len(temps), workers, func() *moments { return newMoments(0) }, func(acc *moments, i int) {
		sys.accumulate(units.SecondRadiation/temps[i], acc, false)
		out[i] = sys.functions(temps[i], acc, h298)
	})
	return out
}

// sigma returns √(dᵀ C d) over the combined covariance.
func (sys *System) sigma(d []float64) float64 {
	if sys.p == 0 {
		return 0
	}
	return math.Sqrt(math.Max(0, quad(sys.cov, d)))
}

// quad returns xᵀ C x.
func quad(c *mat.SymDense, x []float64) float64 {
	n := len(x)
	if n == 0 {
		return 0
	}
	s := 0.0
	for i := 0; i < n; i++ {
		if x[i] == 0 {
			continue
		}
		r := 0.0
		for j := 0; j < n; j++ {
			r += c.At(i, j) * x[j]
		}
		s += x[i] * r
	}
	return s
}
