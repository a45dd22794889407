package fit

import (
	"sort"

	"bandwright/constants"
	"bandwright/fit/linelist"
)

// coverage lists what the used lines reach: the bands, and per vibrational
// level the highest J (the range outside which a model extrapolates), with
// their electronic states.
func coverage(lines []linelist.Line, used []bool) ([]constants.Band, []constants.LevelRange) {
	type lk struct {
		s, st string
		v     int
	}
	type bk struct {
		s string
		b linelist.Band
	}
	bi := map[bk]int{}
	var bands []constants.Band
	lv := map[lk]int{}
	var levels []constants.LevelRange
	for i := range lines {
		if !used[i] {
			continue
		}
		l := &lines[i]
		lb := linelist.LineBand(l)
		half := l.Open != nil && l.Open.HalfJ
		j, ok := bi[bk{l.Species, lb}]
		if !ok {
			j = len(bands)
			bi[bk{l.Species, lb}] = j
			bands = append(bands, constants.Band{Species: l.Species, VUp: l.VUp, VLo: l.VLo, StateUp: lb.StateUp, StateLo: lb.StateLo, JMin: l.JLo, JMax: l.JLo, HalfJ: half})
		}
		b := &bands[j]
		b.Lines++
		b.JMin = min(b.JMin, l.JLo, l.JUp)
		b.JMax = max(b.JMax, l.JLo, l.JUp)
		for _, x := range []struct {
			st   string
			v, j int
		}{{lb.StateUp, l.VUp, l.JUp}, {lb.StateLo, l.VLo, l.JLo}} {
			k := lk{l.Species, x.st, x.v}
			j, ok := lv[k]
			if !ok {
				j = len(levels)
				lv[k] = j
				levels = append(levels, constants.LevelRange{Species: l.Species, State: x.st, V: x.v, JMax: x.j, HalfJ: half})
			}
			levels[j].JMax = max(levels[j].JMax, x.j)
		}
	}
	sort.Slice(bands, func(a, b int) bool {
		x, y := bands[a], bands[b]
		switch {
		case x.Species != y.Species:
			return x.Species < y.Species
		case x.StateLo != y.StateLo:
			return x.StateLo < y.StateLo
		case x.StateUp != y.StateUp:
			return x.StateUp < y.StateUp
		case x.VLo != y.VLo:
			return x.VLo < y.VLo
		}
		return x.VUp < y.VUp
	})
	sort.Slice(levels, func(a, b int) bool {
		x, y := levels[a], levels[b]
		switch {
		case x.Species != y.Species:
			return x.Species < y.Species
		case x.State != y.State:
			return x.State < y.State
		}
		return x.V < y.V
	})
	return bands, levels
}
