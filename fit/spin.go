package fit

import (
	"fmt"
	"sort"

	"bandwright/fit/linelist"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// CheckSpinStatistics checks the levels the lines of every homonuclear
// isotopologue reach against the nuclear-spin statistics of their electronic
// states: a Σ level whose nuclear-spin weight is zero does not exist (odd N of
// a ¹Σg⁺ state of 16O2, even N of its X ³Σg⁻ ground state: the nuclei have
// spin 0). sts are the states of the fit (the ground state first, the labels
// of the lines completed by linelist.CheckStates); nil means a ¹Σg⁺ ground
// state, the state a fit without an electronic-states file assumes — lines
// of 16O2 that reach odd N then belong to another state, and fitting them as
// ¹Σg⁺ levels would make every later stage treat the molecule as
// closed-shell. Π levels (both parities at each J) are not checked. The
// error names the isotopologue, the state, the N pattern, the weights and the
// first line that reaches such a level.
func CheckSpinStatistics(lines []linelist.Line, sts []states.State) error {
	given := sts != nil
	if !given {
		g := states.Ground()
		g.Symmetry.Parity = 'g'
		sts = []states.State{g}
	}
	type key struct{ species, state string }
	type parity struct{ even, odd int }
	seen := map[key]*parity{}
	first := map[key]linelist.Line{}
	var order []key
	type parsed struct {
		iso species.Isotopologue
		ok  bool
	}
	isos := map[string]parsed{} // species.Parse once per label, not per line
	for _, l := range lines {
		ps, done := isos[l.Species]
		if !done {
			iso, err := species.Parse(l.Species)
			ps = parsed{iso, err == nil && iso.Homonuclear()}
			isos[l.Species] = ps
		}
		if !ps.ok {
			continue
		}
		iso := ps.iso
		for _, lv := range spinLevels(&l) {
			st := states.Index(sts, lv.state)
			if lv.state == "" {
				st = 0
			}
			if st < 0 || sts[st].Lambda != 0 {
				continue
			}
			even, odd, err := iso.NuclearSpinWeights(0, sts[st].Symmetry)
			if err != nil || (even > 0 && odd > 0) {
				continue
			}
			k := key{iso.Label, sts[st].Label}
			p := seen[k]
			if p == nil {
				p = &parity{}
				seen[k] = p
				order = append(order, k)
			}
			if lv.n%2 == 0 {
				p.even++
			} else {
				p.odd++
			}
			if _, ok := first[k]; ((lv.n%2 == 0 && even == 0) || (lv.n%2 == 1 && odd == 0)) && !ok {
				first[k] = l
			}
		}
	}
	sort.Slice(order, func(a, b int) bool {
		if order[a].species != order[b].species {
			return order[a].species < order[b].species
		}
		return order[a].state < order[b].state
	})
	for _, k := range order {
		if l, bad := first[k]; bad {
			return spinError(l, k.species, sts[max(states.Index(sts, k.state), 0)], seen[k].even, seen[k].odd, given)
		}
	}
	return nil
}

// spinLevel is the state label and N of one level of a line.
type spinLevel struct {
	state string
	n     int
}

// spinLevels returns the two levels of a line: N of open-shell levels
// (completed labels), J of ¹Σ ones.
func spinLevels(l *linelist.Line) [2]spinLevel {
	if o := l.Open; o != nil && o.Up.N >= 0 && o.Lo.N >= 0 {
		return [2]spinLevel{{o.Up.State, o.Up.N}, {o.Lo.State, o.Lo.N}}
	}
	return [2]spinLevel{{"", l.JUp}, {"", l.JLo}}
}

// spinError describes the levels of state st of isotopologue label that the
// line l reaches but the spin statistics leave out.
func spinError(l linelist.Line, label string, st states.State, even, odd int, given bool) error {
	iso, _ := species.Parse(label)
	w, _, _ := iso.NuclearSpinWeights(0, st.Symmetry)
	missing, other := "odd", "even"
	if w == 0 {
		missing, other = "even", "odd"
	}
	pattern := fmt.Sprintf("only %s N", missing)
	if (missing == "odd" && even > 0) || (missing == "even" && odd > 0) {
		pattern = fmt.Sprintf("%s N among others", missing)
	}
	if !given {
		return fmt.Errorf("fit: %s:%d: %s: the lines reach odd-J levels (%s), which a ¹Σg⁺ state of %s does not have: with the nuclear-spin statistics of its nuclei only %s-J levels carry weight. The levels belong to another electronic state (O2's ground state is X ³Σg⁻, whose odd N are the allowed ones): give its electronic-states file (--states) and the lines' N or F",
			l.File, l.Row, label, pattern, label, other)
	}
	return fmt.Errorf("fit: %s:%d: %s: the lines reach %s-N levels (%s) of %s, which has none: with the nuclear-spin statistics of its nuclei only %s-N levels carry weight (check N and the state's symmetry)",
		l.File, l.Row, label, missing, pattern, st.Term(), other)
}
