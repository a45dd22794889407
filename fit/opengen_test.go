package fit

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// An independent generator of the levels of open-shell states for the tests:
// it shares no code with package model. It builds the effective Hamiltonian
// of a state in the signed Hund's case (a) basis |Λ, Σ, Ω = Λ + Σ; J⟩ (Λ = ±|Λ|,
// Σ = −S … S) from the matrix elements of the angular-momentum operators
// (molecule-fixed J± with the anomalous sign, J+ lowering Ω; common
// practice), projects it onto the parity eigenfunctions of E*,
// E*|Λ, Σ, Ω⟩ = (−1)^(J−S+s)|−Λ, −Σ, −Ω⟩ (s = 1 for Σ⁻ states, 0 otherwise),
// and diagonalises each parity block with gonum's mat.EigenSym.
//
//	H = T + B N² − D N⁴ + H N⁶ + A L_zS_z + ½A_D[N², L_zS_z]₊ + ½A_H[N⁴, L_zS_z]₊
//	    + γ N·S + ½γ_D[N², N·S]₊ + ½γ_H[N⁴, N·S]₊
//	    + λ·⅔(3S_z² − S²) + ½λ_D[N², ⅔(3S_z² − S²)]₊ + ½λ_H[N⁴, ⅔(3S_z² − S²)]₊
//	    + p O_p + q O_q + ½p_D[N², O_p]₊ + ½q_D[N², O_q]₊ + ½p_H[N⁴, O_p]₊ + ½q_H[N⁴, O_q]₊,
//	N = J − S,  O_p = −½(J₊S₊e^(−2iφ) + J₋S₋e^(2iφ)),
//	O_q = −(J₊S₊e^(−2iφ) + J₋S₋e^(2iφ)) + ½(J₊²e^(−2iφ) + J₋²e^(2iφ)),
//
// with ⟨Λ∓2|e^(∓2iφ)|Λ⟩ = 1. Levels of each parity are numbered from the
// lowest as the spin components: ²Π F1, F2; ³Σ F1, F3 in the block of two, F2
// alone (F3 alone at J = 0); ²Σ by parity.
type genState struct {
	S2, Lambda      int  // 2S, |Λ|
	Minus           bool // Σ⁻
	T, B, D, H      float64
	A, AD, AH       float64
	Gamma, GD, GH   float64
	Lam, LamD, LamH float64
	P, Q            float64
	PD, QD          float64
	PH, QH          float64
}

// genLevel is one level of the generator: F (0 for the single J = ½ level of
// a ²Π state and for singlets), parity (+1 e, −1 f) and energy.
type genLevel struct {
	F, Par int
	E      float64
}

type genBasis struct{ lam2, sig2, om2 int } // 2Λ, 2Σ, 2Ω

// levels returns the levels at J = J2/2.
func (g genState) levels(J2 int) []genLevel {
	var basis []genBasis
	lams := []int{2 * g.Lambda}
	if g.Lambda > 0 {
		lams = []int{2 * g.Lambda, -2 * g.Lambda}
	}
	for _, l2 := range lams {
		for s2 := -g.S2; s2 <= g.S2; s2 += 2 {
			if om := l2 + s2; om <= J2 && om >= -J2 {
				basis = append(basis, genBasis{l2, s2, om})
			}
		}
	}
	n := len(basis)
	if n == 0 {
		return nil
	}
	h := g.hamiltonian(basis, J2)
	var out []genLevel
	for _, eta := range []int{1, -1} {
		u := g.parityBasis(basis, J2, eta)
		if u == nil {
			continue
		}
		_, k := u.Dims()
		var t, hb mat.Dense
		t.Mul(h, u)
		hb.Mul(u.T(), &t)
		sym := mat.NewSymDense(k, nil)
		for i := 0; i < k; i++ {
			for j := i; j < k; j++ {
				sym.SetSym(i, j, 0.5*(hb.At(i, j)+hb.At(j, i)))
			}
		}
		var es mat.EigenSym
		if !es.Factorize(sym, false) {
			panic("eigensym failed")
		}
		vals := es.Values(nil)
		sort.Float64s(vals)
		par := g.efLabel(J2, eta)
		for i, e := range vals {
			out = append(out, genLevel{F: g.label(J2, len(vals), i, par), Par: par, E: e})
		}
	}
	return out
}

// efLabel returns +1 (e) or −1 (f) for the parity block η: the parity of
// (|a⟩ + η|b⟩) is η(−1)^(J−S+s); e is parity (−1)^⌊J⌋.
func (g genState) efLabel(J2, eta int) int {
	ph := (J2-g.S2)/2 + g.s()
	parity := eta
	if ph%2 != 0 {
		parity = -eta
	}
	ref := 1
	if (J2/2)%2 != 0 {
		ref = -1
	}
	if parity == ref {
		return 1
	}
	return -1
}

func (g genState) s() int {
	if g.Lambda == 0 && g.Minus {
		return 1
	}
	return 0
}

// label numbers the i-th lowest of k levels of one parity block.
func (g genState) label(J2, k, i, par int) int {
	switch {
	case g.S2 == 0:
		return 0
	case g.Lambda == 1 && g.S2 == 1:
		if k == 1 {
			return 0
		}
		return i + 1
	case g.S2 == 1: // ²Σ: F1 is e in Σ⁺, f in Σ⁻
		if (par == 1) != g.Minus {
			return 1
		}
		return 2
	default: // ³Σ
		switch {
		case k == 2:
			return 1 + 2*i
		case J2 == 0:
			return 3
		}
		return 2
	}
}

// parityBasis returns the columns (|a⟩ + η|b⟩)/√2 (|a⟩ alone when a is its
// own image) that span parity block η, or nil.
func (g genState) parityBasis(basis []genBasis, J2, eta int) *mat.Dense {
	var cols [][]float64
	for i, a := range basis {
		j := indexOfBasis(basis, genBasis{-a.lam2, -a.sig2, -a.om2})
		col := make([]float64, len(basis))
		switch {
		case j == i:
			if eta != 1 {
				continue // its parity is that of η = +1
			}
			col[i] = 1
		case j > i:
			col[i], col[j] = math.Sqrt2/2, float64(eta)*math.Sqrt2/2
		default:
			continue
		}
		cols = append(cols, col)
	}
	if len(cols) == 0 {
		return nil
	}
	u := mat.NewDense(len(basis), len(cols), nil)
	for c, col := range cols {
		u.SetCol(c, col)
	}
	return u
}

func indexOfBasis(bs []genBasis, b genBasis) int {
	for i, x := range bs {
		if x == b {
			return i
		}
	}
	return -1
}

// hamiltonian builds H in the signed basis.
func (g genState) hamiltonian(basis []genBasis, J2 int) *mat.Dense {
	n := len(basis)
	J := float64(J2) / 2
	S := float64(g.S2) / 2
	jj, ss := J*(J+1), S*(S+1)
	jp := func(om float64) float64 { return math.Sqrt(math.Max(jj-om*(om-1), 0)) } // Ω → Ω−1
	jm := func(om float64) float64 { return math.Sqrt(math.Max(jj-om*(om+1), 0)) } // Ω → Ω+1
	sp := func(sg float64) float64 { return math.Sqrt(math.Max(ss-sg*(sg+1), 0)) } // Σ → Σ+1
	sm := func(sg float64) float64 { return math.Sqrt(math.Max(ss-sg*(sg-1), 0)) } // Σ → Σ−1
	// op builds the matrix of an operator from the element of ket → bra.
	op := func(el func(bra, ket genBasis) float64) *mat.Dense {
		m := mat.NewDense(n, n, nil)
		for i, b := range basis {
			for j, k := range basis {
				m.Set(i, j, el(b, k))
			}
		}
		return m
	}
	JS := op(func(b, k genBasis) float64 {
		om, sg := float64(k.om2)/2, float64(k.sig2)/2
		switch {
		case b == k:
			return om * sg
		case b.lam2 == k.lam2 && b.om2 == k.om2-2 && b.sig2 == k.sig2-2:
			return 0.5 * jp(om) * sm(sg)
		case b.lam2 == k.lam2 && b.om2 == k.om2+2 && b.sig2 == k.sig2+2:
			return 0.5 * jm(om) * sp(sg)
		}
		return 0
	})
	diag := func(f func(k genBasis) float64) *mat.Dense {
		return op(func(b, k genBasis) float64 {
			if b == k {
				return f(k)
			}
			return 0
		})
	}
	N2 := diag(func(genBasis) float64 { return jj + ss })
	N2.Add(N2, scaled(-2, JS))
	NS := diag(func(genBasis) float64 { return -ss })
	NS.Add(NS, JS)
	LS := diag(func(k genBasis) float64 { return float64(k.lam2) * float64(k.sig2) / 4 })
	SS := diag(func(k genBasis) float64 { sg := float64(k.sig2) / 2; return 2.0 / 3 * (3*sg*sg - ss) })
	// J₊S₊e^(−2iφ) + h.c. and J₊²e^(−2iφ) + h.c.
	JSflip := op(func(b, k genBasis) float64 {
		om, sg := float64(k.om2)/2, float64(k.sig2)/2
		switch {
		case b.lam2 == k.lam2-4 && b.om2 == k.om2-2 && b.sig2 == k.sig2+2:
			return jp(om) * sp(sg)
		case b.lam2 == k.lam2+4 && b.om2 == k.om2+2 && b.sig2 == k.sig2-2:
			return jm(om) * sm(sg)
		}
		return 0
	})
	JJflip := op(func(b, k genBasis) float64 {
		om := float64(k.om2) / 2
		switch {
		case b.lam2 == k.lam2-4 && b.om2 == k.om2-4 && b.sig2 == k.sig2:
			return jp(om) * jp(om-1)
		case b.lam2 == k.lam2+4 && b.om2 == k.om2+4 && b.sig2 == k.sig2:
			return jm(om) * jm(om+1)
		}
		return 0
	})
	Op := scaled(-0.5, JSflip)
	Oq := scaled(-1, JSflip)
	Oq.Add(Oq, scaled(0.5, JJflip))

	var N4, N6 mat.Dense
	N4.Mul(N2, N2)
	N6.Mul(&N4, N2)
	h := diag(func(genBasis) float64 { return g.T })
	add := func(c float64, m mat.Matrix) {
		if c != 0 {
			var t mat.Dense
			t.Scale(c, m)
			h.Add(h, &t)
		}
	}
	// ½[n, m]₊ with n = N² (anticomm) or N⁴ (anticomm4).
	anti := func(n, m mat.Matrix) *mat.Dense {
		var a, b mat.Dense
		a.Mul(n, m)
		b.Mul(m, n)
		a.Add(&a, &b)
		a.Scale(0.5, &a)
		return &a
	}
	anticomm := func(m *mat.Dense) *mat.Dense { return anti(N2, m) }
	anticomm4 := func(m *mat.Dense) *mat.Dense { return anti(&N4, m) }
	add(g.B, N2)
	add(-g.D, &N4)
	add(g.H, &N6)
	add(g.A, LS)
	add(g.AD, anticomm(LS))
	add(g.Gamma, NS)
	add(g.GD, anticomm(NS))
	add(g.Lam, SS)
	add(g.LamD, anticomm(SS))
	add(g.P, Op)
	add(g.Q, Oq)
	add(g.PD, anticomm(Op))
	add(g.QD, anticomm(Oq))
	add(g.AH, anticomm4(LS))
	add(g.GH, anticomm4(NS))
	add(g.LamH, anticomm4(SS))
	add(g.PH, anticomm4(Op))
	add(g.QH, anticomm4(Oq))
	return h
}

func scaled(c float64, m *mat.Dense) *mat.Dense {
	var t mat.Dense
	t.Scale(c, m)
	return &t
}
