package thermo

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distmv"

	"bandwright/internal/parallel"
	"bandwright/units"
)

// evalBuf holds the scratch space of one evaluation at drawn parameters.
type evalBuf struct {
	vals [][]float64 // full parameter vector of each block
	man  [][]float64 // model energy of each manifold level
}

func (sys *System) newEvalBuf() *evalBuf {
	b := &evalBuf{}
	for _, bl := range sys.blocks {
		b.vals = append(b.vals, append([]float64(nil), bl.c.Values...))
	}
	for _, m := range sys.manifolds {
		b.man = append(b.man, make([]float64, len(m.e)))
	}
	return b
}

// energiesAt returns the energies of the sorted levels (cm⁻¹ above the zero
// level, which keeps its identity) for the fitted parameters x, evaluating every
// model afresh. buf and dst may be nil.
func (sys *System) energiesAt(x []float64, buf *evalBuf, dst []float64) []float64 {
	if buf == nil {
		buf = sys.newEvalBuf()
	}
	if len(dst) != len(sys.e) {
		dst = make([]float64, len(sys.e))
	}
	for b, bl := range sys.blocks {
		for k, j := range bl.c.Free {
			buf.vals[b][j] = x[bl.offset+k]
		}
	}
	for mi, m := range sys.manifolds {
		m.energiesAt(buf.vals[m.block], buf.man[mi])
	}
	zs := sys.zero.state
	e0 := sys.stateTerm[zs] + buf.man[sys.stateMan[zs]][sys.zero.idx]
	for i := range dst {
		st := sys.st[i]
		dst[i] = sys.stateTerm[st] + buf.man[sys.stateMan[st]][sys.lv[i]] - e0
	}
	return dst
}

// MCStats is the Monte Carlo spread of the functions at one temperature: the
// mean and the sample standard deviation (n−1) over the draws.
type MCStats struct {
	Mean  Functions
	Sigma Functions
}

// welford accumulates mean and sum of squared deviations of the six functions.
type welford struct {
	n    float64
	mean [6]float64
	m2   [6]float64
}

func (w *welford) add(f Functions) {
	x := [6]float64{f.Q, f.Cp, f.S, f.HmH0, f.HmH298, f.Gef}
	w.n++
	for i, v := range x {
		d := v - w.mean[i]
		w.mean[i] += d / w.n
		w.m2[i] += d * (v - w.mean[i])
	}
}

func (w *welford) stats() MCStats {
	var s MCStats
	sd := func(i int) float64 { return math.Sqrt(math.Max(0, w.m2[i]/(w.n-1))) }
	s.Mean = Functions{w.mean[0], w.mean[1], w.mean[2], w.mean[3], w.mean[4], w.mean[5]}
	s.Sigma = Functions{sd(0), sd(1), sd(2), sd(3), sd(4), sd(5)}
	return s
}

// splitmix64 is the SplitMix64 finaliser (Steele, Lea & Flood 2014), used to
// derive the seed of each draw from (seed, draw index).
func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// drawSource returns the random source of draw d: a PCG generator seeded from
// (seed, d), so every draw is the same whatever goroutine computes it.
func drawSource(seed uint64, d int) rand.Source {
	a := splitmix64(seed ^ splitmix64(uint64(d)))
	return rand.NewPCG(a, splitmix64(a^0x6a09e667f3bcc909))
}

// sampler draws fitted-parameter vectors from the multivariate normal N(x̂, C):
// x = x̂ + D·w, D = diag(σ), w ~ N(0, ρ) with ρ the correlation matrix. With
// the pivoted Cholesky factorization Pᵀρ P = UᵀU (which also serves a singular
// ρ), w = P·Uᵀ·z for z of independent standard normal deviates, so
// Cov(w) = P UᵀU Pᵀ = ρ; the draw itself is gonum's stat/distmv.NormalRandCov
// on that factorization.
type sampler struct {
	x0, sd []float64
	chol   *mat.PivotedCholesky
	zero   []float64
	rank   int
}

func (sys *System) newSampler() *sampler {
	p := sys.p
	s := &sampler{x0: sys.x0, sd: make([]float64, p)}
	rho := mat.NewSymDense(p, nil)
	for i := 0; i < p; i++ {
		s.sd[i] = math.Sqrt(math.Max(0, sys.cov.At(i, i)))
	}
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			switch {
			case i == j:
				rho.SetSym(i, j, 1)
			case s.sd[i] > 0 && s.sd[j] > 0:
				r := sys.cov.At(i, j) / (s.sd[i] * s.sd[j])
				rho.SetSym(i, j, math.Max(-1, math.Min(1, r)))
			}
		}
	}
	s.chol = &mat.PivotedCholesky{}
	s.chol.Factorize(rho, -1)
	s.rank = s.chol.Rank()
	s.zero = make([]float64, p)
	return s
}

// draw stores a draw in dst, using z (len p) as scratch and src for the
// standard normal deviates.
func (s *sampler) draw(dst, z []float64, src rand.Source) {
	// w ~ N(0, ρ) by distmv on the pivoted Cholesky factor (z is unused
	// scratch kept for the callers' buffers).
	_ = z
	distmv.NormalRandCov(dst, s.zero, s.chol, src)
	for i := range dst {
		dst[i] = s.x0[i] + s.sd[i]*dst[i]
	}
}

// MonteCarlo draws n parameter sets from the multivariate normal of the fit,
// recomputes the functions at each temperature for each draw and returns their
// mean and spread (sample standard deviation).
//
// Every draw x re-evaluates the energy of every level of the nominal sum,
// E_i(x) = E_i(x̂) + ∇E_i·(x − x̂), which is exact for the models of
// fit/model (linear in their parameters; checked on the first draw against a
// fresh evaluation of the models, and the models are evaluated afresh for every
// draw if the check fails). The Boltzmann factor is formed as
// w_i e^(−βE_i(x̂)) · e^(−βδ_i), δ_i = E_i(x) − E_i(x̂): the nominal factors are
// computed once per temperature, and e^(−y), y = βδ_i, by its Taylor
// polynomial to y⁷ when |y| ≤ 0.03 (truncation below 2·10⁻¹⁷), by the
// exponential otherwise.
//
// Draw d uses a source seeded from (seed, d); draws are processed in chunks
// of fixed size and the statistics are formed in draw order, so the result is
// the same for any number of workers (0: GOMAXPROCS).
//
// The draws are checked (see mcdraws.go): a draw whose rotational or
// vibrational structure turns over within the nominal level set has its sum
// enumerated again without the levels from its turnover on (reenumerated
// counts those draws); a draw with a level below the zero level or a
// non-finite energy is dropped, and one with non-finite functions is left out
// of the statistics of those temperatures (dropped counts both). Fewer than 2
// usable draws at a temperature is an error: the covariance reaches nowhere
// the model holds.
func (sys *System) MonteCarlo(temps []float64, n int, seed uint64, workers int) (stats []MCStats, dropped, reenumerated int, err error) {
	if n < 2 {
		return nil, 0, 0, fmt.Errorf("thermo: Monte Carlo needs at least 2 draws (%d given)", n)
	}
	if sys.p == 0 {
		out := make([]MCStats, len(temps))
		for i, T := range temps {
			out[i] = MCStats{Mean: sys.Evaluate(nil, T)}
		}
		return out, 0, 0, nil
	}
	smp := sys.newSampler()
	p := sys.p
	xs := make([]float64, n*p) // the draws, x − x̂
	{
		z := make([]float64, p)
		x := make([]float64, p)
		for d := 0; d < n; d++ {
			smp.draw(x, z, drawSource(seed, d))
			for k := range x {
				xs[d*p+k] = x[k] - sys.x0[k]
			}
		}
	}
	linear := sys.linearCheck(xs[:p])
	lc := sys.levelChains()
	valid, masked := sys.checkDraws(xs, n, linear, workers, lc)

	// H°(298.15 K) − H°(0) of every draw, then the temperatures in groups
	// whose nominal factors and per-draw values fit the memory budget.
	h298 := make([]float64, n)
	sys.mcGroup([]float64{ReferenceTemperature}, xs, n, linear, workers, lc, func(d, _ int, m *moments) {
		h298[d] = hmh0(ReferenceTemperature, m.a1/m.a0)
	})
	out := make([]MCStats, len(temps))
	bad := make([]bool, n) // invalid, or non-finite at some temperature
	for d := range bad {
		bad[d] = !valid[d]
	}
	const budget = 1 << 22 // float64s of nominal factors, and of per-draw values, per group
	for start := 0; start < len(temps); {
		end, size := start, 0
		for end < len(temps) {
			ni := sys.cut(units.SecondRadiation / temps[end])
			if end > start && (size+ni > budget || (end-start+1)*n*6 > budget) {
				break
			}
			size += ni
			end++
		}
		group := temps[start:end]
		vals := make([]Functions, n*len(group))
		sys.mcGroup(group, xs, n, linear, workers, lc, func(d, k int, m *moments) {
			vals[d*len(group)+k] = sys.functions(group[k], m, h298[d])
		})
		for k := range group {
			var w welford
			for d := 0; d < n; d++ {
				f := vals[d*len(group)+k]
				switch {
				case !valid[d]:
				case !finiteFunctions(f):
					bad[d] = true // left out here; counted once
				default:
					w.add(f)
				}
			}
			if w.n < 2 {
				return nil, n, 0, cannot("Monte Carlo: fewer than 2 of %d draws give a valid level structure at %g K (levels below the zero level, J or v order reversed, or non-finite functions): the covariance of the fit reaches where the model breaks down; use the linear σ, or fit more lines", n, group[k])
			}
			out[start+k] = w.stats()
		}
		start = end
	}
	for d, b := range bad {
		switch {
		case b:
			dropped++
		case masked[d]:
			reenumerated++
		}
	}
	return out, dropped, reenumerated, nil
}

// mcChunk is the number of draws a worker processes together (fixed, so that
// the work split never changes a result).
const mcChunk = 8

// mcGroup computes the moments of every draw at the temperatures of one group
// and hands them to emit(draw, temperature index, moments); emit is called
// concurrently for different draws.
func (sys *System) mcGroup(temps []float64, xs []float64, n int, linear bool, workers int, lc levelChains, emit func(d, k int, m *moments)) {
	N := len(sys.e)
	p := sys.p
	// Nominal factors w e^(−βE) of each temperature, up to its cut.
	bs := make([][]float64, len(temps))
	parallel.For(len(temps), workers, func(k int) {
		beta := units.SecondRadiation / temps[k]
		nk := sys.cut(beta)
		b := make([]float64, nk)
		for i, e := range sys.e[:nk] {
			b[i] = sys.w[i] * boltzmann(-beta*e)
		}
		bs[k] = b
	})
	nChunks := (n + mcChunk - 1) / mcChunk
	newScratch := func() *mcScratch {
		return &mcScratch{delta: make([]float64, mcChunk*N), x: make([]float64, p), acc: newMoments(0)}
	}
	parallel.ForScratch(nChunks, workers, newScratch, func(s *mcScratch, c int) {
		d0, d1 := c*mcChunk, min(n, (c+1)*mcChunk)
		for d := d0; d < d1; d++ {
			dl := s.delta[(d-d0)*N : (d-d0+1)*N]
			sys.drawShifts(s, xs[d*p:(d+1)*p], dl, linear)
			sys.maskTurnovers(dl, lc)
		}
		for k, T := range temps {
			beta := units.SecondRadiation / T
			b := bs[k]
			for d := d0; d < d1; d++ {
				sys.accumulateShifted(b, s.delta[(d-d0)*N:(d-d0)*N+len(b)], beta, s.acc)
				emit(d, k, s.acc)
			}
		}
	})
}

// mcScratch is the scratch space of one Monte Carlo worker: the energy
// shifts of a chunk of draws, and what a fresh evaluation of the models needs.
type mcScratch struct {
	delta []float64 // δ_i of the draws of a chunk, mcChunk·len(sys.e)
	x     []float64 // drawn parameters
	buf   *evalBuf  // made on first use (nonlinear models only)
	eDraw []float64
	acc   *moments
}

// drawShifts writes into dl the shifts δ_i = E_i(x̂ + dx) − E_i(x̂) of the
// levels of the sum: from the gradients when the models are linear in their
// parameters, else from a fresh evaluation of the models.
func (sys *System) drawShifts(s *mcScratch, dx, dl []float64, linear bool) {
	N := len(sys.e)
	if linear {
		clear(dl)
		for k, v := range dx {
			floats.AddScaled(dl, v, sys.g[k*N:(k+1)*N])
		}
		return
	}
	if s.buf == nil {
		s.buf = sys.newEvalBuf()
	}
	for k := range s.x {
		s.x[k] = sys.x0[k] + dx[k]
	}
	s.eDraw = sys.energiesAt(s.x, s.buf, s.eDraw)
	for i := range dl {
		dl[i] = s.eDraw[i] - sys.e[i]
	}
}

// accumulateShifted forms a0, a1, a2 for the energies E_i + δ_i from the
// nominal factors b_i = w_i e^(−βE_i): the factor of level i is
// b_i e^(−βδ_i), with e^(−y) from its Taylor polynomial to y⁷ when
// |y| ≤ 0.03 (truncation error below 2·10⁻¹⁷), from the exponential otherwise.
func (sys *System) accumulateShifted(b, delta []float64, beta float64, acc *moments) {
	es := sys.e[:len(b)]
	delta = delta[:len(b)]
	var a0, a1, a2 float64
	for i, bi := range b {
		di := delta[i]
		if math.IsInf(di, 1) {
			continue // beyond a turnover of this draw (maskTurnovers)
		}
		y := beta * di
		var f float64
		if y <= 0.03 && y >= -0.03 {
			f = 1 - y*(1-y*(1.0/2-y*(1.0/6-y*(1.0/24-y*(1.0/120-y*(1.0/720-y*(1.0/5040)))))))
		} else {
			f = boltzmann(-y)
		}
		t := bi * f
		e := es[i] + di
		te := t * e
		a0 += t
		a1 += te
		a2 += te * e
	}
	acc.a0, acc.a1, acc.a2, acc.ext = a0, a1, a2, 0
}

// linearCheck compares, for the draw dx, the energies from the gradients with
// a fresh evaluation of the models; it reports whether they agree to rounding.
func (sys *System) linearCheck(dx []float64) bool {
	N := len(sys.e)
	x := make([]float64, sys.p)
	for k := range x {
		x[k] = sys.x0[k] + dx[k]
	}
	e := sys.energiesAt(x, nil, nil)
	for i := 0; i < N; i++ {
		lin := sys.e[i]
		for k, v := range dx {
			lin += sys.g[k*N+i] * v
		}
		if math.Abs(lin-e[i]) > 1e-9*(1+math.Abs(e[i])) {
			return false
		}
	}
	return true
}
