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
// degeneracy and g_ns the nuclear-spin weight (see NuclearSpinWeights). For a
// state whose fine structure the constants record resolves (see Open shells)
// the sum runs over the components themselves, each with g_e = 1:
//
//	Q(T) = Σ_i g_ns(±_i) · (2J_i+1) · exp(−c₂·E_i/T).
//
// Otherwise the model describes ¹Σ levels, E = E(v, x) with x = J(J+1); for a
// state with electron spin (S > 0) the model's J is read as N, the rotational
// quantum number without electron spin, and each N carries 2S+1 spin
// components (fine structure neglected); for Λ > 0 the sum starts at N = Λ.
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
// # Levels and their sources
//
// Each constants record (the ground state's, and each excited state's own)
// is a level source: the vibrational levels the record describes, with their
// energies and gradients from its model, and an extrapolation of the levels
// it lacks (levelSource). A Dunham model with the anharmonic term Y20
// describes every v. A term-values record, or a Dunham model without Y20,
// describes its own levels; the others are extrapolated from them,
//
//	G(v) = T_a + P(v+½) − P(v_a+½),  P(u) = ω_e u − ω_e x_e u²,
//	B_v = B_a + b₁(v − v_a),  D_v, H_v, … = the means over the record,
//
// a the nearest record level: ω_e and ω_e x_e fitted to the band origins of
// three or more levels; from two levels ω_e = ΔG/(1 − x_e(v₀+v₁+1)) with x_e
// = ω_e x_e/ω_e from a prior; from one level (pure rotation) ω_e from the
// electronic-states file (omega_e) and ω_e x_e from that file (omega_e_x_e)
// where given, else x_e from the prior. The prior spans
// x_e = 0.002 (heavy molecules) … 0.03 (hydrides), nominal 0.0077 (the
// geometric centre). b₁ is the slope of the record's B_v (two or more
// levels) or −α_e of the Pekeris relation α_e = 6√(ω_e x_e B³)/ω_e − 6B²/ω_e
// (one level). The extrapolated levels enter the nominal sum, linear in the
// record's values, so their statistical σ is carried like any other.
//
// Vibrational levels run from v = 0 while G(v) = E(v, 0) rises and B_v > 0;
// rotational levels from J = 0 while E(v, J) rises (centrifugal turnover).
// Every level of every state lies at most D0 + its products energy above the
// lowest level (products_energy of the electronic-states file; 0: the ground
// state's asymptote). D0 is the electronic-states file's dissociation_energy
// (with dissociation_energy_sigma), or, without it, 0.86 × the linear
// Birge–Sponer D0(LBS) = ω_e²/(4ω_e x_e) − G(0), with σ = 0.14 × D0(LBS): the
// mean and spread of D0/D0(LBS) over the ground states of H2, HF, HCl, CO,
// N2, O2, Cl2 and I2 (Huber & Herzberg 1979, from memory; the extrapolation
// overestimates for most molecules). Where G(v) never turns over the sum is
// still capped at that estimate (x_e at the prior's centre). Levels that
// cannot hold more than e⁻⁵⁰ of the molecules at the highest temperature are
// not enumerated.
//
// A record with a single vibrational level and no omega_e determines no
// vibrational structure: the sum is refused (ErrCannotCompute) at the
// temperatures where the vibrational levels could add more than 0.01
// J mol⁻¹ K⁻¹ to Cp° (the harmonic contribution at a safe lower bound of
// ω_e: the Kratzer estimate √(4B³/(D + 3σ_D)) divided by 1.5, or 20 cm⁻¹
// without a determined D), and the NASA-7 fit is left out when its range
// reaches them.
//
// # Uncertainty budget
//
// Every function f carries three σ: the statistical σ above (the fit's
// covariance), σ_model for what the lines did not observe, and σ_total =
// √(σ² + σ_model²). σ_model comes from named contributions, each the largest
// |f_alternative − f_nominal| over its alternatives; contributions are
// combined in quadrature as independent:
//
//   - vibrational_levels: x_e at the ends of its prior and half-way
//     (geometrically) from its centre to each (the level sum recomputed; the
//     dissociation estimate follows each x_e, and at the ends alone the two
//     effects cancel at some temperatures), or, where the
//     record determines the anharmonicity or the electronic-states file gives
//     ω_e x_e, the next term of G(v) beyond the observed v at its expected
//     size;
//   - rotation_vibration: α_e at 0.5 and 1.5 times the Pekeris value (one
//     level), or the next term of B_v beyond the observed v;
//   - rotational_levels: the next centrifugal-distortion term beyond the
//     highest J observed in each v (H ≈ D²/B after D; D = 4B³/ω_e² after B
//     alone), which covers the extrapolation in J and the truncation of the
//     series;
//   - dissociation: D0 − σ and D0 + σ (the levels between the limits
//     removed or added: the sum is enumerated once to the highest limit);
//   - omega_e: ω_e ± σ of the electronic-states file (one level);
//   - omega_e_x_e: ω_e x_e ± σ of the electronic-states file, ω_e held (one
//     level; without σ the value is taken as exact and the note says so);
//   - fine_structure: the spin components of an open-shell state whose fine
//     structure the record does not describe split over its width W
//     (fine_structure_width, or the embedded list of open-shell ground
//     states), energies from the new lowest level;
//   - fine_structure_constants: for a state whose fine structure the record
//     resolves, the fine-structure constants of the vibrational levels it
//     lacks extrapolated linearly in v from the record's levels (one level:
//     changed by max(1 %, r·α_e/B_e) per quantum, r as below) instead of
//     held at the nearest level; for
//     a Dunham record, which describes every v through the v-expansions X_v
//     = X_e − α_X (v+½), the next term of each constant's expansion beyond
//     the observed v at its expected size, α_X²/|X_e| (v+½)² after α_X, or
//     after X_e alone a slope |X_e|·max(1 %, r·α_e/B_e) per quantum, r the
//     constant's rotational order (0 for A and λ, 1 for γ and p, 2 for q:
//     the constant taken to vary with v like B_v^r; our own estimate),
//     ∂E/∂X·δX per level (Hellmann–Feynman), the constants combined in
//     quadrature.
//   - electronic_states: the excited electronic states of the embedded list
//     of low-lying states (KnownExcitedStates) that the problem lacks, added
//     as the ground record's spin-free levels shifted by T_e − σ and by
//     T_e + σ with their degeneracy (2S+1)(2 − δ_Λ0) (recomputed; see
//     missingStates for which states count as missing and as mattering).
//
// The next term of a series is estimated from its last two, c_(K+1) ≈
// c_K²/c_(K−1) (common practice: an order of magnitude), or from an earlier
// pair continued geometrically where that is larger (model.NextTerm), and
// applied only
// beyond the data, as c·[y^n − y_m^n − n y_m^(n−1)(y − y_m)] for y > y_m (the
// part a fit up to y_m cannot absorb); these small perturbations are
// evaluated to first order through the same analytic derivatives as the
// statistical σ (Σ_i ∂f/∂E_i·δE_i), the others by recomputing the sum.
// Several such terms of one contribution (one per fine-structure constant)
// are independent, of unknown sign, and combined in quadrature. The shape
// P_n takes the fit to absorb the term's value and slope at y_m; a fit of a
// few levels leaves some of both (a line through v = 0 … 2 leaves a
// curvature growing as (v−1)² − ⅔ rather than (v−2)²), so close to the data
// the entries run low by up to a factor of 3 (measured for the fine-structure
// constants of NO, thermo/fineseries_test.go): an order of magnitude still.
// thermo.json names every contribution at every temperature; nasa7.json
// states, per range, the largest σ_total of Cp, where it stays below 0.1
// J mol⁻¹ K⁻¹, and where the model part dominates. The numbers are only as
// good as this model: for safety or design work use reviewed reference data.
//
// # Open shells
//
// A constants record fitted with an electronic-states file lists its states,
// and its model (fit/model.LevelModel) gives every fine-structure and
// Λ-doubling component of every vibronic level. A state of the sum whose
// label is a state of that record (the ground state takes the record's ground
// state; the terms must agree) gets a fine-structure source (fineLevels): its
// levels are the components (v, J, F, e/f) of the state's effective
// Hamiltonian evaluated from the effective constants of each vibronic level
// (model.EffectiveComponents), with ∂E/∂x = Σ_q ∂E/∂c_q·∂c_q/∂x
// (Hellmann–Feynman) for the statistical σ; the levels of a vibronic level
// enumerate J upwards while every component still rises with J. The
// vibrational levels the record lacks are extrapolated as above, their
// fine-structure constants taken from the nearest level of the record (the
// budget's fine_structure_constants entry extrapolates them instead); a
// Dunham record with Y20 describes every v, fine-structure constants
// included, and the entry takes the next term of their v-expansions. The
// energy zero is the lowest component with non-zero weight (16O2 X³Σg⁻: N = 1,
// J = 0, F3). Without an electronic-states file the sum takes the record's
// states (recordStates).
//
// Nuclear-spin weights of components (species.NuclearSpinWeightsByParity): a
// level of a homonuclear molecule is symmetric under exchange of the nuclei
// when its total parity is + in a g state or − in a u state, and takes the
// weight of symmetric or antisymmetric levels by the spin statistics; its
// total parity follows from its e/f label, +(−1)^(J−½) (half-integer J) or
// +(−1)^J (integer J) for e, the opposite for f (Brown et al., J. Mol.
// Spectrosc. 55, 500 (1975)). In a Σ state this is the rule by the parity of
// N; in a Π or Δ state the two Λ components of a J take different weights
// (a¹Δg of 16O2 keeps one of them).
//
// A record fitted without states describes ¹Σ levels. A molecule of the
// embedded list of diatomics whose ground state is not ¹Σ⁺ (O2, NO, OH, CH,
// CN, SO, ClO, NS, NH, SH, S2, CF, BrO, any isotopologue; OpenShellGround) is
// then refused without electronic states (an error of kind failure.BadInput
// naming --states). With them, and for every state the record does not
// describe (an excited state without constants of its own is the ground
// record's spin-free manifold shifted by its term energy), the model's J is
// read as N and each N carries its 2S+1 spin components at one energy; the
// fine-structure entry of the budget and a warning state the size of what
// that neglects (for 16O2 the energy zero sits at the centre of N = 1, about
// 2.6 cm⁻¹ above its lowest spin component, so H°(T) − H°(0) is low by about
// 0.03 kJ mol⁻¹).
package thermo
