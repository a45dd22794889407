package species

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"gonum.org/v1/gonum/unit/constant"
)

// Isotopologue is a diatomic molecule with a definite isotope on each atom.
type Isotopologue struct {
	// Label is the canonical label: mass numbers explicit, atoms in the order written,
	// "2H35Cl" for "D35Cl", "14N14N" for "14N2".
	Label string
	A, B  Isotope // atoms in the order written
}

// ErrSyntax and ErrNotDiatomic are wrapped by Parse errors (besides ErrUnknownElement and
// ErrUnknownIsotope), so callers can test for them with errors.Is.
var (
	ErrSyntax      = errors.New("bad label syntax")
	ErrNotDiatomic = errors.New("not a diatomic")
)

// ParseError is the error Parse returns: the label as given and what is wrong with it.
// Its message reads `species: unknown isotopologue "XYZ": <reason>`.
type ParseError struct {
	Label string // the label as passed to Parse
	Err   error  // the reason; wraps ErrSyntax, ErrNotDiatomic, ErrUnknownElement or ErrUnknownIsotope
}

func (e *ParseError) Error() string {
	return fmt.Sprintf("species: unknown isotopologue %q: %v", e.Label, e.Err)
}

func (e *ParseError) Unwrap() error { return e.Err }

// Parse reads an isotopologue label.
//
// Grammar: one or two atoms, each written as <mass number><Symbol> ("12C", "35Cl"),
// optionally followed, when there is a single atom, by the multiplier 2 ("14N2" means
// "14N14N"). The symbols D and T stand for 2H and 3H and take no mass number ("D35Cl",
// "D2", "DT"); every other symbol requires one. Symbols are case-sensitive ("Cl", not
// "CL"), mass numbers are written without leading zeros. Whitespace around the label is
// trimmed; whitespace inside it is refused. A monatomic or polyatomic label is an error,
// since bandwright handles diatomic molecules only.
//
// The returned Isotopologue keeps the atoms in the order written and carries the
// canonical label (mass numbers explicit, no aliases, no multiplier). Errors are
// *ParseError values naming the label and the reason.
func Parse(label string) (Isotopologue, error) {
	atoms, err := parseAtoms(strings.TrimSpace(label))
	if err != nil {
		return Isotopologue{}, &ParseError{Label: label, Err: err}
	}
	return Isotopologue{Label: atoms[0].Label() + atoms[1].Label(), A: atoms[0], B: atoms[1]}, nil
}

// parseAtoms splits a trimmed label into exactly two isotopes.
func parseAtoms(s string) ([2]Isotope, error) {
	var none [2]Isotope
	if s == "" {
		return none, fmt.Errorf("%w: empty label", ErrSyntax)
	}
	if i := strings.IndexFunc(s, unicode.IsSpace); i >= 0 {
		return none, fmt.Errorf("%w: whitespace inside the label at byte %d", ErrSyntax, i)
	}
	var atoms []Isotope
	prevSym := "" // symbol of the previous atom when it ends right before the next letter
	pos := 0
	for pos < len(s) {
		// Optional mass number.
		digits := leadingDigits(s[pos:])
		pos += len(digits)
		if pos == len(s) {
			// Trailing digits: a multiplier after the previous atom; multiplier
			// accepts only the 2 of "14N2".
			if err := multiplier(digits, len(atoms)); err != nil {
				return none, err
			}
			atoms = append(atoms, atoms[len(atoms)-1])
			break
		}
		// Element symbol: an uppercase letter followed by lowercase letters.
		r, _ := utf8.DecodeRuneInString(s[pos:])
		switch {
		case r >= 'A' && r <= 'Z':
		case r >= 'a' && r <= 'z':
			word := s[pos:]
			if n := strings.IndexFunc(word, func(r rune) bool { return !unicode.IsLetter(r) }); n >= 0 {
				word = word[:n]
			}
			if hint := caseHint(word); hint != "" {
				return none, fmt.Errorf("%w %q%s", ErrUnknownElement, word, hint)
			}
			return none, fmt.Errorf("%w: element symbol %q does not start with an uppercase letter", ErrSyntax, word)
		default:
			return none, fmt.Errorf("%w: unexpected character %q at byte %d", ErrSyntax, r, pos)
		}
		end := pos + 1
		for end < len(s) && s[end] >= 'a' && s[end] <= 'z' {
			end++
		}
		sym := s[pos:end]
		nextSym := "" // an uppercase letter right after the symbol, for the case hint
		if end < len(s) && s[end] >= 'A' && s[end] <= 'Z' {
			nextSym = s[end : end+1]
		}
		iso, err := atom(digits, sym, prevSym, nextSym)
		if err != nil {
			return none, err
		}
		atoms = append(atoms, iso)
		prevSym = sym
		pos = end
		if pos < len(s) && s[pos] >= '0' && s[pos] <= '9' {
			prevSym = "" // a mass number follows: the next symbol is not adjacent
		}
	}
	switch len(atoms) {
	case 2:
		return [2]Isotope{atoms[0], atoms[1]}, nil
	case 1:
		return none, fmt.Errorf("%w: monatomic (one atom, %s; bandwright handles diatomic molecules)", ErrNotDiatomic, atoms[0].Label())
	default:
		return none, fmt.Errorf("%w: %d atoms (bandwright handles diatomic molecules)", ErrNotDiatomic, len(atoms))
	}
}

// multiplier checks the trailing digits of a label, read after nAtoms atoms: only a
// multiplier 2 after a single atom makes a diatomic.
func multiplier(digits string, nAtoms int) error {
	if nAtoms == 0 {
		return fmt.Errorf("%w: no element symbol, only the number %q", ErrSyntax, digits)
	}
	if digits[0] == '0' {
		return fmt.Errorf("%w: multiplier %q after the last atom", ErrSyntax, digits)
	}
	n, err := strconv.Atoi(digits)
	if err != nil || n > 999 {
		return fmt.Errorf("%w: trailing number %s read as a multiplier", ErrNotDiatomic, digits)
	}
	if n == 1 {
		return fmt.Errorf("%w: multiplier 1 after the last atom; write the atom once", ErrSyntax)
	}
	if total := nAtoms - 1 + n; total != 2 {
		return fmt.Errorf("%w: trailing number %d read as a multiplier gives %d atoms (bandwright handles diatomic molecules)", ErrNotDiatomic, n, total)
	}
	return nil
}

// atom resolves one written atom: its mass-number digits (possibly empty) and symbol.
// prevSym is the symbol written right before this one with no digits between, if any,
// and nextSym the uppercase letter right after it, if any: on failure, a pair of them
// that differs from a known symbol only in case ("CL") is reported as that symbol.
func atom(digits, sym, prevSym, nextSym string) (iso Isotope, err error) {
	defer func() {
		if err != nil && nextSym != "" && !errors.Is(err, ErrUnknownElement) {
			if hint := caseHint(sym + nextSym); hint != "" {
				err = fmt.Errorf("%w %q%s", ErrUnknownElement, sym+nextSym, hint)
			}
		}
	}()
	if sym == "D" || sym == "T" {
		if digits != "" {
			return Isotope{}, fmt.Errorf("%w: mass number %s before %s (write %s alone, or %dH)", ErrSyntax, digits, sym, sym, aliasA(sym))
		}
		iso, err := lookupIsotope("H", aliasA(sym))
		if err != nil {
			return Isotope{}, err
		}
		return iso, nil
	}
	if digits == "" {
		if prevSym != "" {
			if hint := caseHint(prevSym + sym); hint != "" {
				return Isotope{}, fmt.Errorf("%w %q%s", ErrUnknownElement, prevSym+sym, hint)
			}
		}
		if _, ok := table.elements[sym]; !ok {
			return Isotope{}, fmt.Errorf("%w %q%s", ErrUnknownElement, sym, caseHint(sym))
		}
		return Isotope{}, fmt.Errorf("%w: missing mass number before %q (write e.g. %q; only D and T need none)", ErrSyntax, sym, table.elements[sym].Isotopes[0].Label())
	}
	if digits[0] == '0' {
		return Isotope{}, fmt.Errorf("%w: mass number %q of %s starts with 0", ErrSyntax, digits, sym)
	}
	a, err := strconv.Atoi(digits)
	if err != nil || a > 999 {
		if _, ok := table.elements[sym]; !ok {
			return Isotope{}, fmt.Errorf("%w %q%s", ErrUnknownElement, sym, caseHint(sym))
		}
		return Isotope{}, fmt.Errorf("%w: no isotope %s of %s (mass number out of range)", ErrUnknownIsotope, digits, sym)
	}
	return lookupIsotope(sym, a)
}

func aliasA(sym string) int {
	if sym == "T" {
		return 3
	}
	return 2
}

// leadingDigits returns the ASCII digits at the start of s.
func leadingDigits(s string) string {
	n := 0
	for n < len(s) && s[n] >= '0' && s[n] <= '9' {
		n++
	}
	return s[:n]
}

// String returns the canonical label.
func (m Isotopologue) String() string { return m.Label }

// Mass returns the molecular mass m_A + m_B in u, from the atomic masses (electrons
// included, binding energy neglected).
func (m Isotopologue) Mass() float64 { return m.A.Mass + m.B.Mass }

// ReducedMass returns μ = m_A·m_B/(m_A + m_B) in u, from the atomic masses (the usual
// convention of spectroscopic constants; μ·constant.AtomicMass gives kg).
func (m Isotopologue) ReducedMass() float64 {
	return m.A.Mass * m.B.Mass / (m.A.Mass + m.B.Mass)
}

// InverseMass returns S_X = Σ 1/M_i in u⁻¹ over the atoms i of element X
// (symbol el) in the molecule: 1/M_A + 1/M_B for a homonuclear molecule of X,
// 1/M of the one atom of X otherwise, and 0 when X is not in the molecule. The
// Born–Oppenheimer-breakdown corrections (m_e/M)·Δ_kl of the Dunham
// coefficients scale with it.
func (m Isotopologue) InverseMass(el string) float64 {
	s := 0.0
	if m.A.Symbol == el {
		s += 1 / m.A.Mass
	}
	if m.B.Symbol == el {
		s += 1 / m.B.Mass
	}
	return s
}

// MolarMass returns the molar mass of this isotopologue in g/mol, numerically equal to
// Mass in u (M = m·N_A·m_u with M_u = 1 g/mol).
func (m Isotopologue) MolarMass() float64 { return m.Mass() }

// NaturalMolarMass returns the molar mass of the molecule of natural isotopic composition
// in g/mol: the sum of the two elements' standard atomic weights (IUPAC 2005 edition, the
// convention of the thermochemical reference tables; see isotopes.csv). It returns NaN
// for an Isotopologue whose elements are not in the table (one not made by Parse).
func (m Isotopologue) NaturalMolarMass() float64 {
	ea, okA := table.elements[m.A.Symbol]
	eb, okB := table.elements[m.B.Symbol]
	if !okA || !okB {
		return math.NaN()
	}
	return ea.AtomicWeight + eb.AtomicWeight
}

// Homonuclear reports whether both atoms are the same isotope (14N14N yes, 14N15N no).
func (m Isotopologue) Homonuclear() bool {
	return m.A.Symbol == m.B.Symbol && m.A.A == m.B.A
}

// SameElement reports whether both atoms are of the same element (14N15N yes).
func (m Isotopologue) SameElement() bool { return m.A.Symbol == m.B.Symbol }

// SymmetryNumber returns the rotational symmetry number σ: 2 if Homonuclear, else 1.
func (m Isotopologue) SymmetryNumber() int {
	if m.Homonuclear() {
		return 2
	}
	return 1
}

// NuclearSpinStates returns the total number of nuclear-spin states of the molecule,
// (2I_A + 1)(2I_B + 1).
func (m Isotopologue) NuclearSpinStates() int {
	return m.A.SpinDegeneracy() * m.B.SpinDegeneracy()
}

// SpinExchangeStates returns, for a homonuclear isotopologue with nuclear spin I, the
// numbers of nuclear-spin functions symmetric and antisymmetric under exchange of the two
// nuclei: (2I+1)(I+1) and (2I+1)I (common practice; they add up to (2I+1)²). Which
// rotational levels (even or odd J) take which set depends on whether the nuclei are
// bosons or fermions and on the electronic state's symmetry, and is left to the caller.
// ok is false for a molecule that is not homonuclear.
func (m Isotopologue) SpinExchangeStates() (symmetric, antisymmetric int, ok bool) {
	if !m.Homonuclear() {
		return 0, 0, false
	}
	t := m.A.TwiceSpin // 2I
	return (t + 1) * (t + 2) / 2, (t + 1) * t / 2, true
}

// rbFactor is h/(8π²c) in kg·m (c in cm/s), so that B[cm-1] = rbFactor/(μ[kg]·r[m]²).
const rbFactor = float64(constant.Planck) / (8 * math.Pi * math.Pi * float64(constant.LightSpeedInVacuum) * 100)

// RFromB returns the bond length r in Å of a rigid rotor with rotational constant B in
// cm-1 and reduced mass mu in u:
//
//	r = sqrt(h / (8π² c μ B)),
//
// with h = constant.Planck (J s), c = constant.LightSpeedInVacuum·100 (cm/s),
// μ = mu·constant.AtomicMass (kg); the result in m is multiplied by 1e10. Applied to the
// equilibrium constant B_e it gives the equilibrium bond length r_e. It returns NaN
// unless B > 0 and mu > 0.
func RFromB(B, mu float64) float64 {
	if !(B > 0 && mu > 0) {
		return math.NaN()
	}
	return math.Sqrt(rbFactor/(mu*float64(constant.AtomicMass)*B)) * 1e10
}

// BFromR is the inverse of RFromB: the rotational constant in cm-1 of a rigid rotor of
// bond length r in Å and reduced mass mu in u,
//
//	B = h / (8π² c μ r²),
//
// with the same constants and units as RFromB (r converted to m by 1e-10). It returns NaN
// unless r > 0 and mu > 0.
func BFromR(r, mu float64) float64 {
	if !(r > 0 && mu > 0) {
		return math.NaN()
	}
	rm := r * 1e-10
	return rbFactor / (mu * float64(constant.AtomicMass) * rm * rm)
}
