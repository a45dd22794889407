// Package model holds the energy-level models of bandwright: band-by-band term
// values ("term-values") and the Dunham expansion ("dunham") with mass scaling across
// isotopologues and optional Born–Oppenheimer-breakdown terms, for ¹Σ states and,
// with electronic states and fine structure, for ²Σ, ³Σ, ¹Π and ²Π states and
// electronic band systems.
//
// All energies are in cm⁻¹, measured from the model's own zero: T_v of the lowest
// level of the ground state of each isotopologue is 0 in the term-values model; the
// Dunham model has its zero at the potential minimum of the ground state (Y00 is not
// part of the model), so E(0, 0) is the zero-point energy above the minimum, and an
// excited state adds its T_e.
//
// # ¹Σ states
//
// The levels of a ¹Σ state are linear in the parameters: E(s, v, J) = Σ_j
// c_j(s, v, J)·p_j, so the gradient ∂E/∂p_j = c_j is exact and cheap, and a line
// position ν = E(upper) − E(lower) has the design row c(upper) − c(lower). The
// rotational energy depends on x = J(J+1) only. Energy and Transition evaluate the
// ground state this way (for a ground state with fine structure they give its energy
// without it, J read as N).
//
// # Electronic states and fine structure
//
// A model built with electronic states (package states; the ground state first)
// implements LevelModel. Each vibronic level (isotopologue, state, v) has effective
// constants — T, the rotational constants B, D, H, L and the fine-structure
// constants of its state's case — which are single parameters in the term-values
// model ("A_v0[14N16O]", "A:B_v0[14N16O]" for state A) and Dunham-type expansions in
// the Dunham model (see Dunham). A level's energy is
//
//	E = T + eigenvalue of H(J, parity)
//
// where H is the effective Hamiltonian of the state's case in the 1×1 or 2×2 block
// of the level's J and rotationless parity, diagonalised exactly for every J — the
// whole range from Hund's case (a) to case (b), with no case assumed. H is linear in
// the constants, H = Σ_q c_q M_q(J, parity), so the gradient of an eigenvalue is
// ∂E/∂c_q = ψᵀ M_q ψ (Hellmann–Feynman), ψ the level's eigenvector; the fit's
// Gauss–Newton steps use it (checked against finite differences of gonum/diff/fd in
// the tests). The Hamiltonians are written in the N² formulation of Brown,
// Colbourn, Watson and Wayne (J. Mol. Spectrosc. 74, 294 (1979)): N = J − S is the
// rotational angular momentum including the orbital part, rotation is B N² − D N⁴ +
// H N⁶ + L N⁸ (D > 0 lowers the levels), and every distortion term is the
// anticommutator ½[N², O]₊ of N² with the operator O of its constant:
//
//	¹Σ   B N² − D N⁴ + H N⁶ + L N⁸
//	²Σ   + γ N·S + γ_D ½[N², N·S]₊
//	³Σ   + λ ⅔(3S_z² − S²) + λ_D ½[N², ⅔(3S_z² − S²)]₊ + γ N·S + γ_D ½[N², N·S]₊
//	¹Π   + q O_q + q_D ½[N², O_q]₊
//	²Π   + A L_zS_z + A_D ½[N², L_zS_z]₊ + γ N·S + γ_D ½[N², N·S]₊
//	     + p O_p + q O_q + p_D ½[N², O_p]₊ + q_D ½[N², O_q]₊
//
// with the Λ-doubling operators (Brown and Merer, J. Mol. Spectrosc. 74, 488 (1979))
//
//	O_p = −½ (J₊S₊ e^(−2iφ) + J₋S₋ e^(2iφ))
//	O_q = −(J₊S₊ e^(−2iφ) + J₋S₋ e^(2iφ)) + ½ (J₊² e^(−2iφ) + J₋² e^(2iφ))
//
// so that p O_p + q O_q = −½(p + 2q)(J₊S₊e^(−2iφ) + …) + ½q(J₊²e^(−2iφ) + …).
// Molecule-fixed J₊ lowers Ω (the anomalous sign, common practice), and
// ⟨Λ∓2|e^(∓2iφ)|Λ⟩ = 1.
//
// Parity and e/f (Brown et al., J. Mol. Spectrosc. 55, 500 (1975)): the parity
// operation maps |Λ, S, Σ, Ω; J⟩ to (−1)^(J−S+s)|−Λ, S, −Σ, −Ω; J⟩ (s = 1 for Σ⁻
// states, 0 otherwise); the basis functions of a Π state are
// (|Λ, Σ, Ω⟩ ± |−Λ, −Σ, −Ω⟩)/√2, and the + combination, of parity +(−1)^(J−½) for
// half-integer J, is e. With these phases E(e) − E(f) = q J(J+1) in a ¹Π state,
// and −(p + 2q)(J + ½) for the Ω = ½ levels of a ²Π state in the case-(a) limit
// (with OH X²Π v = 0, p ≈ +0.235 and q ≈ −0.039 cm⁻¹, the Λ-doubling of ²Π3/2 J =
// 3/2 comes out near the known 1666 MHz; see the tests).
//
// The signs were derived from these phases and checked against what q stands
// for: q = 2Σ(−1)^s|⟨Π|BL₊|Σ^s⟩|²/(E_Π − E_Σ) (Brown and Merer 1979; s = 0 for
// Σ⁺), so a Σ⁺ state above — whose levels have parity (−1)^N and push down the Λ
// component of that parity — makes q negative, as OH's A²Σ⁺ does. In case (b)
// (A = γ = p = 0) the model puts the component of parity (−1)^N — e in ¹Π and
// in F1 of ²Π, f in F2 — q·N(N+1) below the other, as it must; and p enters the
// case-(a) Ω = ½ splitting as p + 2q (Mulliken and Christy 1931), which ties its
// sign to q's. The model also puts the f level above the e level in OH ²Π3/2 J =
// 3/2 and NO ²Π½ J = ½, as we recall the state-selection literature to have it
// (from memory, not certain enough for a test).
//
// The matrices of each case (x = J(J+1) unless noted; s = +1 for e, −1 for f):
//
//	¹Σ, ²Σ   1×1; in ²Σ N = J ∓ ½ for F1/F2 and N·S = ½[J(J+1) − N(N+1) − ¾]
//	         (½N for F1, −½(N+1) for F2)
//	¹Π       1×1 per parity: N² = x, O_q = ½ s x
//	³Σ       Schlapp's case-(b) matrix (Phys. Rev. 51, 342 (1937)): F2 (N = J) alone,
//	         N² = x, N·S = −1, ⅔(3S_z² − S²) = ⅔; F1 (N = J−1) and F3 (N = J+1) in
//	         one 2×2 block,
//	           N²   diag((J−1)J, (J+1)(J+2))
//	           N·S  diag(J − 1, −(J + 2))
//	           ⅔(3S_z² − S²)   [−⅔(J−1)/(2J+1)      2√(J(J+1))/(2J+1)]
//	                           [2√(J(J+1))/(2J+1)   −⅔(J+2)/(2J+1)   ]
//	         and J = 0 has F3 (N = 1) alone
//	²Π       the case-(a) basis (Ω = ½, Ω = 3/2) of one parity, X = J + ½, z = X² − 1:
//	           N²      [z + 2   −√z]    L_zS_z   diag(−½, ½)
//	                   [−√z      z ]
//	           N·S     [−1     ½√z]     O_p      diag(−½ s X, 0)
//	                   [½√z     0 ]
//	           O_q     [−s X        ½ s X √z]
//	                   [½ s X √z       0    ]
//	         and J = ½ has the Ω = ½ level alone
//
// The distortion operators are formed from these matrices in the same block,
// ½(N²O + ON²) and ½(N⁴O + ON⁴) with N⁴ the square of the block's N² (N²
// keeps J and parity, so the block holds all of it): N(N+1)·O and
// [N(N+1)]²·O in a 1×1 block.
//
// Labels: in a 2×2 block the lower eigenvalue is F1 (²Π: F1, F2; ³Σ: F1, F3). The
// two levels of one J and parity never cross, so the label follows the eigenvector
// from case (a) to case (b): for ²Π it is the component that is mostly Ω = ½ when
// A > 0 and mostly Ω = 3/2 when A < 0 at low J, and the one with N = J − ½ at high
// J. The single J = ½ level of a ²Π state may carry either label (F1 in the case-(a)
// labelling of A > 0, F2 with N = 1 in the case-(b) one). In the N² formulation the
// rotational energy of a ²Π state lies BΛ² above the Hill–Van Vleck formula written
// with R² (checked in the tests).
//
// Indeterminacies the fit must know: the levels of a ²Π state depend on A only
// through A(A − 4B) when Λ-doubling and distortion are left out, so A and 4B − A
// give the same F1 and F2 levels; and they determine only a combination of A_D and
// γ (Brown, Colbourn, Watson and Wayne 1979). Package fit settles the first with
// two starting values and refuses the second.
//
// Sublevels enumerates every level of a vibronic level — all spin and Λ-doubling
// components with J, N, F, parity, energy and gradient — for the thermo stage;
// constants.Set.Sublevels gives the gradient over the fitted parameters.
package model

import (
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// Kind names a model family as written in constants records and on the command line.
const (
	KindTermValues = "term-values"
	KindDunham     = "dunham"
)

// Param is one parameter of a model: its identity (name and indices) and, when
// it belongs to a fit, its value, 1σ and whether it was held fixed.
type Param struct {
	// Name is "T", "B", "D", "H", "L" (term-values model), "Y{k}{l}" (Dunham) or
	// "BOB{k}{l}_{El}" (Dunham Born–Oppenheimer breakdown, see Dunham).
	Name string
	// V is the vibrational level of a term-values-model parameter; -1 otherwise.
	V int
	// K and L are the Dunham indices of a Y or BOB parameter; -1 otherwise.
	K, L int
	// Species is the isotopologue of a term-values-model parameter, the reference
	// isotopologue of a Dunham Y_kl; empty for BOB parameters.
	Species string
	// Element is the element symbol of a BOB parameter; empty otherwise.
	Element string
	// State is the label of the electronic state the parameter belongs to;
	// empty for the ground state.
	State string

	Value, Sigma float64
	Fixed        bool
}

// ID is the parameter's unique key, used in messages, in --fix and in every
// output: "B_v1[13C16O]" (term values), "Y01" (Dunham), "BOB01_C"
// (breakdown), with the label of the electronic state and a colon in front
// for a state other than the ground state: "A:T_v0[14N16O]", "A:Y01".
func (p Param) ID() string {
	id := p.Name
	if p.V >= 0 {
		id = p.Name + "_v" + strconv.Itoa(p.V) + "[" + p.Species + "]"
	}
	if p.State != "" {
		id = p.State + ":" + id
	}
	return id
}

// Model is an energy-level model. Implementations are immutable and safe for
// concurrent use.
type Model interface {
	// Kind is KindTermValues or KindDunham.
	Kind() string
	// Species lists the isotopologue labels the model covers, reference first
	// for Dunham models.
	Species() []string
	// Params lists the parameters in their fixed order; the parameter vector p
	// passed to Energy follows this order. Values are those the model was built
	// with (zero unless set).
	Params() []Param
	// Energy returns E(species s, v, J) in cm⁻¹ for parameter vector p and, when
	// grad is not nil, stores ∂E/∂p_j in grad[j] for every j (grad has len(p)).
	// s indexes Species(). It returns an error-free value for any v, J ≥ 0; a
	// term-values model returns NaN for a vibrational level it has no parameters for
	// (check HasLevel first).
	Energy(s, v, J int, p []float64, grad []float64) float64
	// HasLevel reports whether the model can evaluate vibrational level v of
	// species s (always true for Dunham models).
	HasLevel(s, v int) bool
}

// Transitioner is implemented by models that evaluate a transition directly:
//
//	ν = E(s, v′, J′) − E(s, v″, J″) = Σ_j [c_j(s, v′, J′) − c_j(s, v″, J″)]·p_j   [cm⁻¹],
//
// differencing the basis functions before they are multiplied by the
// parameters, so that a term common to both levels (T_v, or the vibrational
// Y_k0, of a pure-rotation line; the J-only terms of a Q line) cancels
// exactly instead of leaving the rounding error of two energies of thousands
// of cm⁻¹. When grad is not nil it receives ∂ν/∂p_j for every j (len(p)).
// mag is Σ_j |∂ν/∂p_j·p_j|, the size of the terms summed, against which the
// rounding error of ν is measured. A level the model has no parameters for
// gives NaN (check HasLevel first). Both models of this package implement it.
type Transitioner interface {
	Transition(s, vUp, jUp, vLo, jLo int, p []float64, grad []float64) (nu, mag float64)
}

// SpeciesIndex returns the index of label in m.Species(), or -1.
func SpeciesIndex(m Model, label string) int {
	for i, s := range m.Species() {
		if s == label {
			return i
		}
	}
	return -1
}

// Values returns the parameter values of ps as a vector.
func Values(ps []Param) []float64 {
	v := make([]float64, len(ps))
	for i, p := range ps {
		v[i] = p.Value
	}
	return v
}

// Fix is a user's request to hold parameters at a value: "D=6.1e-6" (every D
// of the ground state), "D_v1=…" (D of v=1 in every isotopologue),
// "D_v1[13C16O]=…", "Y02=…", "A:B_v0=…" (B of v=0 of electronic state A).
type Fix struct {
	Name    string // "D", "Y02", "BOB01_C", "gamma"
	V       int    // -1: any level
	Species string // empty: any isotopologue
	State   string // label of the electronic state; empty: the ground state
	Value   float64
}

// ParseFix parses NAME=VALUE as written on the command line.
func ParseFix(s string) (Fix, error) {
	eq := strings.IndexByte(s, '=')
	if eq < 0 {
		return Fix{}, fmt.Errorf("model: --fix %q: want NAME=VALUE, e.g. D=6.12e-6 or Y02=-6.1e-6", s)
	}
	name, val := strings.TrimSpace(s[:eq]), strings.TrimSpace(s[eq+1:])
	x, err := strconv.ParseFloat(val, 64)
	if err != nil || x != x || x > 1e300 || x < -1e300 {
		return Fix{}, fmt.Errorf("model: --fix %q: value %q is not a finite number", s, val)
	}
	f := Fix{V: -1, Value: x}
	if i := strings.IndexByte(name, ':'); i >= 0 {
		f.State, name = name[:i], name[i+1:]
		if f.State == "" {
			return Fix{}, fmt.Errorf("model: --fix %q: write STATE:NAME with the state's label before the colon", s)
		}
	}
	if i := strings.IndexByte(name, '['); i >= 0 {
		if !strings.HasSuffix(name, "]") || i == len(name)-2 {
			return Fix{}, fmt.Errorf("model: --fix %q: species must be written NAME[SPECIES]", s)
		}
		f.Species = name[i+1 : len(name)-1]
		name = name[:i]
	}
	if i := strings.Index(name, "_v"); i >= 0 && !strings.HasPrefix(name, "BOB") {
		v, err := strconv.Atoi(name[i+2:])
		if err != nil || v < 0 {
			return Fix{}, fmt.Errorf("model: --fix %q: level suffix must be _v<number>", s)
		}
		f.V = v
		name = name[:i]
	}
	if name == "" {
		return Fix{}, fmt.Errorf("model: --fix %q: missing parameter name", s)
	}
	f.Name = name
	return f, nil
}

// Matches reports whether the fix applies to parameter p.
func (f Fix) Matches(p Param) bool {
	if f.Name != p.Name || f.State != p.State {
		return false
	}
	if f.V >= 0 && f.V != p.V {
		return false
	}
	if f.Species != "" && f.Species != p.Species {
		return false
	}
	return true
}

// id writes the fix as the parameter IDs it matches are written.
func (f Fix) id() string {
	id := f.Name
	if f.V >= 0 {
		id += "_v" + strconv.Itoa(f.V)
	}
	if f.Species != "" {
		id += "[" + f.Species + "]"
	}
	if f.State != "" {
		id = f.State + ":" + id
	}
	return id
}

// groundFixes returns fixes with the ground state's label (ground) removed
// from their state, so that "X:B=…" and "B=…" name the same parameters.
func groundFixes(fixes []Fix, ground string) []Fix {
	out := append([]Fix(nil), fixes...)
	for i := range out {
		if out[i].State == ground {
			out[i].State = ""
		}
	}
	return out
}

// applyFixes marks the parameters matched by fixes as fixed at their values and
// returns an error naming any fix that matched nothing.
func applyFixes(ps []Param, fixes []Fix) error {
	var unused []string
	for _, f := range fixes {
		hit := false
		for i := range ps {
			if f.Matches(ps[i]) {
				ps[i].Fixed = true
				ps[i].Value = f.Value
				hit = true
			}
		}
		if !hit {
			unused = append(unused, f.id())
		}
	}
	if len(unused) > 0 {
		sort.Strings(unused)
		return fmt.Errorf("model: --fix names parameters the model does not have: %s", strings.Join(unused, ", "))
	}
	return nil
}

// ErrNoLevels is returned when a model is built without any level to describe.
var ErrNoLevels = errors.New("model: no vibrational levels to describe")

// powers stores q^0 … q^n in dst (n < len(dst)).
func powers(dst []float64, q float64, n int) {
	p := 1.0
	for i := 0; i <= n; i++ {
		dst[i] = p
		p *= q
	}
}

// xPow returns x = J(J+1) raised to the powers 0..n (x^0 = 1) in dst.
func xPow(J int, n int, dst []float64) {
	x := float64(J) * float64(J+1)
	p := 1.0
	for i := 0; i <= n; i++ {
		dst[i] = p
		p *= x
	}
}

// CheckTerm returns nil when name is a term the model of the given kind
// takes in its list of terms (term values: T, B, D, H, L and the
// fine-structure constants A, A_D, A_H, gamma, …, q_H; Dunham: Y<k><l> and
// the fine-structure expansions A_e, alpha_A, A_D, A_H, …; either with a
// "STATE:" prefix), and otherwise the error
// NewTermValues or NewDunham would give, so that a pipeline file can name
// the file and line of a bad term before any fit. Whether a constant suits
// the case of its state is checked when the model is built.
func CheckTerm(kind, name string) error {
	name = strings.TrimSpace(name)
	if _, rest, ok := strings.Cut(name, ":"); ok {
		name = strings.TrimSpace(rest)
	}
	switch kind {
	case KindTermValues:
		if q := quantityOf(name); q < 0 {
			return noTermValuesTerm(name)
		}
	case KindDunham:
		if _, _, ok := parseFineDunham(name); ok {
			return nil
		}
		_, _, err := ParseDunhamTerm(name)
		return err
	}
	return nil
}

// noTermValuesTerm is the error for a term the term-values model does not
// have; it lists the terms it has.
func noTermValuesTerm(name string) error {
	return fmt.Errorf("model: term-values model has no term %q (terms: T, B, D, H, L and the fine-structure constants %s)",
		name, strings.Join(quantityNames[fineStart:], ", "))
}

// noDunhamTerm is the error for a term the Dunham model does not have; it
// lists the fine-structure terms it has.
func noDunhamTerm(name string) error {
	var fine []string
	for q := fineStart; q < nQ; q++ {
		if isDistortion(q) {
			fine = append(fine, quantityNames[q])
		} else {
			fine = append(fine, FineDunhamName(quantityNames[q], 0), FineDunhamName(quantityNames[q], 1))
		}
	}
	return fmt.Errorf("model: %q is not a term of the Dunham model (Y<k><l>, or a fine-structure term: %s)", name, strings.Join(fine, ", "))
}
