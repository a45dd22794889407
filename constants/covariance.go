package constants

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// covSigmaTolerance is the relative difference allowed between a fitted
// parameter's σ and √C_ii: NewRecord writes them equal, so more is an edit.
const covSigmaTolerance = 1e-6

// psdTolerance is how far below zero an eigenvalue of the correlation matrix may
// lie from rounding (its eigenvalues sum to the number of parameters).
const psdTolerance = 1e-8

// checkCovariance checks the covariance of a record against its fitted
// parameters (in record order, calibration factors included): σ_i = √C_ii, every
// correlation within −1…1, and the correlation matrix positive semi-definite.
// A parameter with zero variance must have a zero row.
func checkCovariance(ps []Param, cov [][]float64) error {
	var names []string
	var sig []float64
	for _, p := range ps {
		if !p.Fixed {
			names = append(names, p.ID())
			sig = append(sig, p.Sigma)
		}
	}
	n := len(cov)
	if n != len(names) {
		return nil // the caller reports the size
	}
	const advice = "the record was edited or damaged; fit the lines again"
	var idx []int // parameters with positive variance
	for i := 0; i < n; i++ {
		v := cov[i][i]
		switch {
		case v < 0:
			return fmt.Errorf("covariance: the variance of %s is negative (%g); %s", names[i], v, advice)
		case math.Abs(sig[i]-math.Sqrt(v)) > covSigmaTolerance*math.Max(sig[i], math.Sqrt(v)):
			return fmt.Errorf("covariance: %s has sigma %g but the covariance gives %g; %s", names[i], sig[i], math.Sqrt(v), advice)
		case v == 0:
			for j := 0; j < n; j++ {
				if cov[i][j] != 0 {
					return fmt.Errorf("covariance: %s has zero variance but covariance %g with %s; %s", names[i], cov[i][j], names[j], advice)
				}
			}
			continue
		}
		idx = append(idx, i)
	}
	if len(idx) == 0 {
		return nil
	}
	rho := mat.NewSymDense(len(idx), nil)
	for a, i := range idx {
		for b, j := range idx[a:] {
			r := cov[i][j] / (math.Sqrt(cov[i][i]) * math.Sqrt(cov[j][j]))
			if i != j && !(math.Abs(r) <= 1+psdTolerance) {
				return fmt.Errorf("covariance: the correlation of %s and %s is %.6g, outside −1…1; %s", names[i], names[j], r, advice)
			}
			rho.SetSym(a, a+b, r)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(rho, false) {
		return fmt.Errorf("covariance: its eigenvalues cannot be computed; %s", advice)
	}
	if lmin := floatsMin(eig.Values(nil)); !(lmin >= -psdTolerance) {
		return fmt.Errorf("covariance: not positive semi-definite (the correlation matrix has the eigenvalue %.3g): some combination of the parameters would have a negative variance; %s", lmin, advice)
	}
	return nil
}

// floatsMin returns the smallest of xs, NaN if any is NaN.
func floatsMin(xs []float64) float64 {
	m := math.Inf(1)
	for _, x := range xs {
		m = math.Min(m, x)
	}
	return m
}
