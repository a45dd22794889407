package model

import (
	"math"

	"bandwright/fit/states"
)

// The effective Hamiltonians of the five cases (package doc, "Fine
// structure"): for one vibronic level (isotopologue, electronic state, v) the
// energy of a level is
//
//	E = T + eigenvalue of Σ_q c_q M_q(J, parity)
//
// with the effective constants c_q of the vibronic level (B, D, A, γ, …) and
// the matrices M_q of their operators in the 1×1 or 2×2 block of the level's J
// and parity. The matrices depend on J and parity only, so E is a function of
// the c_q whose gradient is ∂E/∂c_q = ψᵀ M_q ψ (Hellmann–Feynman), ψ the
// level's eigenvector.

// quantity indexes the effective constants of one vibronic level.
type quantity int

// The effective constants. qD enters with its minus sign in its operator,
// −(N²)², so that every constant is written with the sign of the trade.
const (
	qT quantity = iota
	qB
	qD
	qH
	qL
	qA
	qAD
	qGamma
	qGammaD
	qLambda
	qLambdaD
	qP
	qQ
	qPD
	qQD
	nQ
)

// quantityNames are the parameter names of the effective constants, the
// trade's symbols: T, B, D, H, L, A, A_D, gamma, gamma_D, lambda, lambda_D,
// p, q, p_D, q_D.
var quantityNames = [nQ]string{"T", "B", "D", "H", "L", "A", "A_D", "gamma", "gamma_D", "lambda", "lambda_D", "p", "q", "p_D", "q_D"}

// fineStart is the first fine-structure quantity; rotational ones come
// before it.
const fineStart = qA

// caseQuantities lists the fine-structure constants of each case.
var caseQuantities = map[states.Case][]quantity{
	states.Singlet:      nil,
	states.DoubletSigma: {qGamma, qGammaD},
	states.TripletSigma: {qLambda, qLambdaD, qGamma, qGammaD},
	states.SingletPi:    {qQ, qQD},
	states.DoubletPi:    {qA, qAD, qGamma, qGammaD, qP, qQ, qPD, qQD},
}

// hasQuantity reports whether a state of case c has constant q.
func hasQuantity(c states.Case, q quantity) bool {
	if q < fineStart {
		return true
	}
	for _, x := range caseQuantities[c] {
		if x == q {
			return true
		}
	}
	return false
}

// quantityOf returns the quantity named name, or -1.
func quantityOf(name string) quantity {
	for q, n := range quantityNames {
		if n == name {
			return quantity(q)
		}
	}
	return -1
}

// sym2 is a real symmetric 2×2 matrix (m11, m12, m22); a 1×1 block uses m11.
type sym2 [3]float64

// mulSym returns a·b for symmetric a and b that commute (powers of one
// matrix), whose product is symmetric.
func mulSym(a, b sym2) sym2 {
	return sym2{a[0]*b[0] + a[1]*b[1], a[0]*b[1] + a[1]*b[2], a[1]*b[1] + a[2]*b[2]}
}

// anti returns the anticommutator ½(a·b + b·a) of symmetric a and b.
func anti(a, b sym2) sym2 {
	return sym2{a[0]*b[0] + a[1]*b[1], 0.5 * (a[0]*b[1] + a[1]*b[2] + a[1]*b[0] + a[2]*b[1]), a[1]*b[1] + a[2]*b[2]}
}

// block is the (J, parity) block of one level: the matrix of each quantity's
// operator (qT unused: T adds to every level) and which eigenvalue the level
// is.
type block struct {
	dim  int // 1 or 2
	pick int // dim 2: 0 the lower eigenvalue, 1 the upper
	op   [nQ]sym2
}

// setRotation sets the operators of B, D, H, L: N², −(N²)², (N²)³, (N²)⁴.
func (b *block) setRotation(n2 sym2) {
	n4 := mulSym(n2, n2)
	b.op[qB] = n2
	b.op[qD] = sym2{-n4[0], -n4[1], -n4[2]}
	b.op[qH] = mulSym(n4, n2)
	b.op[qL] = mulSym(n4, n4)
}

// setBlock fills b for level lv of state st of case c and returns false when
// the state has no such level.
func (b *block) setBlock(st states.State, c states.Case, lv Level) bool {
	*b = block{dim: 1}
	J2 := lv.J2
	if J2 < 0 || (J2%2 == 1) != st.HalfIntegerJ() {
		return false
	}
	J := float64(J2) / 2
	switch c {
	case states.Singlet:
		x := J * (J + 1)
		b.setRotation(sym2{x})
		return true
	case states.DoubletSigma:
		return b.setDoubletSigma(st, J2, lv.F)
	case states.TripletSigma:
		return b.setTripletSigma(J2, lv.F)
	case states.SingletPi:
		if J2 < 2 || lv.Parity == states.NoParity {
			return false
		}
		x := J * (J + 1)
		s := float64(lv.Parity)
		b.setRotation(sym2{x})
		b.op[qQ] = sym2{0.5 * s * x}
		b.op[qQD] = sym2{0.5 * s * x * x}
		return true
	case states.DoubletPi:
		return b.setDoubletPi(J2, lv.F, lv.Parity)
	}
	return false
}

// setDoubletSigma: case (b), one level per (J, F): N = J ∓ ½ for F1/F2,
// ⟨N·S⟩ = ½[J(J+1) − N(N+1) − S(S+1)] (½N for F1, −½(N+1) for F2),
// γ_D: ½[N², N·S]₊ = N(N+1)⟨N·S⟩.
func (b *block) setDoubletSigma(st states.State, J2, f int) bool {
	if f != 1 && f != 2 {
		return false
	}
	n := st.NOf(J2, f)
	if n < 0 {
		return false
	}
	J := float64(J2) / 2
	nn := float64(n) * float64(n+1)
	ns := 0.5 * (J*(J+1) - nn - 0.75)
	b.setRotation(sym2{nn})
	b.op[qGamma] = sym2{ns}
	b.op[qGammaD] = sym2{nn * ns}
	return true
}

// setTripletSigma: Schlapp's case-(b) matrix. F2 (N = J) alone:
// N(N+1), ⟨N·S⟩ = −1, spin–spin ⅔. F1 (N = J − 1) and F3 (N = J + 1) share
// a 2×2 block in the basis (N = J−1, N = J+1):
//
//	N²     diag((J−1)J, (J+1)(J+2))
//	N·S    diag(J − 1, −(J + 2))
//	ss     ⎡−⅔(J−1)/(2J+1)        2√(J(J+1))/(2J+1)⎤
//	       ⎣2√(J(J+1))/(2J+1)     −⅔(J+2)/(2J+1)   ⎦
//
// (ss = ⅔(3S_z² − S²), the operator of λ), F1 the lower eigenvalue; J = 0 has
// F3 (N = 1) only.
func (b *block) setTripletSigma(J2, f int) bool {
	J := float64(J2 / 2)
	switch {
	case f == 2 && J2 >= 2:
		x := J * (J + 1)
		b.setRotation(sym2{x})
		b.op[qGamma] = sym2{-1}
		b.op[qGammaD] = sym2{-x}
		b.op[qLambda] = sym2{2.0 / 3}
		b.op[qLambdaD] = sym2{2.0 / 3 * x}
		return true
	case f == 3 && J2 == 0:
		b.setRotation(sym2{2})
		b.op[qGamma] = sym2{-2}
		b.op[qGammaD] = sym2{-4}
		b.op[qLambda] = sym2{-4.0 / 3}
		b.op[qLambdaD] = sym2{-8.0 / 3}
		return true
	case (f == 1 || f == 3) && J2 >= 2:
		b.dim = 2
		b.pick = (f - 1) / 2
		d := 2*J + 1
		n2 := sym2{(J - 1) * J, 0, (J + 1) * (J + 2)}
		b.setRotation(n2)
		b.op[qGamma] = sym2{J - 1, 0, -(J + 2)}
		b.op[qLambda] = sym2{-2.0 / 3 * (J - 1) / d, 2 * math.Sqrt(J*(J+1)) / d, -2.0 / 3 * (J + 2) / d}
		b.op[qGammaD] = anti(n2, b.op[qGamma])
		b.op[qLambdaD] = anti(n2, b.op[qLambda])
		return true
	}
	return false
}

// setDoubletPi: the case-(a) basis (Ω = ½, Ω = 3/2) of one parity, x = J + ½,
// z = x² − 1, s = +1 for e and −1 for f:
//
//	N²     ⎡z + 2   −√z⎤    A (L_zS_z)   diag(−½, ½)
//	       ⎣−√z      z ⎦    γ (N·S)      ⎡−1    ½√z⎤
//	                                     ⎣½√z    0 ⎦
//	p      diag(−½sx, 0)    q            ⎡−sx      ½sx√z⎤
//	                                     ⎣½sx√z     0   ⎦
//
// and the distortion operators ½[N², ·]₊ of A, γ, p and q. F1 is the lower
// eigenvalue; J = ½ has the Ω = ½ level only (either F label).
func (b *block) setDoubletPi(J2, f int, par states.Parity) bool {
	if (f != 1 && f != 2) || par == states.NoParity {
		return false
	}
	x := float64(J2+1) / 2
	z := x*x - 1
	rz := math.Sqrt(math.Max(z, 0))
	s := float64(par)
	n2 := sym2{z + 2, -rz, z}
	b.setRotation(n2)
	b.op[qA] = sym2{-0.5, 0, 0.5}
	b.op[qGamma] = sym2{-1, 0.5 * rz, 0}
	b.op[qP] = sym2{-0.5 * s * x, 0, 0}
	b.op[qQ] = sym2{-s * x, 0.5 * s * x * rz, 0}
	b.op[qAD] = anti(n2, b.op[qA])
	b.op[qGammaD] = anti(n2, b.op[qGamma])
	b.op[qPD] = anti(n2, b.op[qP])
	b.op[qQD] = anti(n2, b.op[qQ])
	if J2 >= 3 {
		b.dim = 2
		b.pick = f - 1
	}
	return true
}

// solve returns the level's eigenvalue of Σ_q c_q M_q (T excluded), stores
// ∂E/∂c_q = ψᵀM_qψ in dE (dE[qT] = 1), and returns mag = Σ_q |c_q ∂E/∂c_q|
// over the quantities other than T, the size of the terms summed.
//
// 2×2: with m = (a+d)/2, h = (a−d)/2, r = √(h² + b²), the eigenvalues are
// m ∓ r; cos 2θ = h/r and sin 2θ = b/r give the eigenvectors (−sin θ, cos θ)
// (lower) and (cos θ, sin θ) (upper), so ψ₁² = (1 ∓ cos 2θ)/2,
// ψ₂² = (1 ± cos 2θ)/2 and ψ₁ψ₂ = ∓ sin 2θ / 2.
func (b *block) solve(c *[nQ]float64, dE *[nQ]float64) (e, mag float64) {
	var h sym2
	for q := qB; q < nQ; q++ {
		if c[q] != 0 {
			o := &b.op[q]
			h[0] += c[q] * o[0]
			h[1] += c[q] * o[1]
			h[2] += c[q] * o[2]
		}
	}
	dE[qT] = 1
	var w11, w12, w22 float64 // ψ₁², 2ψ₁ψ₂, ψ₂²
	if b.dim == 1 {
		e, w11 = h[0], 1
	} else {
		m := 0.5 * (h[0] + h[2])
		hd := 0.5 * (h[0] - h[2])
		r := math.Hypot(hd, h[1])
		cs, sn := 1.0, 0.0
		if r > 0 {
			cs, sn = hd/r, h[1]/r
		}
		if b.pick == 0 {
			e = m - r
			w11, w12, w22 = 0.5*(1-cs), -sn, 0.5*(1+cs)
		} else {
			e = m + r
			w11, w12, w22 = 0.5*(1+cs), sn, 0.5*(1-cs)
		}
	}
	for q := qB; q < nQ; q++ {
		o := &b.op[q]
		d := w11*o[0] + w12*o[1] + w22*o[2]
		dE[q] = d
		mag += math.Abs(c[q] * d)
	}
	return e, mag
}
