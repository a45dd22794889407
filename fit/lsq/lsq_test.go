package lsq

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// randomProblem returns a well-conditioned dense problem: rows×cols design
// with entries uniform in [−1, 1), y from known parameters plus noise, and
// σ_i spread over two decades.
func randomProblem(seed uint64, rows, cols int) (*mat.Dense, []float64, []float64) {
	rnd := rand.New(rand.NewPCG(seed, 0))
	A := mat.NewDense(rows, cols, nil)
	y := make([]float64, rows)
	sigma := make([]float64, rows)
	for i := 0; i < rows; i++ {
		sigma[i] = math.Pow(10, 2*rnd.Float64()-1)
		for j := 0; j < cols; j++ {
			a := 2*rnd.Float64() - 1
			A.Set(i, j, a)
			y[i] += a * float64(j+1)
		}
		y[i] += sigma[i] * rnd.NormFloat64()
	}
	return A, y, sigma
}

// weightedDense returns A_w = diag(1/σ) A and y_w = y/σ.
func weightedDense(A *mat.Dense, y, sigma []float64) (*mat.Dense, *mat.VecDense) {
	r, c := A.Dims()
	Aw := mat.NewDense(r, c, nil)
	yw := mat.NewVecDense(r, nil)
	for i := 0; i < r; i++ {
		s := 1.0
		if sigma != nil {
			s = sigma[i]
		}
		for j := 0; j < c; j++ {
			Aw.Set(i, j, A.At(i, j)/s)
		}
		yw.SetVec(i, y[i]/s)
	}
	return Aw, yw
}

func eqRel(a, b, tol float64) bool { return scalar.EqualWithinAbsOrRel(a, b, 0, tol) }

// sameResult reports the first difference between two results beyond a
// relative tolerance (covariance entries relative to the diagonal scale).
func sameResult(t *testing.T, what string, got, want *Result, tol float64) {
	t.Helper()
	for j := range want.X {
		if !eqRel(got.X[j], want.X[j], tol) {
			t.Errorf("%s: X[%d] = %.17g, want %.17g", what, j, got.X[j], want.X[j])
		}
	}
	if !eqRel(got.Chi2, want.Chi2, tol) {
		t.Errorf("%s: Chi2 = %.17g, want %.17g", what, got.Chi2, want.Chi2)
	}
	n := len(want.X)
	for j := 0; j < n; j++ {
		for k := 0; k < n; k++ {
			s := math.Sqrt(want.Cov.At(j, j) * want.Cov.At(k, k))
			if math.Abs(got.Cov.At(j, k)-want.Cov.At(j, k)) > tol*s {
				t.Errorf("%s: Cov[%d,%d] = %.17g, want %.17g", what, j, k, got.Cov.At(j, k), want.Cov.At(j, k))
			}
		}
	}
}

func TestWeightsAgainstSVD(t *testing.T) {
	// Independent method: the minimum-norm least-squares solution of the
	// weighted system by gonum's SVD (mat.SVD.SolveVecTo), and the
	// covariance V Σ⁻² Vᵀ from the same SVD. The usual definition of the
	// weighted least-squares covariance (AᵀWA)⁻¹ (common practice).
	A, y, sigma := randomProblem(1, 300, 6)
	res, err := Solve(DenseProblem(A, y, sigma, nil), Settings{BlockRows: 17})
	if err != nil {
		t.Fatal(err)
	}
	Aw, yw := weightedDense(A, y, sigma)
	var svd mat.SVD
	if !svd.Factorize(Aw, mat.SVDThin) {
		t.Fatal("SVD failed")
	}
	var x mat.VecDense
	svd.SolveVecTo(&x, yw, 6)
	var V mat.Dense
	svd.VTo(&V)
	sv := svd.Values(nil)
	for j := 0; j < 6; j++ {
		if !eqRel(res.X[j], x.AtVec(j), 1e-11) {
			t.Errorf("X[%d] = %.17g, SVD gives %.17g", j, res.X[j], x.AtVec(j))
		}
		for k := 0; k < 6; k++ {
			var c float64
			for m := 0; m < 6; m++ {
				c += V.At(j, m) * V.At(k, m) / (sv[m] * sv[m])
			}
			if !eqRel(res.Cov.At(j, k), c, 1e-10) {
				t.Errorf("Cov[%d,%d] = %.17g, SVD gives %.17g", j, k, res.Cov.At(j, k), c)
			}
		}
	}
	var r mat.VecDense
	r.MulVec(Aw, &x)
	r.SubVec(yw, &r)
	if chi2 := mat.Dot(&r, &r); !eqRel(res.Chi2, chi2, 1e-10) {
		t.Errorf("Chi2 = %.17g, SVD residual gives %.17g", res.Chi2, chi2)
	}
	// The 2-norm condition number of the column-scaled A_w, from the SVD
	// of the explicitly scaled dense matrix.
	c := 6
	As := mat.DenseCopyOf(Aw)
	for j := 0; j < c; j++ {
		col := mat.Col(nil, j, As)
		nrm := math.Sqrt(mat.Dot(mat.NewVecDense(len(col), col), mat.NewVecDense(len(col), col)))
		for i := range col {
			As.Set(i, j, col[i]/nrm)
		}
	}
	var svs mat.SVD
	svs.Factorize(As, mat.SVDNone)
	if !eqRel(res.Condition, svs.Cond(), 1e-10) {
		t.Errorf("Condition = %.17g, SVD of scaled design gives %.17g", res.Condition, svs.Cond())
	}

	// The weights must matter: the unweighted solution differs by far
	// more than the tolerance above.
	unw, err := Solve(DenseProblem(A, y, nil, nil), Settings{})
	if err != nil {
		t.Fatal(err)
	}
	differs := false
	for j := range unw.X {
		if !eqRel(unw.X[j], res.X[j], 1e-6) {
			differs = true
		}
	}
	if !differs {
		t.Error("weighted and unweighted solutions agree: sigma ignored")
	}
}

func TestRowPermutation(t *testing.T) {
	// A least-squares solution does not depend on the order of the rows
	// (common practice). Compare with BlockRows 7 so that rows land in
	// different blocks, and against the default block size.
	A, y, sigma := randomProblem(2, 250, 5)
	ref, err := Solve(DenseProblem(A, y, sigma, nil), Settings{BlockRows: 7})
	if err != nil {
		t.Fatal(err)
	}
	perm := rand.New(rand.NewPCG(3, 0)).Perm(250)
	Ap := mat.NewDense(250, 5, nil)
	yp := make([]float64, 250)
	sp := make([]float64, 250)
	for i, k := range perm {
		Ap.SetRow(i, A.RawRowView(k))
		yp[i], sp[i] = y[k], sigma[k]
	}
	for _, s := range []Settings{{BlockRows: 7}, {BlockRows: 1}, {}} {
		got, err := Solve(DenseProblem(Ap, yp, sp, nil), s)
		if err != nil {
			t.Fatal(err)
		}
		sameResult(t, "permuted rows", got, ref, 1e-12)
		if !eqRel(got.Condition, ref.Condition, 1e-12) {
			t.Errorf("Condition = %g, want %g", got.Condition, ref.Condition)
		}
	}
}

func TestSigmaScaling(t *testing.T) {
	// Multiplying every σ_i by c leaves x unchanged, multiplies
	// (AᵀWA)⁻¹ by c² and divides χ² by c² (W = diag(1/σ²); common
	// practice).
	const c = 3.7
	A, y, sigma := randomProblem(4, 120, 4)
	ref, err := Solve(DenseProblem(A, y, sigma, nil), Settings{BlockRows: 5})
	if err != nil {
		t.Fatal(err)
	}
	sc := make([]float64, len(sigma))
	for i := range sigma {
		sc[i] = c * sigma[i]
	}
	got, err := Solve(DenseProblem(A, y, sc, nil), Settings{BlockRows: 5})
	if err != nil {
		t.Fatal(err)
	}
	for j := range ref.X {
		if !eqRel(got.X[j], ref.X[j], 1e-12) {
			t.Errorf("X[%d] = %.17g, want %.17g", j, got.X[j], ref.X[j])
		}
		for k := range ref.X {
			if !eqRel(got.Cov.At(j, k), c*c*ref.Cov.At(j, k), 1e-12) {
				t.Errorf("Cov[%d,%d] = %g, want c²·%g", j, k, got.Cov.At(j, k), ref.Cov.At(j, k))
			}
		}
	}
	if !eqRel(got.Chi2, ref.Chi2/(c*c), 1e-12) {
		t.Errorf("Chi2 = %g, want %g/c²", got.Chi2, ref.Chi2)
	}
	// The reduced-χ² scaled uncertainties do not depend on c at all.
	s1, s2 := ref.SigmaScaled(), got.SigmaScaled()
	for j := range s1 {
		if !eqRel(s1[j], s2[j], 1e-12) {
			t.Errorf("SigmaScaled[%d] = %g, want %g", j, s2[j], s1[j])
		}
	}
}

func TestSparseRowFill(t *testing.T) {
	// Row gets a zeroed dst: a Row that sets only non-zero entries must
	// give the same answer as a dense one, whatever the block size.
	A, y, sigma := randomProblem(5, 60, 4)
	for i := 0; i < 60; i++ {
		A.Set(i, i%4, 0)
	}
	dense := DenseProblem(A, y, sigma, nil)
	sparse := Problem{Rows: 60, Cols: 4, Row: func(i int, dst []float64) (float64, float64) {
		for j := 0; j < 4; j++ {
			if j != i%4 {
				dst[j] = A.At(i, j)
			}
		}
		return y[i], sigma[i]
	}}
	ref, err := Solve(dense, Settings{BlockRows: 3})
	if err != nil {
		t.Fatal(err)
	}
	got, err := Solve(sparse, Settings{BlockRows: 3})
	if err != nil {
		t.Fatal(err)
	}
	sameResult(t, "sparse fill", got, ref, 1e-14)
}

func TestRankIdenticalColumns(t *testing.T) {
	// Two identical columns: only their sum is determined.
	A := mat.NewDense(10, 3, nil)
	y := make([]float64, 10)
	for i := 0; i < 10; i++ {
		x := float64(i)
		A.SetRow(i, []float64{1, x, x})
		y[i] = 2 + 3*x
	}
	_, err := Solve(DenseProblem(A, y, nil, []string{"a", "b", "c"}), Settings{})
	var re *RankError
	if !errors.As(err, &re) {
		t.Fatalf("error = %v, want *RankError", err)
	}
	if len(re.Names) != 1 {
		t.Fatalf("%d null directions, want 1: %v", len(re.Names), re.Names)
	}
	names := slices.Clone(re.Names[0])
	slices.Sort(names)
	if !slices.Equal(names, []string{"b", "c"}) {
		t.Errorf("named %v, want b and c", re.Names[0])
	}
	// Null direction (0, 1, −1)/√2 up to sign; largest component positive.
	v := re.Vectors[0]
	if math.Abs(v[0]) > 1e-12 || !eqRel(math.Abs(v[1]), math.Sqrt(0.5), 1e-12) || !eqRel(v[1], -v[2], 1e-12) {
		t.Errorf("null vector %v, want ±(0, 1, −1)/√2", v)
	}
	if !(re.Ratio < 1e-12) {
		t.Errorf("Ratio = %g, want < 1e-12", re.Ratio)
	}
	msg := err.Error()
	if !strings.HasPrefix(msg, "lsq: ") || !(strings.Contains(msg, "{b, c}") || strings.Contains(msg, "{c, b}")) {
		t.Errorf("message %q does not name {b, c}", msg)
	}
}

func TestRankScaledDuplicate(t *testing.T) {
	// Column c is 1e6 × column b: the dependence is as complete as for
	// identical columns, so both must be named although the unscaled null
	// direction (0, 1e6, −1)/‖·‖ is almost entirely b.
	A := mat.NewDense(10, 3, nil)
	y := make([]float64, 10)
	for i := 0; i < 10; i++ {
		x := float64(i)
		A.SetRow(i, []float64{1, x, 1e6 * x})
		y[i] = 2 + 3*x
	}
	_, err := Solve(DenseProblem(A, y, nil, []string{"a", "b", "c"}), Settings{})
	var re *RankError
	if !errors.As(err, &re) {
		t.Fatalf("error = %v, want *RankError", err)
	}
	names := slices.Clone(re.Names[0])
	slices.Sort(names)
	if !slices.Equal(names, []string{"b", "c"}) {
		t.Errorf("named %v, want b and c", re.Names[0])
	}
	want := []float64{0, 1e6 / math.Hypot(1e6, 1), -1 / math.Hypot(1e6, 1)}
	for j := range want {
		if !scalar.EqualWithinAbsOrRel(re.Vectors[0][j], want[j], 1e-12, 1e-9) {
			t.Errorf("null vector %v, want %v", re.Vectors[0], want)
			break
		}
	}
}

func TestRankZeroColumn(t *testing.T) {
	A := mat.NewDense(8, 3, nil)
	y := make([]float64, 8)
	for i := 0; i < 8; i++ {
		x := float64(i)
		A.SetRow(i, []float64{1, 0, x})
		y[i] = 1 + x
	}
	for _, s := range []Settings{{}, {BlockRows: 3}} {
		_, err := Solve(DenseProblem(A, y, nil, []string{"a", "b", "c"}), s)
		var re *RankError
		if !errors.As(err, &re) {
			t.Fatalf("error = %v, want *RankError", err)
		}
		if len(re.Names) != 1 || !slices.Equal(re.Names[0], []string{"b"}) {
			t.Errorf("named %v, want [[b]]", re.Names)
		}
		if v := re.Vectors[0]; !eqRel(v[1], 1, 1e-15) || v[0] != 0 || v[2] != 0 {
			t.Errorf("null vector %v, want (0, 1, 0)", v)
		}
		if re.Ratio != 0 {
			t.Errorf("Ratio = %g, want 0 for an all-zero column", re.Ratio)
		}
		if !strings.Contains(err.Error(), "{b}") {
			t.Errorf("message %q does not name {b}", err)
		}
	}
}

func TestRankAllZero(t *testing.T) {
	A := mat.NewDense(4, 2, nil)
	_, err := Solve(DenseProblem(A, []float64{1, 2, 3, 4}, nil, []string{"p", "q"}), Settings{})
	var re *RankError
	if !errors.As(err, &re) {
		t.Fatalf("error = %v, want *RankError", err)
	}
	var all []string
	for _, n := range re.Names {
		all = append(all, n...)
	}
	slices.Sort(all)
	if !slices.Equal(all, []string{"p", "q"}) {
		t.Errorf("named %v, want p and q", re.Names)
	}
}

func TestRankTolerance(t *testing.T) {
	// Column c = column b + 1e-7·noise: nearly dependent. The default
	// tolerance (1e-12) lets it through; RankTolerance 1e-5 does not,
	// and the reported ratio matches the singular values of the
	// explicitly column-scaled dense matrix (gonum SVD, independent).
	rnd := rand.New(rand.NewPCG(6, 0))
	A := mat.NewDense(50, 3, nil)
	y := make([]float64, 50)
	for i := 0; i < 50; i++ {
		x := rnd.Float64()
		A.SetRow(i, []float64{1, x, x + 1e-7*rnd.NormFloat64()})
		y[i] = 1 + x + 0.01*rnd.NormFloat64()
	}
	p := DenseProblem(A, y, nil, []string{"a", "b", "c"})
	res, err := Solve(p, Settings{})
	if err != nil {
		t.Fatalf("default tolerance: %v", err)
	}
	_, err = Solve(p, Settings{RankTolerance: 1e-5})
	var re *RankError
	if !errors.As(err, &re) {
		t.Fatalf("tolerance 1e-5: error = %v, want *RankError", err)
	}
	if !eqRel(re.Ratio, 1/res.Condition, 1e-12) {
		t.Errorf("Ratio %g != 1/Condition %g", re.Ratio, 1/res.Condition)
	}
	As := mat.DenseCopyOf(A)
	for j := 0; j < 3; j++ {
		col := mat.Col(nil, j, As)
		var ss float64
		for _, v := range col {
			ss += v * v
		}
		for i := range col {
			As.Set(i, j, col[i]/math.Sqrt(ss))
		}
	}
	var svd mat.SVD
	svd.Factorize(As, mat.SVDNone)
	sv := svd.Values(nil)
	// Agreement is limited by rounding relative to σ_max (≈1e-16), i.e.
	// about 1e-8 relative on a ratio near 1e-8.
	if want := sv[2] / sv[0]; !eqRel(re.Ratio, want, 1e-6) {
		t.Errorf("Ratio = %g, SVD of the scaled design gives %g", re.Ratio, want)
	}
	if re.Tolerance != 1e-5 {
		t.Errorf("Tolerance = %g, want 1e-5", re.Tolerance)
	}
}

func TestInputErrors(t *testing.T) {
	names := []string{"a", "b", "c"}
	good := func(i int, dst []float64) (float64, float64) {
		dst[0], dst[1], dst[2] = 1, float64(i), float64(i*i)
		return float64(i), 1
	}
	// bad returns a Problem whose row 5 is spoilt by f.
	bad := func(f func(dst []float64, y, s *float64)) Problem {
		return Problem{Rows: 10, Cols: 3, Names: names, Row: func(i int, dst []float64) (float64, float64) {
			y, s := good(i, dst)
			if i == 5 {
				f(dst, &y, &s)
			}
			return y, s
		}}
	}
	rowCases := []struct {
		name     string
		p        Problem
		field    string
		sentinel error
	}{
		{"sigma zero", bad(func(_ []float64, _, s *float64) { *s = 0 }), "sigma", ErrBadSigma},
		{"sigma negative", bad(func(_ []float64, _, s *float64) { *s = -1 }), "sigma", ErrBadSigma},
		{"sigma NaN", bad(func(_ []float64, _, s *float64) { *s = math.NaN() }), "sigma", ErrBadSigma},
		{"sigma Inf", bad(func(_ []float64, _, s *float64) { *s = math.Inf(1) }), "sigma", ErrBadSigma},
		{"sigma underflows weight", bad(func(_ []float64, _, s *float64) { *s = 1e-320 }), "sigma", ErrBadSigma},
		{"y NaN", bad(func(_ []float64, y, _ *float64) { *y = math.NaN() }), "y", ErrNonFinite},
		{"A Inf", bad(func(dst []float64, _, _ *float64) { dst[1] = math.Inf(-1) }), "b", ErrNonFinite},
		{"A NaN", bad(func(dst []float64, _, _ *float64) { dst[2] = math.NaN() }), "c", ErrNonFinite},
	}
	for _, c := range rowCases {
		for _, s := range []Settings{{}, {BlockRows: 2}} {
			_, err := Solve(c.p, s)
			var re *RowError
			if !errors.As(err, &re) {
				t.Errorf("%s: error = %v, want *RowError", c.name, err)
				continue
			}
			if re.Row != 5 || re.Field != c.field || !errors.Is(err, c.sentinel) {
				t.Errorf("%s: got row %d field %q (%v), want row 5 field %q", c.name, re.Row, re.Field, err, c.field)
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, "lsq: row 5") || !strings.Contains(msg, c.field) {
				t.Errorf("%s: message %q should start with \"lsq: row 5\" and name %q", c.name, msg, c.field)
			}
		}
	}

	shapeCases := []struct {
		name string
		p    Problem
		s    Settings
		want []string // substrings of the message
	}{
		{"too few rows", Problem{Rows: 2, Cols: 3, Row: good, Names: names}, Settings{}, []string{"2 rows", "3 parameters"}},
		{"no columns", Problem{Rows: 2, Cols: 0, Row: good}, Settings{}, []string{"parameters"}},
		{"no Row", Problem{Rows: 5, Cols: 3}, Settings{}, []string{"Row"}},
		{"names", Problem{Rows: 5, Cols: 3, Row: good, Names: names[:2]}, Settings{}, []string{"2 parameter names", "3 parameters"}},
		{"block rows", Problem{Rows: 5, Cols: 3, Row: good}, Settings{BlockRows: -1}, []string{"block rows"}},
		{"rank tolerance", Problem{Rows: 5, Cols: 3, Row: good}, Settings{RankTolerance: 2}, []string{"rank tolerance"}},
		{"rank tolerance NaN", Problem{Rows: 5, Cols: 3, Row: good}, Settings{RankTolerance: math.NaN()}, []string{"rank tolerance"}},
	}
	for _, c := range shapeCases {
		_, err := Solve(c.p, c.s)
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		if !strings.HasPrefix(err.Error(), "lsq: ") {
			t.Errorf("%s: message %q lacks the package prefix", c.name, err)
		}
		for _, w := range c.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: message %q does not contain %q", c.name, err, w)
			}
		}
	}
	// The good problem itself solves (so the cases above fail for the
	// stated reason only).
	if _, err := Solve(Problem{Rows: 10, Cols: 3, Row: good, Names: names}, Settings{}); err != nil {
		t.Errorf("good problem: %v", err)
	}
}

func TestResiduals(t *testing.T) {
	A, y, sigma := randomProblem(7, 40, 3)
	p := DenseProblem(A, y, sigma, nil)
	res, err := Solve(p, Settings{BlockRows: 4})
	if err != nil {
		t.Fatal(err)
	}
	buf := make([]float64, 0, 64)
	r := Residuals(p, res.X, buf)
	if len(r) != 40 || &r[0] != &buf[:1][0] {
		t.Fatalf("Residuals did not reuse dst (len %d)", len(r))
	}
	var want mat.VecDense
	want.MulVec(A, mat.NewVecDense(3, res.X))
	var chi2 float64
	for i := range r {
		w := y[i] - want.AtVec(i)
		if !scalar.EqualWithinAbsOrRel(r[i], w, 1e-13, 1e-13) {
			t.Errorf("r[%d] = %g, want %g", i, r[i], w)
		}
		chi2 += (r[i] / sigma[i]) * (r[i] / sigma[i])
	}
	// χ² from the factor equals Σ(r_i/σ_i)² of the explicit residuals.
	if !eqRel(res.Chi2, chi2, 1e-10) {
		t.Errorf("Chi2 = %.17g, Σ(r/σ)² = %.17g", res.Chi2, chi2)
	}
	if got := Residuals(p, res.X, nil); len(got) != 40 {
		t.Errorf("Residuals(nil dst) has len %d", len(got))
	}
}

func TestExactlyDetermined(t *testing.T) {
	// Rows == Cols: the fit goes through every point, χ² ≈ 0, DOF = 0,
	// and the reduced-χ² scaled uncertainties are undefined (NaN).
	A := mat.NewDense(3, 3, []float64{1, 0, 0, 1, 1, 1, 1, 2, 4})
	res, err := Solve(DenseProblem(A, []float64{1, 3, 7}, []float64{1, 1, 1}, nil), Settings{})
	if err != nil {
		t.Fatal(err)
	}
	// y = 1 + x + x² through x = 0, 1, 2.
	for j, w := range []float64{1, 1, 1} {
		if !scalar.EqualWithinAbsOrRel(res.X[j], w, 1e-14, 1e-14) {
			t.Errorf("X[%d] = %g, want %g", j, res.X[j], w)
		}
	}
	if res.DOF != 0 || res.Chi2 > 1e-28 {
		t.Errorf("DOF %d, Chi2 %g; want 0, 0", res.DOF, res.Chi2)
	}
	for j, s := range res.SigmaScaled() {
		if !math.IsNaN(s) {
			t.Errorf("SigmaScaled[%d] = %g, want NaN at DOF 0", j, s)
		}
	}
	for j, s := range res.Sigma() {
		if !(s > 0) {
			t.Errorf("Sigma[%d] = %g, want > 0", j, s)
		}
	}
}

func TestCorrelation(t *testing.T) {
	cov := mat.NewSymDense(3, []float64{
		4, 2, 0,
		2, 9, 0,
		0, 0, 0,
	})
	c := Correlation(cov)
	if !eqRel(c.At(0, 0), 1, 1e-15) || !eqRel(c.At(1, 1), 1, 1e-15) || !eqRel(c.At(0, 1), 2.0/6, 1e-15) {
		t.Errorf("correlation %v", mat.Formatted(c))
	}
	// Zero variance: uncorrelated with the others, unit diagonal.
	if c.At(2, 2) != 1 || c.At(0, 2) != 0 || c.At(1, 2) != 0 {
		t.Errorf("zero variance should give ρ_jj = 1, ρ_jk = 0: %v", mat.Formatted(c))
	}
	// A negative variance is no covariance: NaN in its row and column.
	bad := mat.NewSymDense(2, []float64{4, 0, 0, -1})
	if cb := Correlation(bad); !math.IsNaN(cb.At(1, 1)) || !math.IsNaN(cb.At(0, 1)) || cb.At(0, 0) != 1 {
		t.Errorf("negative variance should give NaN: %v", mat.Formatted(cb))
	}
	// On a real fit: unit diagonal, entries within [−1, 1].
	A, y, sigma := randomProblem(8, 30, 4)
	res, err := Solve(DenseProblem(A, y, sigma, nil), Settings{})
	if err != nil {
		t.Fatal(err)
	}
	c = Correlation(res.Cov)
	for j := 0; j < 4; j++ {
		if !eqRel(c.At(j, j), 1, 1e-14) {
			t.Errorf("rho[%d,%d] = %g", j, j, c.At(j, j))
		}
		for k := 0; k < 4; k++ {
			if math.Abs(c.At(j, k)) > 1+1e-14 {
				t.Errorf("rho[%d,%d] = %g outside [-1, 1]", j, k, c.At(j, k))
			}
		}
	}
}

func TestMemoryIndependentOfRows(t *testing.T) {
	// The number of allocations of Solve must not grow with the number of
	// rows: the rows stream through a fixed TSQR buffer.
	small := chebProblem(5_000, 8)
	large := chebProblem(200_000, 8)
	run := func(p Problem) float64 {
		return testing.AllocsPerRun(2, func() {
			if _, err := Solve(p, Settings{BlockRows: 256}); err != nil {
				t.Fatal(err)
			}
		})
	}
	if a, b := run(small), run(large); a != b {
		t.Errorf("allocations: %v for 5000 rows, %v for 200000 rows", a, b)
	}
}

func TestDenseProblemPanicsOnMismatch(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("no panic for len(y) != rows")
		}
	}()
	DenseProblem(mat.NewDense(3, 2, nil), []float64{1, 2}, nil, nil)
}
