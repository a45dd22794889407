package thermo

import (
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/internal/parallel"
	"bandwright/units"
)

// Table computes the rows at the temperatures with linearly propagated σ,
// σ_f = √(∇fᵀ C ∇f), the model part of the budget (each contribution and
// their root-sum-square σ_model) and σ_total = √(σ² + σ_model²), in parallel
// over temperatures on up to workers goroutines (0: GOMAXPROCS; results do
// not depend on the number of workers).
func (sys *System) Table(temps []float64, workers int) []Row {
	q := sys.p + sys.pm
	f298, d298 := sys.reference()
	h298, dh298 := f298.HmH0, d298.HmH0

	rows := make([]Row, len(temps))
	type scratch struct {
		acc *moments
		d   *Gradients
		bs  *budgetScratch
	}
	newScratch := func() scratch { return scratch{newMoments(q), newGradients(q), sys.newBudgetScratch()} }
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
		r.Model = sys.modelRow(T, acc, f, d, s.bs)
		r.SigmaModel = rss(r.Model...)
		r.SigmaTotal = rss(r.Sigma, r.SigmaModel)
		r.QClosed = sys.ClosedForm(T)
		r.QClosedError = r.QClosed/f.Q - 1
		r.ExtrapolatedShare = acc.ext / acc.a0
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

// sigma returns √(dᵀ C d) over the combined covariance (d[:p], the fitted
// parameters; the budget's directions that follow are not part of it).
func (sys *System) sigma(d []float64) float64 {
	if sys.p == 0 {
		return 0
	}
	return math.Sqrt(math.Max(0, quad(sys.cov, d[:sys.p])))
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
