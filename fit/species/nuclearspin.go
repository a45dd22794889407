package species

import "fmt"

// StateSymmetry is the symmetry of an electronic state of a diatomic molecule:
// Parity is 'g', 'u' or 0 (nuclei of two different elements, or not given);
// Reflection is '+', '-' or 0 (Λ > 0, or not given).
type StateSymmetry struct {
	Parity     byte
	Reflection byte
}

// ParseStateSymmetry reads "g+", "g-", "u+", "u-", "g", "u", "+", "-" or ""
// (a Unicode minus "−" is accepted for "-").
func ParseStateSymmetry(s string) (StateSymmetry, error) {
	var y StateSymmetry
	rest := s
	if len(rest) > 0 && (rest[0] == 'g' || rest[0] == 'u') {
		y.Parity = rest[0]
		rest = rest[1:]
	}
	switch rest {
	case "":
	case "+":
		y.Reflection = '+'
	case "-", "−":
		y.Reflection = '-'
	default:
		return StateSymmetry{}, fmt.Errorf("%q is not one of g+, g-, u+, u-, g, u, +, -", s)
	}
	return y, nil
}

// String returns the symmetry as ParseStateSymmetry reads it ("g-", "u", "+", "").
func (y StateSymmetry) String() string {
	var b []byte
	if y.Parity != 0 {
		b = append(b, y.Parity)
	}
	if y.Reflection != 0 {
		b = append(b, y.Reflection)
	}
	return string(b)
}

// CheckStateSymmetry checks that an electronic state with projection Λ
// (lambda) and symmetry sym suits the molecule: a homonuclear molecule needs
// g/u for every state and ± as well for a Σ state (the nuclear-spin weights
// depend on them), and nuclei of two different elements have no g/u symmetry.
func (m Isotopologue) CheckStateSymmetry(lambda int, sym StateSymmetry) error {
	switch {
	case m.Homonuclear() && sym.Parity == 0 && lambda == 0:
		return fmt.Errorf("%s is homonuclear: give g+, g-, u+ or u- for a Σ state (%q given)", m.Label, sym.String())
	case m.Homonuclear() && sym.Parity == 0:
		return fmt.Errorf("%s is homonuclear: give g or u (%q given)", m.Label, sym.String())
	case m.Homonuclear() && lambda == 0 && sym.Reflection == 0:
		return fmt.Errorf("%s is homonuclear: a Σ state needs its ± symmetry too: g+, g-, u+ or u- (%q given)", m.Label, sym.String())
	case !m.SameElement() && sym.Parity != 0:
		return fmt.Errorf("%s has two different nuclei and no g/u symmetry (%q given)", m.Label, sym.String())
	}
	return nil
}

// NuclearSpinWeights returns the nuclear-spin weights g_ns of the even-N and
// odd-N rotational levels of an electronic state with projection Λ (lambda)
// and symmetry sym. The weights count every nuclear-spin state, so that they
// add up to (2I_A+1)(2I_B+1) = NuclearSpinStates over one even and one odd
// level (the convention of line intensities); divide by NuclearSpinStates for
// the thermochemistry convention, in which the nuclear-spin degeneracy is left
// out.
//
// Homonuclear molecules (both nuclei the same isotope, spin I): the
// nuclear-spin functions are (2I+1)(I+1) symmetric and (2I+1)I antisymmetric
// under exchange of the nuclei (SpinExchangeStates). A rotational level of a
// Σ state has parity (−1)^N in a Σ⁺ state and (−1)^(N+1) in a Σ⁻ state; it is
// symmetric (s) under exchange when its parity is + in a g state or − in a u
// state, antisymmetric (a) otherwise. The total wave function must be
// symmetric for bosons (integer I) and antisymmetric for fermions
// (half-integer I), so
//
//	bosons:   g_ns(s) = (2I+1)(I+1),  g_ns(a) = (2I+1)I
//	fermions: g_ns(s) = (2I+1)I,      g_ns(a) = (2I+1)(I+1)
//
// (common practice; ¹Σg⁺ 14N2 takes 6 on even and 3 on odd N, ¹Σg⁺ 1H2 1 and
// 3, ³Σg⁻ 16O2 odd N only). For Λ > 0 each N has two Λ components of opposite
// parity, one s and one a; the weight per component is the mean (2I+1)²/2 (the
// factor 2 of the Λ doubling belongs to the electronic degeneracy).
// Heteronuclear molecules, including two isotopes of one element:
// (2I_A+1)(2I_B+1) for every N.
//
// A homonuclear Σ state needs both Parity and Reflection, a homonuclear Λ > 0
// state needs Parity; otherwise an error says what is missing.
func (m Isotopologue) NuclearSpinWeights(lambda int, sym StateSymmetry) (even, odd float64, err error) {
	symStates, antiStates, homonuclear := m.SpinExchangeStates()
	if !homonuclear {
		total := float64(m.NuclearSpinStates())
		return total, total, nil
	}
	gs, ga := float64(symStates), float64(antiStates) // weight of s and a levels for bosons
	if !m.A.IsBoson() {
		gs, ga = ga, gs
	}
	if sym.Parity == 0 {
		return 0, 0, fmt.Errorf("%s is homonuclear: the state needs its g/u symmetry", m.Label)
	}
	if lambda > 0 {
		mean := (gs + ga) / 2
		return mean, mean, nil
	}
	if sym.Reflection == 0 {
		return 0, 0, fmt.Errorf("%s is homonuclear: a Σ state needs g+, g-, u+ or u-", m.Label)
	}
	// Parity of even-N levels: + for Σ⁺, − for Σ⁻. Even levels are s when
	// (parity + and g) or (parity − and u).
	evenSymmetric := (sym.Reflection == '+') == (sym.Parity == 'g')
	if evenSymmetric {
		return gs, ga, nil
	}
	return ga, gs, nil
}

// NuclearSpinWeightsByParity returns the nuclear-spin weights g_ns of the
// levels of total parity + and of total parity − of an electronic state with
// symmetry sym, counting every nuclear-spin state as NuclearSpinWeights
// does. This is the rule for a level whose parity is known — every level of
// a state whose fine-structure and Λ-doubling components are resolved: a
// level of a homonuclear molecule is symmetric under exchange of the nuclei
// when its parity is + in a g state or − in a u state, antisymmetric
// otherwise, and takes the weight of its kind (bosons: (2I+1)(I+1) for
// symmetric, (2I+1)I for antisymmetric levels; fermions the reverse). In a
// Σ state this is NuclearSpinWeights with the parity of N; in a Π or Δ state
// the two Λ components of each J, of opposite parity, take different
// weights (the ones of a ¹Δg state of 16O2 one e or f level per J, not the
// mean). Heteronuclear molecules: (2I_A+1)(2I_B+1) for every level. A
// homonuclear state needs its g/u symmetry.
func (m Isotopologue) NuclearSpinWeightsByParity(sym StateSymmetry) (plus, minus float64, err error) {
	symStates, antiStates, homonuclear := m.SpinExchangeStates()
	if !homonuclear {
		total := float64(m.NuclearSpinStates())
		return total, total, nil
	}
	if sym.Parity == 0 {
		return 0, 0, fmt.Errorf("%s is homonuclear: the state needs its g/u symmetry", m.Label)
	}
	gs, ga := float64(symStates), float64(antiStates)
	if !m.A.IsBoson() {
		gs, ga = ga, gs
	}
	if sym.Parity == 'g' {
		return gs, ga, nil
	}
	return ga, gs, nil
}
