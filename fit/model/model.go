// Package model holds the energy-level models of bandwright: band-by-band term
// values ("term-values") and the Dunham expansion ("dunham") with mass scaling across
// isotopologues and optional Born–Oppenheimer-breakdown terms.
//
// Every model is linear in its parameters: E(s, v, J) = Σ_j c_j(s, v, J)·p_j, so the
// gradient ∂E/∂p_j = c_j is exact and cheap, and a line position
// ν = E(upper) − E(lower) has the design row c(upper) − c(lower). All energies are
// in cm⁻¹, measured from the model's own zero: T_v of the lowest level of each
// isotopologue is 0 in the term-values model; the Dunham model has its zero at the
// potential minimum (Y00 is not part of the model), so E(0, 0) is the zero-point
// energy above the minimum.
//
// The models describe ¹Σ states (no Λ-doubling, no spin splitting): rotational
// energy depends on x = J(J+1) only.
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

	Value, Sigma float64
	Fixed        bool
}

// ID is the parameter's unique key, used in messages and in --fix:
// "B_v1[13C16O]" (term values), "Y01" (Dunham), "BOB01_C" (breakdown).
func (p Param) ID() string {
	switch {
	case p.V >= 0:
		return fmt.Sprintf("%s_v%d[%s]", p.Name, p.V, p.Species)
	default:
		return p.Name
	}
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

// Fix is a user's request to hold parameters at a value: "D=6.1e-6" (every D),
// "D_v1=…" (D of v=1 in every isotopologue), "D_v1[13C16O]=…", "Y02=…".
type Fix struct {
	Name    string // "D", "Y02", "BOB01_C"
	V       int    // -1: any level
	Species string // empty: any isotopologue
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
	if f.Name != p.Name {
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
			id := f.Name
			if f.V >= 0 {
				id += "_v" + strconv.Itoa(f.V)
			}
			if f.Species != "" {
				id += "[" + f.Species + "]"
			}
			unused = append(unused, id)
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
// takes in its list of terms (term values: T, B, D, H, L; Dunham: Y<k><l>),
// and otherwise the error NewTermValues or NewDunham would give, so that a
// pipeline file can name the file and line of a bad term before any fit.
func CheckTerm(kind, name string) error {
	name = strings.TrimSpace(name)
	switch kind {
	case KindTermValues:
		if name != "T" && !contains(rotTerms, name) {
			return fmt.Errorf("model: term-values model has no term %q (terms: T, B, D, H, L)", name)
		}
	case KindDunham:
		_, _, err := ParseDunhamTerm(name)
		return err
	}
	return nil
}
