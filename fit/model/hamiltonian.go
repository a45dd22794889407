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
	qAH
	qGamma
	qGammaD
	qGammaH
	qLambda
	qLambdaD
	qLambdaH
	qP
	qQ
	qPD
	qQD
	qPH
	qQH
	nQ
)

// quantityNames are the parameter names of the effective constants, the
// trade's symbols: T, B, D, H, L, A, A_D, A_H, gamma, gamma_D, gamma_H,
// lambda, lambda_D, lambda_H, p, q, p_D, q_D, p_H, q_H. The suffix _D marks
// the first centrifugal distortion of a constant, ½[N², O]₊, and _H the
// second, ½[N⁴, O]₊ (package doc).
var quantityNames = [nQ]string{"T", "B", "D", "H", "L", "A", "A_D", "A_H", "gamma", "gamma_D", "gamma_H",
	"lambda", "lambda_D", "lambda_H", "p", "q", "p_D", "q_D", "p_H", "q_H"}

// fineStart is the first fine-structure quantity; rotational ones come
// before it.
const fineStart = qA

// caseQuantities lists the fine-structure constants of each case.
var caseQuantities = map[states.Case][]quantity{
	states.Singlet:      nil,
	states.DoubletSigma: {qGamma, qGammaD, qGammaH},
	states.TripletSigma: {qLambda, qLambdaD, qLambdaH, qGamma, qGammaD, qGammaH},
	states.SingletPi:    {qQ, qQD, qQH},
	states.DoubletPi:    {qA, qAD, qAH, qGamma, qGammaD, qGammaH, qP, qQ, qPD, qQD, qPH, qQH},
}

// distortionOf gives, for each distortion constant, the constant whose
// operator it distorts and the power of N² in its anticommutator: X_D is
// ½[N², O_X]₊ and X_H ½[N⁴, O_X]₊.
var distortionOf = map[quantity]struct {
	base  quantity
	power int
}{
	qAD: {qA, 1}, qAH: {qA, 2}, qGammaD: {qGamma, 1}, qGammaH: {qGamma, 2},
	qLambdaD: {qLambda, 1}, qLambdaH: {qLambda, 2}, qPD: {qP, 1}, qPH: {qP, 2},
	qQD: {qQ, 1}, qQH: {qQ, 2},
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

// setDistortions sets the operators of the distortion constants of case c
// from those of the constants they distort: X_D ½[N², O_X]₊ and X_H
// ½[N⁴, O_X]₊, with N² = op[qB] and N⁴ = −op[qD] (setRotation).
func (b *block) setDistortions(c states.Case) {
	n2 := b.op[qB]
	n4 := sym2{-b.op[qD][0], -b.op[qD][1], -b.op[qD][2]}
	for _, q := range caseQuantities[c] {
		d, ok := distortionOf[q]
		if !ok {
			continue
		}
		if d.power == 1 {
			b.op[q] = anti(n2, b.op[d.base])
		} else {
			b.op[q] = anti(n4, b.op[d.base])
		}
	}
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
	ok := false
	switch c {
	case states.Singlet:
		x := J * (J + 1)
		b.setRotation(sym2{x})
		return true
	case states.DoubletSigma:
		ok = b.setDoubletSigma(st, J2, lv.F)
	case states.TripletSigma:
		ok = b.setTripletSigma(J2, lv.F)
	case states.SingletPi:
		if J2 < 2 || lv.Parity == states.NoParity {
			return false
		}
		x := J * (J + 1)
		b.setRotation(sym2{x})
		b.op[qQ] = sym2{0.5 * float64(lv.Parity) * x}
		ok = true
	case states.DoubletPi:
		ok = b.setDoubletPi(J2, lv.F, lv.Parity)
	}
	if ok {
		b.setDistortions(c)
	}
	return ok
}

// setDoubletSigma: case (b), one level per (J, F): N = J ∓ ½ for F1/F2,
// ⟨N·S⟩ = ½[J(J+1) − N(N+1) − S(S+1)] (½N for F1, −½(N+1) for F2).
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
	b.setRotation(sym2{nn})
	b.op[qGamma] = sym2{0.5 * (J*(J+1) - nn - 0.75)}
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
		b.setRotation(sym2{J * (J + 1)})
		b.op[qGamma] = sym2{-1}
		b.op[qLambda] = sym2{2.0 / 3}
		return true
	case f == 3 && J2 == 0:
		b.setRotation(sym2{2})
		b.op[qGamma] = sym2{-2}
		b.op[qLambda] = sym2{-4.0 / 3}
		return true
	case (f == 1 || f == 3) && J2 >= 2:
		b.dim = 2
		b.pick = (f - 1) / 2
		d := 2*J + 1
		b.setRotation(sym2{(J - 1) * J, 0, (J + 1) * (J + 2)})
		b.op[qGamma] = sym2{J - 1, 0, -(J + 2)}
		b.op[qLambda] = sym2{-2.0 / 3 * (J - 1) / d, 2 * math.Sqrt(J*(J+1)) / d, -2.0 / 3 * (J + 2) / d}
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
// (the distortion operators ½[N², ·]₊ and ½[N⁴, ·]₊ of A, γ, p and q follow
// in setDistortions). F1 is the lower eigenvalue; J = ½ has the Ω = ½ level
// only (either F label).
func (b *block) setDoubletPi(J2, f int, par states.Parity) bool {
	if (f != 1 && f != 2) || par == states.NoParity {
		return false
	}
	x := float64(J2+1) / 2
	z := x*x - 1
	rz := math.Sqrt(math.Max(z, 0))
	s := float64(par)
	b.setRotation(sym2{z + 2, -rz, z})
	b.op[qA] = sym2{-0.5, 0, 0.5}
	b.op[qGamma] = sym2{-1, 0.5 * rz, 0}
	b.op[qP] = sym2{-0.5 * s * x, 0, 0}
	b.op[qQ] = sym2{-s * x, 0.5 * s * x * rz, 0}
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
