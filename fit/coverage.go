package fit

import (
	"sort"

	"bandwright/constants"
	"bandwright/fit/linelist"
)

// coverage lists what the used lines reach: the bands, and per vibrational
// level the highest J (the range outside which a model extrapolates).
func coverage(lines []linelist.Line, used []bool) ([]constants.Band, []constants.LevelRange) {
	type bk struct {
		s      string
		vu, vl int
	}
	type lk struct {
		s string
		v int
	}
	bi := map[bk]int{}
	var bands []constants.Band
	lv := map[lk]int{}
	var levels []constants.LevelRange
	for i, l := range lines {
		if !used[i] {
			continue
		}
		k := bk{l.Species, l.VUp, l.VLo}
		j, ok := bi[k]
		if !ok {
			j = len(bands)
			bi[k] = j
			bands = append(bands, constants.Band{Species: l.Species, VUp: l.VUp, VLo: l.VLo, JMin: l.JLo, JMax: l.JLo})
		}
		b := &bands[j]
		b.Lines++
		b.JMin = min(b.JMin, l.JLo, l.JUp)
		b.JMax = max(b.JMax, l.JLo, l.JUp)
		for _, x := range [][2]int{{l.VUp, l.JUp}, {l.VLo, l.JLo}} {
			k := lk{l.Species, x[0]}
			j, ok := lv[k]
			if !ok {
				j = len(levels)
				lv[k] = j
				levels = append(levels, constants.LevelRange{Species: l.Species, V: x[0], JMax: x[1]})
			}
			levels[j].JMax = max(levels[j].JMax, x[1])
		}
	}
	sort.Slice(bands, func(a, b int) bool {
		if bands[a].Species != bands[b].Species {
			return bands[a].Species < bands[b].Species
		}
		if bands[a].VLo != bands[b].VLo {
			return bands[a].VLo < bands[b].VLo
		}
		return bands[a].VUp < bands[b].VUp
	})
	sort.Slice(levels, func(a, b int) bool {
		if levels[a].Species != levels[b].Species {
			return levels[a].Species < levels[b].Species
		}
		return levels[a].V < levels[b].V
	})
	return bands, levels
}
