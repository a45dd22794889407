package fit

import (
	"fmt"
	"sort"

	"bandwright/fit/linelist"
	"bandwright/fit/species"
)

// CheckSpinStatistics checks the levels the lines of every homonuclear
// isotopologue reach against the nuclear-spin statistics of a ¹Σg⁺ state, the
// state the models of fit/model describe: a level J whose nuclear-spin weight
// is zero there does not exist in such a state (odd J of 16O2, whose nuclei
// have spin 0). Lines that reach such levels belong to another electronic
// state (the ground state of 16O2 is X ³Σg⁻, whose odd N carry the weight), and
// fitting them as ¹Σg⁺ levels would make every later stage treat the molecule
// as closed-shell. The error names the isotopologue, the J pattern, the
// weights and the first line that reaches such a level.
func CheckSpinStatistics(lines []linelist.Line) error {
	type parity struct{ even, odd int }
	seen := map[string]*parity{}
	first := map[string]linelist.Line{}
	var order []string
	for _, l := range lines {
		iso, err := species.Parse(l.Species)
		if err != nil || !iso.Homonuclear() {
			continue
		}
		even, odd, err := iso.NuclearSpinWeights(0, species.StateSymmetry{Parity: 'g', Reflection: '+'})
		if err != nil || (even > 0 && odd > 0) {
			continue
		}
		p := seen[iso.Label]
		if p == nil {
			p = &parity{}
			seen[iso.Label] = p
			order = append(order, iso.Label)
		}
		for _, j := range []int{l.JUp, l.JLo} {
			bad := (j%2 == 0 && even == 0) || (j%2 == 1 && odd == 0)
			if j%2 == 0 {
				p.even++
			} else {
				p.odd++
			}
			if _, ok := first[iso.Label]; bad && !ok {
				first[iso.Label] = l
			}
		}
	}
	sort.Strings(order)
	for _, label := range order {
		l, bad := first[label]
		if !bad {
			continue
		}
		iso, _ := species.Parse(label)
		even, _, _ := iso.NuclearSpinWeights(0, species.StateSymmetry{Parity: 'g', Reflection: '+'})
		missing, other := "odd", "even"
		if even == 0 {
			missing, other = "even", "odd"
		}
		p := seen[label]
		pattern := fmt.Sprintf("only %s J", missing)
		if (missing == "odd" && p.even > 0) || (missing == "even" && p.odd > 0) {
			pattern = fmt.Sprintf("%s J among others", missing)
		}
		return fmt.Errorf("fit: %s:%d: %s: the lines reach %s levels (%s), which a ¹Σg⁺ state of %s does not have: with the nuclear-spin statistics of its nuclei only %s-J levels carry weight. The levels belong to another electronic state (O2's ground state is X ³Σg⁻, whose odd N are the allowed ones); the models here describe ¹Σ states and cannot fit them as such",
			l.File, l.Row, label, missing+"-J", pattern, label, other)
	}
	return nil
}
