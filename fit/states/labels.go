package states

import (
	"fmt"
	"strconv"
)

// Parity is the rotationless parity label of a level, e or f (see the package
// doc).
type Parity int8

// The parity labels; NoParity where none is given.
const (
	NoParity Parity = 0
	ParityE  Parity = 1
	ParityF  Parity = -1
)

// String returns "e", "f" or "".
func (p Parity) String() string {
	switch p {
	case ParityE:
		return "e"
	case ParityF:
		return "f"
	}
	return ""
}

// ParseParity reads "e" or "f" (any letter case); "" is NoParity.
func ParseParity(s string) (Parity, error) {
	switch s {
	case "":
		return NoParity, nil
	case "e", "E":
		return ParityE, nil
	case "f", "F":
		return ParityF, nil
	}
	return NoParity, fmt.Errorf("%q is not a parity label: write e or f", s)
}

// Label is what identifies a level within one vibrational level of a state:
// 2J, N, the spin component F and the parity. In a Label read from a file, N
// is -1, F 0 and Parity NoParity when not given.
type Label struct {
	J2     int // 2J
	N      int
	F      int
	Parity Parity
}

// J returns J (J2/2).
func (l Label) J() float64 { return float64(l.J2) / 2 }

// NOf returns N of spin component f at J = J2/2 in the case-(b) labelling,
// J = N + S − (f − 1) (package doc).
func (s State) NOf(J2, f int) int {
	return (J2-s.TwiceS())/2 + f - 1
}

// FOf returns the spin component of the level with N at J = J2/2, the inverse
// of NOf.
func (s State) FOf(J2, N int) int {
	return N - (J2-s.TwiceS())/2 + 1
}

// SigmaParity returns the parity label of the level of a Σ state with N at
// J = J2/2: its parity is (−1)^N in a Σ⁺ state and −(−1)^N in a Σ⁻ state, and
// it is e when that equals (−1)^(J−½) (half-integer J) or (−1)^J.
func (s State) SigmaParity(J2, N int) Parity {
	even := (N-J2/2)%2 == 0 // (−1)^N = (−1)^⌊J⌋
	if s.Symmetry.Reflection == '-' {
		even = !even
	}
	if even {
		return ParityE
	}
	return ParityF
}

// Components returns the levels of the state at J = J2/2, each with N, F and
// parity: F is 0 for singlet states; N of a ²Π level is the case-(b) N of its
// F; the single J = ½ level of a ²Π state is returned once, as F1 when
// aPositive (the spin–orbit constant A ≥ 0) and as F2 otherwise. It returns
// nil for a J the state does not have (half-integer J in a state of odd
// multiplicity, or the reverse).
func (s State) Components(J2 int, aPositive bool) []Label {
	return s.AppendComponents(nil, J2, aPositive)
}

// AppendComponents appends the levels of Components to dst (no allocation
// when dst has room for 2S+1 levels, 4 for ²Π).
func (s State) AppendComponents(dst []Label, J2 int, aPositive bool) []Label {
	out := dst
	if J2 < 0 || (J2%2 == 1) != s.HalfIntegerJ() {
		return out
	}
	switch s.Case() {
	case Singlet:
		out = append(out, Label{J2: J2, N: J2 / 2, Parity: s.SigmaParity(J2, J2/2)})
	case DoubletSigma, TripletSigma:
		for f := 1; f <= s.Multiplicity; f++ {
			n := s.NOf(J2, f)
			if n >= 0 && s.validNJ(J2, n) {
				out = append(out, Label{J2: J2, N: n, F: f, Parity: s.SigmaParity(J2, n)})
			}
		}
	case SingletPi:
		if J2 >= 2 {
			for _, p := range []Parity{ParityE, ParityF} {
				out = append(out, Label{J2: J2, N: J2 / 2, Parity: p})
			}
		}
	case DoubletPi:
		fs := []int{1, 2}
		if J2 == 1 {
			fs = []int{2}
			if aPositive {
				fs = []int{1}
			}
		}
		for _, f := range fs {
			for _, p := range []Parity{ParityE, ParityF} {
				out = append(out, Label{J2: J2, N: max(s.NOf(J2, f), s.Lambda), F: f, Parity: p})
			}
		}
	}
	return out
}

// validNJ reports whether N and J couple with S: |N − S| ≤ J ≤ N + S, and
// N ≥ Λ.
func (s State) validNJ(J2, N int) bool {
	n2 := 2 * N
	return N >= s.Lambda && J2 <= n2+s.TwiceS() && J2 >= n2-s.TwiceS() && J2 >= 0
}

// LabelError is a level label that does not fit its state; Field names the
// column concerned ("J", "N", "F" or "parity").
type LabelError struct {
	Field  string
	Reason string
}

func (e *LabelError) Error() string { return e.Field + ": " + e.Reason }

func labelErr(field, format string, a ...any) *LabelError {
	return &LabelError{Field: field, Reason: fmt.Sprintf(format, a...)}
}

// Check checks that l identifies exactly one level of the state (package
// doc) and returns it completed: F of a Σ level given by N, N of a level
// given by F, the parity of a Σ level. The rules: J is a half-integer in
// states of even multiplicity and an integer otherwise; singlet states take
// no F, and ¹Σ levels no parity label (it is implied); Σ states need N or F
// (both must agree, with |N − S| ≤ J ≤ N + S), and a parity label given must
// be the one N implies; Π states need the parity, ²Π states F as well (N,
// when given, must be the case-(b) N of that F, and N ≥ 1).
func (s State) Check(l Label) (Label, error) {
	if err := s.Supported(); err != nil {
		return l, labelErr("state", "%v", err)
	}
	if (l.J2%2 == 1) != s.HalfIntegerJ() {
		if s.HalfIntegerJ() {
			return l, labelErr("J", "J = %s is an integer, but state %s has half-integer J (write e.g. %s)", fmtJ(l.J2), s.Term(), fmtJ(l.J2+1))
		}
		return l, labelErr("J", "J = %s is a half-integer, but state %s has integer J", fmtJ(l.J2), s.Term())
	}
	switch s.Case() {
	case Singlet, SingletPi:
		return s.checkSinglet(l)
	case DoubletSigma, TripletSigma:
		return s.checkSigma(l)
	}
	return s.checkDoubletPi(l)
}

func (s State) checkSinglet(l Label) (Label, error) {
	if l.F != 0 && l.F != 1 {
		return l, labelErr("F", "F%d: a singlet state (%s) has no spin components; leave F empty", l.F, s.Term())
	}
	l.F = 0
	if l.N >= 0 && l.N != l.J2/2 {
		return l, labelErr("N", "N = %d differs from J = %s, but N = J in a singlet state (%s)", l.N, fmtJ(l.J2), s.Term())
	}
	l.N = l.J2 / 2
	if s.Case() == Singlet {
		if l.Parity != NoParity {
			return l, labelErr("parity", "a level of %s takes no parity label (its parity follows from J); leave it empty", s.Term())
		}
		l.Parity = s.SigmaParity(l.J2, l.N)
		return l, nil
	}
	if l.J2 < 2 {
		return l, labelErr("J", "J = 0 does not exist in %s (J ≥ 1)", s.Term())
	}
	if l.Parity == NoParity {
		return l, labelErr("parity", "a level of %s needs its parity label e or f", s.Term())
	}
	return l, nil
}

func (s State) checkSigma(l Label) (Label, error) {
	if l.N < 0 && l.F == 0 && l.Parity != NoParity {
		l.F = s.onlyF(l.J2, l.Parity)
	}
	switch {
	case l.N < 0 && l.F == 0:
		return l, labelErr("F", "a level of %s needs F (1…%d) or N (or a parity label that only one spin component of J = %s has)", s.Term(), s.Multiplicity, fmtJ(l.J2))
	case l.F != 0 && (l.F < 1 || l.F > s.Multiplicity):
		return l, labelErr("F", "F%d does not exist in %s (F1…F%d)", l.F, s.Term(), s.Multiplicity)
	case l.F == 0:
		l.F = s.FOf(l.J2, l.N)
		if l.F < 1 || l.F > s.Multiplicity || !s.validNJ(l.J2, l.N) {
			return l, labelErr("N", "N = %d and J = %s do not couple with S = %s (|N − S| ≤ J ≤ N + S)", l.N, fmtJ(l.J2), fmtJ(s.TwiceS()))
		}
	case l.N >= 0 && l.N != s.NOf(l.J2, l.F):
		return l, labelErr("N", "N = %d, J = %s and F%d disagree: F%d has N = %d in %s (F1 is J = N + S)", l.N, fmtJ(l.J2), l.F, l.F, s.NOf(l.J2, l.F), s.Term())
	}
	l.N = s.NOf(l.J2, l.F)
	if !s.validNJ(l.J2, l.N) {
		return l, labelErr("F", "F%d does not exist at J = %s in %s (it would need N = %d)", l.F, fmtJ(l.J2), s.Term(), l.N)
	}
	want := s.SigmaParity(l.J2, l.N)
	if l.Parity != NoParity && l.Parity != want {
		return l, labelErr("parity", "the F%d level with J = %s has parity %s in %s, not %s", l.F, fmtJ(l.J2), want, s.Term(), l.Parity)
	}
	l.Parity = want
	return l, nil
}

// onlyF returns the spin component of the only level of a Σ state with
// J = J2/2 and parity p, or 0 when there is none or more than one.
func (s State) onlyF(J2 int, p Parity) int {
	f := 0
	for _, c := range s.Components(J2, true) {
		if c.Parity == p {
			if f != 0 {
				return 0
			}
			f = c.F
		}
	}
	return f
}

func (s State) checkDoubletPi(l Label) (Label, error) {
	switch {
	case l.F == 0:
		return l, labelErr("F", "a level of %s needs F (1 or 2)", s.Term())
	case l.F != 1 && l.F != 2:
		return l, labelErr("F", "F%d does not exist in %s (F1, F2)", l.F, s.Term())
	case l.Parity == NoParity:
		return l, labelErr("parity", "a level of %s needs its parity label e or f", s.Term())
	}
	n := max(s.NOf(l.J2, l.F), s.Lambda) // J = ½: N = 1 for either label
	if l.N >= 0 {
		if l.N != n {
			return l, labelErr("N", "N = %d, J = %s and F%d disagree: in the case-(b) labelling N = J − ½ for F1 and N = J + ½ for F2, with N ≥ 1 (the J = ½ level is F2, N = 1)", l.N, fmtJ(l.J2), l.F)
		}
	}
	l.N = n
	return l, nil
}

// fmtJ writes J = J2/2 as a decimal: "3", "3.5".
func fmtJ(J2 int) string {
	if J2%2 == 0 {
		return strconv.Itoa(J2 / 2)
	}
	return strconv.Itoa(J2/2) + ".5"
}

// FormatJ writes J = J2/2 as files write it: "3", "3.5".
func FormatJ(J2 int) string { return fmtJ(J2) }
