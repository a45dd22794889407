package thermo

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// checkPSD refuses a covariance that no multivariate normal has: a negative or
// non-finite variance, or a correlation matrix with an eigenvalue below −1e-8
// (rounding aside, a combination of the parameters with negative variance).
// Linear propagation would take the square root of a negative number and the
// Monte Carlo draws would quietly use another covariance.
func checkPSD(cov *mat.SymDense, names []string) error {
	n := len(names)
	sd := make([]float64, n)
	var idx []int
	for i := 0; i < n; i++ {
		v := cov.At(i, i)
		if !(v >= 0) || math.IsInf(v, 0) {
			return fmt.Errorf("thermo: the variance of %s is %v: a covariance needs finite variances ≥ 0", names[i], v)
		}
		sd[i] = math.Sqrt(v)
		if v > 0 {
			idx = append(idx, i)
			continue
		}
		for j := 0; j < n; j++ {
			if cov.At(i, j) != 0 {
				return fmt.Errorf("thermo: %s has zero variance but covariance %g with %s: the covariance is not positive semi-definite", names[i], cov.At(i, j), names[j])
			}
		}
	}
	if len(idx) == 0 {
		return nil
	}
	rho := mat.NewSymDense(len(idx), nil)
	for a, i := range idx {
		for b := a; b < len(idx); b++ {
			j := idx[b]
			r := cov.At(i, j) / (sd[i] * sd[j])
			if math.IsNaN(r) || math.IsInf(r, 0) {
				return fmt.Errorf("thermo: the covariance of %s and %s is not finite", names[i], names[j])
			}
			rho.SetSym(a, b, r)
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(rho, false) {
		return errors.New("thermo: the eigenvalues of the covariance cannot be computed")
	}
	lmin := math.Inf(1)
	for _, l := range eig.Values(nil) {
		lmin = math.Min(lmin, l)
	}
	if !(lmin >= -1e-8) {
		return fmt.Errorf("thermo: the covariance of the constants is not positive semi-definite (its correlation matrix has the eigenvalue %.3g): some combination of the parameters would have a negative variance", lmin)
	}
	return nil
}
