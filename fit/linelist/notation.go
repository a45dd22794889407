package linelist

import (
	"fmt"
	"strconv"
	"strings"
)

// This file is the one home of the notation of bands and branches: how a band
// is written, which branch letter names which ΔJ, and how a transition is
// labelled. Every output and every message of bandwright uses it.

// Band is a vibrational band v′-v″ of a diatomic molecule; v′ = v″ stands for
// the pure-rotation lines within level v. StateUp and StateLo name the
// electronic states of a band of an electronic band system (empty: the
// ground state).
type Band struct {
	VUp, VLo         int
	StateUp, StateLo string
}

// String returns the band's label: BandLabel(b.VUp, b.VLo) within the
// ground state, each level with its state in front otherwise ("A:0-0" for
// v′ = 0 of state A and v″ = 0 of the ground state).
func (b Band) String() string {
	if b.StateUp == "" && b.StateLo == "" {
		return BandLabel(b.VUp, b.VLo)
	}
	side := func(st string, v int) string {
		if st == "" {
			return strconv.Itoa(v)
		}
		return st + ":" + strconv.Itoa(v)
	}
	return side(b.StateUp, b.VUp) + "-" + side(b.StateLo, b.VLo)
}

// LineBand returns the band of a line, with its states.
func LineBand(l *Line) Band {
	b := Band{VUp: l.VUp, VLo: l.VLo}
	if l.Open != nil {
		b.StateUp, b.StateLo = l.Open.Up.State, l.Open.Lo.State
	}
	return b
}

// LineBranch returns the branch of an open-shell line in the notation of
// Branch (ΔN known when both N are), the plain branch letter of ΔJ otherwise.
func LineBranch(l *Line) Branch {
	b := Branch{DeltaJ: l.JUp - l.JLo}
	if o := l.Open; o != nil {
		if o.Up.N >= 0 && o.Lo.N >= 0 {
			b.DeltaN, b.HasN = o.Up.N-o.Lo.N, true
		}
		b.FUp, b.FLo = o.Up.F, o.Lo.F
	}
	return b
}

// LineLabel writes a line in the notation of the trade: band, branch and
// lower-state J, "1-0 P(12)" for a ¹Σ line (TransitionLabel), "A:0-0
// pQ12(3.5)" for an open-shell one, with the parity of the levels where a
// branch has both ("R1ee(2.5)" is not written: e/f follow as "R1(2.5) e-e").
func LineLabel(l *Line) string {
	if l.Open == nil {
		return TransitionLabel(l.VUp, l.JUp, l.VLo, l.JLo)
	}
	s := LineBand(l).String() + " " + LineBranch(l).String() + "(" + FormatJ(l.J2Lo()) + ")"
	if p, q := l.Open.Up.Parity, l.Open.Lo.Parity; p != 0 && q != 0 {
		s += " " + p.String() + "-" + q.String()
	}
	return s
}

// BandLabel writes a band as "1-0": upper level, hyphen, lower level — the
// spelling a user types after --bands, used unchanged in every output.
func BandLabel(vUp, vLo int) string { return strconv.Itoa(vUp) + "-" + strconv.Itoa(vLo) }

// ParseBands parses a comma-separated list of bands such as "1-0,2-1,0-0"
// (levels 0…100; white space around each band and its numbers is ignored); a
// level of an electronic state other than the ground state carries the
// state's label and a colon, "A:0-0" (as Band.String writes it).
func ParseBands(s string) ([]Band, error) {
	var out []Band
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		if f == "" {
			continue
		}
		a, b, ok := strings.Cut(f, "-")
		su, vu, e1 := parseBandLevel(a)
		sl, vl, e2 := parseBandLevel(b)
		if !ok || e1 != nil || e2 != nil || vu < 0 || vl < 0 || vu > MaxV || vl > MaxV {
			return nil, fmt.Errorf("linelist: band %q: write v′-v″ with levels 0…%d, e.g. 1-0 or 2-1 (0-0 for pure rotation; A:0-0 for v′ = 0 of electronic state A)", f, MaxV)
		}
		out = append(out, Band{VUp: vu, VLo: vl, StateUp: su, StateLo: sl})
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("linelist: no bands given (e.g. 1-0,2-1)")
	}
	return out, nil
}

// branchLetters names the branches by ΔJ = J′ − J″ + 2: O (−2), P (−1),
// Q (0), R (+1), S (+2).
var branchLetters = [...]string{"O", "P", "Q", "R", "S"}

// BranchLetter returns the letter of the branch with ΔJ = J_up − J_lo = dJ:
// −2 "O", −1 "P", 0 "Q", +1 "R", +2 "S"; "" for any other dJ.
func BranchLetter(dJ int) string {
	if dJ < -2 || dJ > 2 {
		return ""
	}
	return branchLetters[dJ+2]
}

// BranchDeltaJ returns ΔJ = J_up − J_lo of a branch letter (any case) and
// whether the letter names a branch.
func BranchDeltaJ(letter string) (int, bool) {
	for i, b := range branchLetters {
		if strings.EqualFold(letter, b) {
			return i - 2, true
		}
	}
	return 0, false
}

// TransitionLabel writes a transition in the notation of the trade: band,
// branch letter and lower-state J, "1-0 P(12)".
func TransitionLabel(vUp, jUp, vLo, jLo int) string {
	return BandLabel(vUp, vLo) + " " + BranchLetter(jUp-jLo) + "(" + strconv.Itoa(jLo) + ")"
}

// Branch is the branch of a line between open-shell levels in the notation
// of the trade, ^ΔN ΔJ _F′F″ (for example ᴾQ₁₂: ΔN = −1, ΔJ = 0, F′ = 1,
// F″ = 2), written in files as "pQ12": the ΔN letter in lower case, left out
// where ΔN = ΔJ; the ΔJ letter; the F′ and F″ indices, one digit when F′ = F″
// ("R1"), none for singlet states.
type Branch struct {
	DeltaJ, DeltaN int
	HasN           bool // ΔN is known (ParseBranch: its letter is written)
	FUp, FLo       int  // 0: not written
}

// String writes the branch as files write it; ΔN is written when HasN and
// ΔN ≠ ΔJ.
func (b Branch) String() string {
	var s strings.Builder
	if b.HasN && b.DeltaN != b.DeltaJ {
		s.WriteString(strings.ToLower(BranchLetter(b.DeltaN)))
	}
	s.WriteString(BranchLetter(b.DeltaJ))
	switch {
	case b.FUp == 0 && b.FLo == 0:
	case b.FUp == b.FLo:
		s.WriteString(strconv.Itoa(b.FUp))
	default:
		s.WriteString(strconv.Itoa(b.FUp) + strconv.Itoa(b.FLo))
	}
	return s.String()
}

// ParseBranch reads a branch written as Branch.String writes it ("pQ12",
// "R1", "Q", "sR31"); the ΔJ letter may be in any case, the ΔN letter must be
// lower case, indices are single digits 1…9. Without a ΔN letter, ΔN is not
// known (HasN false): "Q12" does not say that ΔN = 0.
func ParseBranch(s string) (Branch, error) {
	var b Branch
	rest := strings.TrimSpace(s)
	bad := func() (Branch, error) {
		return Branch{}, fmt.Errorf("linelist: branch %q: write the ΔJ letter (O, P, Q, R, S) with the ΔN letter in lower case in front where ΔN differs and the F′F″ indices behind (pQ12, R1)", s)
	}
	if len(rest) >= 2 && rest[0] >= 'a' && rest[0] <= 'z' && rest[1] >= 'A' && rest[1] <= 'Z' {
		dn, ok := BranchDeltaJ(rest[:1])
		if !ok {
			return bad()
		}
		b.DeltaN, b.HasN = dn, true
		rest = rest[1:]
	}
	if rest == "" {
		return bad()
	}
	dj, ok := BranchDeltaJ(rest[:1])
	if !ok {
		return bad()
	}
	b.DeltaJ = dj
	digits := rest[1:]
	for _, r := range digits {
		if r < '1' || r > '9' {
			return bad()
		}
	}
	switch len(digits) {
	case 0:
	case 1:
		b.FUp = int(digits[0] - '0')
		b.FLo = b.FUp
	case 2:
		b.FUp, b.FLo = int(digits[0]-'0'), int(digits[1]-'0')
	default:
		return bad()
	}
	return b, nil
}

// parseBandLevel reads "v" or "STATE:v".
func parseBandLevel(s string) (string, int, error) {
	st, v, ok := strings.Cut(strings.TrimSpace(s), ":")
	if !ok {
		st, v = "", st
	}
	n, err := strconv.Atoi(strings.TrimSpace(v))
	return strings.TrimSpace(st), n, err
}
