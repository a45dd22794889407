package fit

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
)

// Assembling the Result of a finished solve: parameters with σ, calibration
// factors, per-line residuals, statistics and the significance warnings.

// result assembles the Result of the current solution.
func (w *work) result() *Result {
	r := &Result{Model: w.p.Model, Files: w.files, Status: w.status, Unit: w.s.Unit, Unconnected: w.unconnected}
	chi2, dof := w.chi2()
	s := 1.0
	if dof > 0 {
		s = math.Sqrt(chi2 / float64(dof))
	} else {
		w.warn = append(w.warn, "no degrees of freedom (as many lines as parameters): uncertainties are not scaled by the fit's standard deviation and the residuals cannot test the model")
	}
	nc := w.res.Cov.SymmetricDim()
	r.Cov = mat.NewSymDense(nc, nil)
	r.Cov.ScaleSym(s*s, w.res.Cov)
	r.Params = make([]model.Param, len(w.params))
	copy(r.Params, w.params)
	for j := range r.Params {
		r.Params[j].Value = w.values[j]
		r.Params[j].Sigma = 0
	}
	r.Free = append([]int(nil), w.free...)
	for c, j := range r.Free {
		r.Params[j].Sigma = math.Sqrt(r.Cov.At(c, c))
	}
	kc := len(r.Free)
	for f, file := range w.files {
		c := Calibration{File: file, Kappa: w.kappa[f], Fixed: true}
		if w.s.Calibrate && f > 0 {
			c.Fixed = false
			c.Sigma = math.Sqrt(r.Cov.At(kc, kc))
			kc++
		}
		if w.s.Calibrate {
			r.Calib = append(r.Calib, c)
		}
	}
	r.Lines = make([]LineResult, len(w.p.Lines))
	var sumCm, sumMHz float64
	var nMHz int
	for i, l := range w.p.Lines {
		c := w.calc(i)
		omc := w.obs[i] - c
		lr := LineResult{Used: w.used[i], Reason: w.reason[i]}
		lr.Calc = l.Unit.FromWavenumber(c)
		lr.OmC = l.Position - lr.Calc
		lr.Norm = lr.OmC / l.Unc
		r.Lines[i] = lr
		if w.used[i] {
			sumCm += omc * omc
			if l.Unit.IsFrequency() {
				omcMHz := linelist.MHz.FromWavenumber(omc)
				sumMHz += omcMHz * omcMHz
				nMHz++
			}
		}
	}
	r.Bands, r.Observed = coverage(w.p.Lines, w.used)
	used := w.countUsed()
	r.Stats = constants.Stats{
		Lines: len(w.p.Lines), Used: used, Rejected: len(w.p.Lines) - used,
		Params: nc, DOF: dof, Chi2: chi2, Sigma: s,
		RMSCm:     math.Sqrt(sumCm / float64(max(used, 1))),
		Condition: w.res.Condition, Iter: w.iter,
	}
	if dof <= 0 {
		r.Stats.Sigma = math.NaN()
	}
	if nMHz > 0 {
		r.Stats.RMSMHz = math.Sqrt(sumMHz / float64(nMHz))
		r.Stats.LinesMHz = nMHz
	}
	if w.nonlinear || len(w.kfree) > 0 {
		method := "Gauss–Newton"
		if w.conv.damped {
			method = "Levenberg–Marquardt"
		}
		r.Convergence = &constants.Convergence{Method: method, Iterations: w.iter, Starts: max(w.conv.starts, 1), FinalStep: w.conv.finalStep, Converged: w.conv.converged}
	}
	r.Warnings = append(r.Warnings, w.warn...)
	r.Warnings = append(r.Warnings, significanceWarnings(r)...)
	if w := smallScaleWarning(r.Stats); w != "" {
		r.Warnings = append(r.Warnings, w)
	}
	return r
}

// smallScaleLimit is the dimensionless standard deviation below which a fit
// warns that its σ, scaled by s, fall well below what the stated line
// uncertainties support.
const smallScaleLimit = 0.5

// smallScaleWarning warns when s < smallScaleLimit: the covariance is scaled
// by s² (the project's convention), so the σ then rest on the scatter of the
// lines rather than on their stated uncertainties, and are 1/s times smaller
// than σ from the uncertainties alone. Overstated uncertainties (a
// conservative unc for recalled or rounded positions) are the usual cause;
// with few degrees of freedom s itself is poorly known (its relative spread
// is about 1/√(2·dof)).
func smallScaleWarning(st constants.Stats) string {
	if !(st.Sigma < smallScaleLimit) || st.DOF <= 0 {
		return ""
	}
	return fmt.Sprintf("s = %.3g: the residuals are about %.2g times smaller than the stated uncertainties; the σ of the constants are scaled by s and so rest on the scatter of %d lines (%d degrees of freedom, s known to about ±%.0f %%), %.2g times smaller than σ from the stated uncertainties alone: check that unc states the 1σ of the positions",
		st.Sigma, 1/st.Sigma, st.Used, st.DOF, 100/math.Sqrt(2*float64(st.DOF)), 1/st.Sigma)
}

// significanceWarnings flags parameters with |value|/σ < 3 and pairs with
// |correlation| > 0.999.
func significanceWarnings(r *Result) []string {
	var out []string
	for _, j := range r.Free {
		p := r.Params[j]
		if p.Sigma > 0 && math.Abs(p.Value) < 3*p.Sigma {
			out = append(out, fmt.Sprintf("%s = %s is less than 3σ from zero: the data barely determine it; consider removing it or fixing it at a literature value", p.ID(), constants.FormatParen(p.Value, p.Sigma)))
		}
	}
	names := r.CovNames()
	c := r.Correlation()
	for i := 0; i < len(names); i++ {
		for j := i + 1; j < len(names); j++ {
			if math.Abs(c.At(i, j)) > 0.999 {
				out = append(out, fmt.Sprintf("%s and %s are correlated at %.5f: their individual values are poorly defined", names[i], names[j], c.At(i, j)))
			}
		}
	}
	return out
}
