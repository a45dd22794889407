package fit

import (
	"fmt"
	"sort"

	"bandwright/fit/model"
)

// holdUnconnected holds at zero the term value of every vibrational level
// that no line connects to the lowest level of its isotopologue (term-values
// model only): with pure-rotation lines in v = 0 and in v = 1 and no band
// between them, T_v1 is undetermined by the data and irrelevant to the
// rotational constants. For each group of levels the lines connect among
// themselves (but not to the lowest level), T of the group's lowest level is
// held at 0 — its energies are counted from that level's J = 0 — unless the
// user fixed it; the parameter leaves the covariance (it is fixed), a warning
// says so, and Result.Unconnected lists it, so that the record marks it and
// no later stage takes it for an energy above the ground level.
func (w *work) holdUnconnected() {
	tv, ok := w.p.Model.(*model.TermValues)
	if !ok {
		return
	}
	for s, label := range tv.Species() {
		vs := tv.LevelsOf(s)
		groups := levelGroups(w, s, vs)
		for _, g := range groups {
			if g[0] == vs[0] {
				continue // the energy zero's own group
			}
			j := tv.Index(s, g[0], "T")
			if j < 0 || w.params[j].Fixed {
				continue
			}
			w.params[j].Fixed = true
			w.params[j].Value, w.values[j] = 0, 0
			w.free = removeInt(w.free, j)
			w.unconnected = append(w.unconnected, j)
			w.warn = append(w.warn, fmt.Sprintf("%s held at 0: no line connects v=%s to v=%d of %s, so its term energy is undetermined (it does not affect the rotational constants); energies of v=%s are counted from v=%d, J=0 and left out of thermodynamic sums; fix it (--fix %s=VALUE) or add a band that connects the levels to place them",
				w.params[j].ID(), joinInts(g), vs[0], label, joinInts(g), g[0], w.params[j].ID()))
		}
	}
}

// levelGroups splits the vibrational levels vs of the ground state of
// species s into the groups the lines connect (union of the two vibronic
// levels of every line, through any electronic state: two ground levels
// that lines to the same level of an excited state join are connected),
// each sorted, in order of their lowest level.
func levelGroups(w *work, s int, vs []int) [][]int {
	type key struct{ st, v int }
	parent := map[key]key{}
	var find func(key) key
	find = func(k key) key {
		p, ok := parent[k]
		if !ok || p == k {
			parent[k] = k
			return k
		}
		r := find(p)
		parent[k] = r
		return r
	}
	less := func(a, b key) bool { return a.st < b.st || (a.st == b.st && a.v < b.v) }
	for i, l := range w.p.Lines {
		if w.sp[i] != s {
			continue
		}
		up, lo := key{0, l.VUp}, key{0, l.VLo}
		if w.lm != nil {
			up.st, lo.st = w.up[i].State, w.lo[i].State
		}
		if up == lo {
			continue
		}
		a, b := find(up), find(lo)
		if a != b {
			if less(b, a) {
				a, b = b, a
			}
			parent[b] = a
		}
	}
	byRoot := map[key][]int{}
	for _, v := range vs {
		r := find(key{0, v})
		byRoot[r] = append(byRoot[r], v)
	}
	var out [][]int
	for _, g := range byRoot {
		sort.Ints(g)
		out = append(out, g)
	}
	sort.Slice(out, func(a, b int) bool { return out[a][0] < out[b][0] })
	return out
}

func joinInts(xs []int) string {
	s := ""
	for i, x := range xs {
		if i > 0 {
			s += ","
		}
		s += fmt.Sprint(x)
	}
	return s
}
