package assign

import (
	"math"
	"sort"
)

// gapRun is the number of consecutive predicted lines without a peak after
// which a branch is taken to have ended: matches beyond are not kept.
const gapRun = 5

// maxIntensityDev is the largest |ln(I_obs/I_pred) − scale|/σ_I of a
// candidate: a peak that much stronger or weaker than the line predicted
// there is not taken for it.
const maxIntensityDev = 5

// extendLimit: a line is predicted for matching only while k·σ of its
// prediction is below this share of the line spacing 2B; farther lines wait
// until the fit has improved.
const extendLimit = 0.1

type pred struct {
	t      Transition
	b      *band
	br     *branch
	nu     float64 // cm⁻¹
	sig    float64 // cm⁻¹
	lnP    float64
	gate   []int // sorted indices of peaks within the positional tolerance
	unCost float64
}

type edge struct {
	p, k int
	r    float64 // observed − predicted, cm⁻¹
	cost float64
}

// matching is the outcome of one prediction–matching pass.
type matching struct {
	preds    []pred
	edges    []edge
	edgesOf  [][]int // per prediction, indices into edges
	assigned map[Transition]int
	predOf   map[int]int // sorted peak index → prediction
	// blendOf lists, per assigned peak, the unmatched predictions whose
	// positional tolerance contains it.
	blendOf map[int][]int
}

// tolerance returns the positional gate (cm⁻¹) of prediction p for peak k and
// the σ that normalises the residual.
func (r *run) tolerance(sig float64, k int) (gate, scale float64) {
	u := r.unc[k] * r.sFit
	scale = math.Sqrt(u*u + sig*sig)
	if r.s.Tolerance > 0 {
		return r.s.Tolerance, scale
	}
	return r.s.sigmas() * scale, scale
}

// predictAll predicts the lines of every locked band from the current fit,
// each branch up to its extension limit.
func (r *run) predictAll() []pred {
	var ps []pred
	uMax := 0.0
	for _, u := range r.unc {
		uMax = math.Max(uMax, u*r.sFit)
	}
	K := r.s.sigmas()
	for _, b := range r.bands {
		if !b.locked || !r.fp.has(b.sp.sp.Label, b.vu, b.vl) {
			continue
		}
		for _, br := range b.branches {
			jhi := max(br.jhi, b.jcore)
			limit := min(br.jmax, jhi+2+jhi/4)
			for j := br.jmin; j <= limit; j++ {
				nu, sig := r.fp.line(b.sp.sp.Label, b.vu, j+br.dJ, b.vl, j)
				if K*sig > extendLimit*2*b.bbar {
					if j > b.jcore {
						break // too uncertain to extend further this round
					}
					continue
				}
				reach := K * math.Sqrt(uMax*uMax+sig*sig)
				if r.s.Tolerance > 0 {
					reach = r.s.Tolerance
				}
				if nu < r.lo-reach || nu > r.hi+reach {
					continue
				}
				lnP := math.Inf(-1)
				if br.inten[j] > 0 {
					lnP = math.Log(br.inten[j])
				}
				ps = append(ps, pred{t: Transition{Species: b.sp.sp.Label, VUp: b.vu, JUp: j + br.dJ, VLo: b.vl, JLo: j}, b: b, br: br, nu: nu, sig: sig, lnP: lnP})
			}
		}
	}
	return ps
}

// intensityDev returns the deviation of peak k's intensity from prediction p
// in units of σ_I, NaN when either is unknown.
func (r *run) intensityDev(p *pred, k int) float64 {
	g := p.br.group
	if math.IsNaN(r.lnI[k]) || !p.b.hasG[g] || math.IsInf(p.lnP, -1) {
		return math.NaN()
	}
	return (r.lnI[k] - p.lnP - p.b.g[g] - p.b.h[g]*p.br.elo[p.t.JLo]) / r.sigI
}

// matchAll predicts, finds the candidates of every prediction and solves the
// one-to-one assignment.
func (r *run) matchAll() *matching {
	mt := &matching{preds: r.predictAll(), assigned: map[Transition]int{}, predOf: map[int]int{}, blendOf: map[int][]int{}}
	uMax := 0.0
	for _, u := range r.unc {
		uMax = math.Max(uMax, u*r.sFit)
	}
	K := r.s.sigmas()
	mt.edgesOf = make([][]int, len(mt.preds))
	for i := range mt.preds {
		p := &mt.preds[i]
		reach := K * math.Sqrt(uMax*uMax+p.sig*p.sig)
		if r.s.Tolerance > 0 {
			reach = r.s.Tolerance
		}
		p.unCost = K*K + 4
		lo := sort.SearchFloat64s(r.pos, p.nu-reach)
		for k := lo; k < len(r.pos) && r.pos[k] <= p.nu+reach; k++ {
			res := r.pos[k] - p.nu
			gate, scale := r.tolerance(p.sig, k)
			if math.Abs(res) > gate {
				continue
			}
			p.gate = append(p.gate, k)
			if _, banned := r.bans[banKey{p.t, k}]; banned {
				continue
			}
			z := res / scale
			cost := z * z
			if r.s.Tolerance > 0 {
				// A user tolerance may exceed k·σ: keep every gated peak
				// preferable to no peak.
				cost = math.Min(cost, K*K)
			}
			if d := r.intensityDev(p, k); !math.IsNaN(d) {
				if math.Abs(d) > maxIntensityDev {
					continue
				}
				cost += d * d
			}
			mt.edgesOf[i] = append(mt.edgesOf[i], len(mt.edges))
			mt.edges = append(mt.edges, edge{p: i, k: k, r: res, cost: cost})
		}
	}
	match := solveSparse(len(mt.preds), mt.edges, mt.edgesOf, func(i int) float64 { return mt.preds[i].unCost })
	for i, e := range match {
		if e >= 0 {
			mt.predOf[mt.edges[e].k] = i
		}
	}
	r.gapRule(mt, match)
	for i, e := range match {
		if e >= 0 {
			mt.assigned[mt.preds[i].t] = mt.edges[e].k
		}
	}
	// Blends: an assigned peak inside the tolerance of a prediction left
	// without a peak.
	for i := range mt.preds {
		if match[i] >= 0 {
			continue
		}
		for _, k := range mt.preds[i].gate {
			if _, ok := mt.predOf[k]; ok {
				mt.blendOf[k] = append(mt.blendOf[k], i)
			}
		}
	}
	// Highest assigned J per branch, for the next extension.
	for _, b := range r.bands {
		for _, br := range b.branches {
			br.jhi = -1
		}
	}
	for i, e := range match {
		if e >= 0 {
			p := &mt.preds[i]
			p.br.jhi = max(p.br.jhi, p.t.JLo)
		}
	}
	return mt
}

// gapRule ends each branch, above the band's lock range, at the first run of
// gapRun predicted lines that found no peak (a line blended into an assigned
// peak counts as found); matches beyond are undone.
func (r *run) gapRule(mt *matching, match []int) {
	type key struct {
		b  *band
		br *branch
	}
	byBranch := map[key][]int{}
	for i := range mt.preds {
		p := &mt.preds[i]
		byBranch[key{p.b, p.br}] = append(byBranch[key{p.b, p.br}], i)
	}
	for k, is := range byBranch {
		sort.Slice(is, func(a, b int) bool { return mt.preds[is[a]].t.JLo < mt.preds[is[b]].t.JLo })
		miss := 0
		cut := false
		for _, i := range is {
			p := &mt.preds[i]
			if cut {
				if e := match[i]; e >= 0 {
					delete(mt.predOf, mt.edges[e].k)
					match[i] = -1
				}
				continue
			}
			if p.t.JLo <= k.b.jcore {
				continue
			}
			hit := match[i] >= 0
			if !hit {
				for _, kk := range p.gate {
					if _, ok := mt.predOf[kk]; ok {
						hit = true
						break
					}
				}
			}
			if hit {
				miss = 0
			} else if miss++; miss >= gapRun {
				cut = true
			}
		}
	}
}

// solveSparse solves the one-to-one assignment of n predictions to peaks on
// the sparse candidate graph, minimising Σ cost over matched pairs plus
// unmatched(i) for every prediction left without a peak. The graph is split
// into connected components, each solved exactly by the Hungarian algorithm
// (shortest augmenting paths with potentials). It returns, per prediction,
// the index of its edge or −1.
func solveSparse(n int, edges []edge, edgesOf [][]int, unmatched func(int) float64) []int {
	match := make([]int, n)
	for i := range match {
		match[i] = -1
	}
	// Union–find over predictions (0…n−1) and peaks (n + local index).
	peakID := map[int]int{}
	for _, e := range edges {
		if _, ok := peakID[e.k]; !ok {
			peakID[e.k] = len(peakID)
		}
	}
	parent := make([]int, n+len(peakID))
	for i := range parent {
		parent[i] = i
	}
	find := func(x int) int {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	for _, e := range edges {
		a, b := find(e.p), find(n+peakID[e.k])
		if a != b {
			parent[a] = b
		}
	}
	comps := map[int][]int{}
	for i := 0; i < n; i++ {
		if len(edgesOf[i]) > 0 {
			c := find(i)
			comps[c] = append(comps[c], i)
		}
	}
	roots := make([]int, 0, len(comps))
	for c := range comps {
		roots = append(roots, c)
	}
	sort.Ints(roots)
	for _, c := range roots {
		rows := comps[c]
		if len(rows) == 1 && len(edgesOf[rows[0]]) == 1 {
			i, e := rows[0], edgesOf[rows[0]][0]
			if edges[e].cost < unmatched(i) {
				match[i] = e
			}
			continue
		}
		// Columns: the component's peaks, then one "no peak" column per row.
		colOf := map[int]int{}
		var cols []int
		for _, i := range rows {
			for _, e := range edgesOf[i] {
				if _, ok := colOf[edges[e].k]; !ok {
					colOf[edges[e].k] = len(cols)
					cols = append(cols, edges[e].k)
				}
			}
		}
		nr, nc := len(rows), len(cols)+len(rows)
		cost := make([]float64, nr*nc)
		for a := range cost {
			cost[a] = math.Inf(1)
		}
		edgeAt := make([]int, nr*nc)
		for a, i := range rows {
			for _, e := range edgesOf[i] {
				c := colOf[edges[e].k]
				if edges[e].cost < cost[a*nc+c] {
					cost[a*nc+c] = edges[e].cost
					edgeAt[a*nc+c] = e
				}
			}
			cost[a*nc+len(cols)+a] = unmatched(i)
		}
		asg := hungarian(nr, nc, cost)
		for a, c := range asg {
			if c < len(cols) {
				match[rows[a]] = edgeAt[a*nc+c]
			}
		}
	}
	return match
}

// hungarian solves the rectangular assignment problem of nr rows and nc ≥ nr
// columns with row-major costs (+Inf: forbidden), minimising the total cost of
// assigning every row to a distinct column. Every row must have at least one
// finite cost. It returns the column of each row. O(nr²·nc).
func hungarian(nr, nc int, cost []float64) []int {
	const big = 1e300
	at := func(i, j int) float64 {
		c := cost[(i-1)*nc+(j-1)]
		if math.IsInf(c, 1) {
			return big
		}
		return c
	}
	u := make([]float64, nr+1)
	v := make([]float64, nc+1)
	p := make([]int, nc+1) // p[j]: row assigned to column j (1-based), 0 none
	way := make([]int, nc+1)
	minv := make([]float64, nc+1)
	used := make([]bool, nc+1)
	for i := 1; i <= nr; i++ {
		p[0] = i
		j0 := 0
		for j := range minv {
			minv[j] = math.Inf(1)
			used[j] = false
		}
		for {
			used[j0] = true
			i0 := p[j0]
			delta := math.Inf(1)
			j1 := -1
			for j := 1; j <= nc; j++ {
				if used[j] {
					continue
				}
				cur := at(i0, j) - u[i0] - v[j]
				if cur < minv[j] {
					minv[j] = cur
					way[j] = j0
				}
				if minv[j] < delta {
					delta = minv[j]
					j1 = j
				}
			}
			for j := 0; j <= nc; j++ {
				if used[j] {
					u[p[j]] += delta
					v[j] -= delta
				} else {
					minv[j] -= delta
				}
			}
			j0 = j1
			if p[j0] == 0 {
				break
			}
		}
		for {
			j1 := way[j0]
			p[j0] = p[j1]
			j0 = j1
			if j0 == 0 {
				break
			}
		}
	}
	out := make([]int, nr)
	for j := 1; j <= nc; j++ {
		if p[j] > 0 {
			out[p[j]-1] = j - 1
		}
	}
	return out
}
