// Package thermo is bandwright's thermo stage: partition functions and ideal-gas
// thermodynamic functions of a diatomic gas from fitted molecular constants, with
// the covariance of the fit carried into every number.
//
// # Level sum
//
// The internal partition function is an exact sum over the rovibrational levels of
// every electronic state,
//
//	Q(T) = Σ_i g_e · g_ns(J_i) · (2J_i+1) · exp(−c₂·E_i/T),
//
// E_i in cm⁻¹ above the energy zero (the lowest level with non-zero weight), T in K,
// c₂ = hc/k in cm·K computed from the CODATA constants of
// gonum.org/v1/gonum/unit/constant. g_e = (2S+1)(2 − δ_Λ0) is the electronic
// degeneracy and g_ns the nuclear-spin weight (see NuclearSpinWeights). The models of
// package fit/model describe ¹Σ levels, E = E(v, x) with x = J(J+1); for a state
// with electron spin (S > 0) the model's J is read as N, the rotational quantum
// number without electron spin, and each N carries 2S+1 spin components (fine
// structure neglected); for Λ > 0 the sum starts at N = Λ.
//
// Levels are enumerated once (see NewSystem) and stored with E and ∂E/∂p for every
// fitted parameter p. For each temperature one pass over the levels accumulates
// the moments
//
//	Q, ⟨E⟩ = Σ w E e^(−βE)/Q, ⟨E²⟩,   β = c₂/T,
//
// and their parameter derivatives
//
//	∂ln Q/∂p = −β⟨g⟩,
//	∂⟨E⟩/∂p  = ⟨g⟩ − β(⟨Eg⟩ − ⟨E⟩⟨g⟩),
//	∂⟨E²⟩/∂p = 2⟨Eg⟩ − β(⟨E²g⟩ − ⟨E²⟩⟨g⟩),   g = ∂E/∂p.
//
// All exponents are −βE ≤ 0 (energies are measured from the lowest level), so
// nothing overflows at any temperature; levels with βE > 50 are left out of a
// pass (their share is below e⁻⁵⁰ per unit weight).
//
// # Thermodynamic functions
//
// Ideal gas at the standard pressure p° (1 bar = 10⁵ Pa by default, or
// 101 325 Pa), per mole, R = N_A·k:
//
//	Cp°      = 5/2 R + R β² (⟨E²⟩ − ⟨E⟩²)                      [J mol⁻¹ K⁻¹]
//	H°(T) − H°(0) = 5/2 RT + R c₂ ⟨E⟩                            [kJ mol⁻¹]
//	S°       = S_tr + R ln Q + R c₂⟨E⟩/T                          [J mol⁻¹ K⁻¹]
//	S_tr     = R [3/2 ln(2π m kT/h²) + ln(kT/p°) + 5/2]            (Sackur–Tetrode)
//	gef      = −[G°(T) − H°(298.15 K)]/T = S° − [H°(T) − H°(298.15 K)]/T
//
// with m the molecular mass (the isotopologue's, or the natural-composition molar
// mass from the IUPAC 2005 standard atomic weights with --composition natural, the
// convention of the CODATA Key Values and JANAF tables: translation of the natural
// gas, internal levels of the given isotopologue). H°(0) is the enthalpy with every
// molecule in the lowest level. The functions come from the analytic moments; no
// finite differences in T are taken.
//
// # Uncertainty
//
// Linear propagation: σ_f² = ∇fᵀ C ∇f with the analytic ∇f above and C the
// covariance of the fit (block-diagonal when excited states bring their own
// constants records). Monte Carlo: parameter sets drawn from the multivariate
// normal N(x̂, C), the energy of every level of the same set recomputed for
// each draw and every function recomputed from it, the spread reported as the
// sample standard deviation; draw d uses its own random source seeded from
// (seed, d), so the result does not depend on the number of goroutines (see
// System.MonteCarlo).
//
// # Level limits
//
// Dunham model: v from 0 while G(v) = E(v, 0) still rises; J from 0 while
// E(v, J) still rises with J (centrifugal turnover). Every level stays below the
// dissociation energy D0 (electronic-states file) above the lowest level; without D0 it
// stays below the top of the model's own G(v), the model's estimate of the
// dissociation limit (levels above it are not bound in the model's own
// picture). Term-values model: the vibrational levels of the record; the missing
// ones are named and their share of Q is estimated (see Row.MissingShare).
// Levels that cannot hold more than e⁻⁵⁰ of the molecules at the highest
// temperature are not enumerated.
package thermo
