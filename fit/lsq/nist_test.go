package lsq

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// Checks against the NIST Statistical Reference Datasets (StRD), linear
// regression section. Accuracy is measured as the log relative error
// LRE = −log10(|estimate − certified| / |certified|), the measure NIST uses
// for these data sets.

// lre returns the log relative error of est against the certified value
// cert, capped at 16 (an exact match).
func lre(est, cert float64) float64 {
	d := math.Abs(est - cert)
	if d == 0 {
		return 16
	}
	return math.Min(16, -math.Log10(d/math.Abs(cert)))
}

// blockSettings are the two paths every data set is run through: three rows
// per TSQR block (so even 16 rows take several folds) and the default.
var blockSettings = []Settings{{BlockRows: 3}, {}}

// polyProblem is the degree-5 polynomial model y = Σ_{k=0..5} b_k x^k on the
// points x = 0, 1, …, 20 used by the Wampler data sets, with unit weights.
func polyProblem(y []float64) Problem {
	return Problem{
		Rows:  len(y),
		Cols:  6,
		Names: []string{"B0", "B1", "B2", "B3", "B4", "B5"},
		Row: func(i int, dst []float64) (float64, float64) {
			x := float64(i)
			p := 1.0
			for k := range dst {
				dst[k] = p
				p *= x
			}
			return y[i], 1
		},
	}
}

func TestWampler1(t *testing.T) {
	// NIST StRD Wampler1 (from memory, restated in docs/references.md):
	// x = 0..20, y = 1 + x + x² + x³ + x⁴ + x⁵ (integers, exact in float64);
	// certified coefficients all 1, their standard deviations 0, residual
	// standard deviation 0.
	y := make([]float64, 21)
	for i := range y {
		x := float64(i)
		y[i] = 1 + x + x*x + x*x*x + x*x*x*x + x*x*x*x*x
	}
	// Certified residual SD and coefficient SDs are exactly 0, so no
	// relative measure exists: compare absolutely. y reaches 3.4e6, so
	// rounding alone leaves residuals of order 1e-9; 1e-6 is three orders
	// above that and far below any real misfit.
	checkExactPolynomial(t, y, []float64{1, 1, 1, 1, 1, 1}, 1e-6)
}

// checkExactPolynomial fits y at x = 0..20 with every block size and requires
// an LRE ≥ 9 on each certified coefficient and, the certified residual and
// coefficient SDs being 0, absolute SDs below sdTol.
func checkExactPolynomial(t *testing.T, y, cert []float64, sdTol float64) {
	t.Helper()
	for _, s := range blockSettings {
		res, err := Solve(polyProblem(y), s)
		if err != nil {
			t.Fatalf("BlockRows %d: %v", s.BlockRows, err)
		}
		for j, c := range cert {
			if got := lre(res.X[j], c); got < 9 {
				t.Errorf("BlockRows %d: B%d = %.17g, LRE %.1f < 9", s.BlockRows, j, res.X[j], got)
			}
		}
		t.Logf("BlockRows %d: min coefficient LRE %.1f, residual SD %.3g, condition %.3g",
			s.BlockRows, minLRE(res.X, cert), math.Sqrt(res.Chi2/float64(res.DOF)), res.Condition)
		if sd := math.Sqrt(res.Chi2 / float64(res.DOF)); sd > sdTol {
			t.Errorf("BlockRows %d: residual SD %g, certified 0", s.BlockRows, sd)
		}
		for j, sd := range res.SigmaScaled() {
			if sd > sdTol {
				t.Errorf("BlockRows %d: SD(B%d) = %g, certified 0", s.BlockRows, j, sd)
			}
		}
	}
}

func TestWampler2(t *testing.T) {
	// NIST StRD Wampler2 (from memory, restated in docs/references.md):
	// x = 0..20, y = 1 + 0.1x + 0.01x² + 0.001x³ + 1e-4x⁴ + 1e-5x⁵;
	// certified coefficients 1, 0.1, 0.01, 0.001, 1e-4, 1e-5, their
	// standard deviations 0, residual standard deviation 0.
	// NIST lists y as exact decimals with five places; the integer numerator
	// below is exact, so one division gives the correctly rounded double of
	// that decimal, as parsing the NIST file would.
	y := make([]float64, 21)
	for i := range y {
		x := float64(i)
		num := 100000 + 10000*x + 1000*x*x + 100*x*x*x + 10*x*x*x*x + x*x*x*x*x
		y[i] = num / 100000
	}
	// Certified SDs are 0: absolute check. y reaches 63, rounding leaves
	// residuals of order 1e-14.
	checkExactPolynomial(t, y, []float64{1, 0.1, 0.01, 0.001, 1e-4, 1e-5}, 1e-10)
}

// readLongley reads testdata/longley.csv (see testdata/README.md) and
// returns the design matrix [1, GNPDEFL, GNP, UNEMP, ARMED, POP, YEAR] and
// TOTEMP. Columns are found by name, so a leading index column ("Obs") or a
// different column order does not matter.
func readLongley(t *testing.T) (*mat.Dense, []float64, []string) {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", "longley.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 17 {
		t.Fatalf("longley.csv: %d records, want header + 16 rows", len(recs))
	}
	col := map[string]int{}
	for k, h := range recs[0] {
		col[strings.ToUpper(strings.TrimSpace(h))] = k
	}
	regressors := []string{"GNPDEFL", "GNP", "UNEMP", "ARMED", "POP", "YEAR"}
	names := append([]string{"intercept"}, regressors...)
	A := mat.NewDense(16, 7, nil)
	y := make([]float64, 16)
	get := func(r int, name string) float64 {
		k, ok := col[name]
		if !ok {
			t.Fatalf("longley.csv: no column %s", name)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(recs[r][k]), 64)
		if err != nil {
			t.Fatalf("longley.csv: row %d, column %s: %v", r, name, err)
		}
		return v
	}
	for i := 0; i < 16; i++ {
		A.Set(i, 0, 1)
		for j, name := range regressors {
			A.Set(i, j+1, get(i+1, name))
		}
		y[i] = get(i+1, "TOTEMP")
	}
	return A, y, names
}

func TestLongley(t *testing.T) {
	A, y, names := readLongley(t)
	// NIST StRD Longley certified values, from memory (docs/references.md).
	certX := []float64{
		-3482258.63459582,   // intercept
		15.0618722713733,    // GNPDEFL
		-0.0358191792925910, // GNP
		-2.02022980381683,   // UNEMP
		-1.03322686717359,   // ARMED
		-0.0511041056535807, // POP
		1829.15146461355,    // YEAR
	}
	// NIST StRD Longley certified standard deviations of the
	// coefficients, from memory.
	certSD := []float64{
		890420.383607373,
		84.9149257747669,
		0.0334910077722432,
		0.488399681651699,
		0.214274163161675,
		0.226073200069370,
		455.478499142212,
	}
	// NIST StRD Longley residual standard deviation and R², from memory.
	const certResSD = 304.854073561965
	const certR2 = 0.995479004577296

	var ybar float64
	for _, v := range y {
		ybar += v / float64(len(y))
	}
	var tss float64
	for _, v := range y {
		tss += (v - ybar) * (v - ybar)
	}

	for _, s := range blockSettings {
		res, err := Solve(DenseProblem(A, y, nil, names), s)
		if err != nil {
			t.Fatalf("BlockRows %d: %v", s.BlockRows, err)
		}
		if res.DOF != 9 {
			t.Errorf("DOF = %d, want 9 (16 rows, 7 parameters)", res.DOF)
		}
		for j, c := range certX {
			if got := lre(res.X[j], c); got < 9 {
				t.Errorf("BlockRows %d: %s = %.15g, certified %.15g, LRE %.1f < 9", s.BlockRows, names[j], res.X[j], c, got)
			}
		}
		sd := res.SigmaScaled()
		for j, c := range certSD {
			if got := lre(sd[j], c); got < 6 {
				t.Errorf("BlockRows %d: SD(%s) = %.15g, certified %.15g, LRE %.1f < 6", s.BlockRows, names[j], sd[j], c, got)
			}
		}
		resSD := math.Sqrt(res.Chi2 / float64(res.DOF))
		if got := lre(resSD, certResSD); got < 6 {
			t.Errorf("BlockRows %d: residual SD = %.15g, certified %.15g, LRE %.1f < 6", s.BlockRows, resSD, certResSD, got)
		}
		if got := lre(1-res.Chi2/tss, certR2); got < 6 {
			t.Errorf("BlockRows %d: R² = %.15g, certified %.15g, LRE %.1f < 6", s.BlockRows, 1-res.Chi2/tss, certR2, got)
		}
		t.Logf("BlockRows %d: min coefficient LRE %.1f, condition %.3g", s.BlockRows, minLRE(res.X, certX), res.Condition)
	}
}

func minLRE(est, cert []float64) float64 {
	m := math.Inf(1)
	for j := range est {
		m = math.Min(m, lre(est[j], cert[j]))
	}
	return m
}
