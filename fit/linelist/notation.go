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
// the pure-rotation lines within level v.
type Band struct{ VUp, VLo int }

// String returns the band's label, BandLabel(b.VUp, b.VLo).
func (b Band) String() string { return BandLabel(b.VUp, b.VLo) }

// BandLabel writes a band as "1-0": upper level, hyphen, lower level — the
// spelling a user types after --bands, used unchanged in every output.
func BandLabel(vUp, vLo int) string { return strconv.Itoa(vUp) + "-" + strconv.Itoa(vLo) }

// ParseBands parses a comma-separated list of bands such as "1-0,2-1,0-0"
// (levels 0…100; white space around each band and its numbers is ignored).
func ParseBands(s string) ([]Band, error) {
	var out []Band
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		if f == "" {
			continue
		}
		a, b, ok := strings.Cut(f, "-")
		vu, e1 := strconv.Atoi(strings.TrimSpace(a))
		vl, e2 := strconv.Atoi(strings.TrimSpace(b))
		if !ok || e1 != nil || e2 != nil || vu < 0 || vl < 0 || vu > MaxV || vl > MaxV {
			return nil, fmt.Errorf("linelist: band %q: write v′-v″ with levels 0…%d, e.g. 1-0 or 2-1 (0-0 for pure rotation)", f, MaxV)
		}
		out = append(out, Band{vu, vl})
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
