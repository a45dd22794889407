package assign

import (
	"maps"

	"bandwright/fit"
)

// A lock onto the wrong peaks can lead to an assignment the internal fit
// cannot solve (undetermined term values of lines that do not belong
// together). That is the band's failure, not the problem's: lockAll keeps the
// state of the run before it takes a band's lock lines, and when the
// predict–match–fit loop that follows fails, it puts the state back and
// leaves the band unlocked with the reason.

// runState is what taking one band's lock lines and running the loop change.
type runState struct {
	assigned     map[Transition]int
	bans         map[banKey]string
	dropped      map[int]droppedInfo
	fit          *fit.Result
	fitProb      fit.Problem
	fp           *fitPredictor
	sFit, sigI   float64
	last         *matching
	speciesScale map[string]float64
	cdBand       map[*band]*CDStats
	cdLine       map[Transition][2]int
	warnings     int
	bands        []bandState
}

// bandState is what the loop changes in a band.
type bandState struct {
	jcore int
	g, h  [2]float64
	hasG  [2]bool
	jhi   []int
}

func (r *run) save() runState {
	st := runState{assigned: maps.Clone(r.assigned), bans: maps.Clone(r.bans), dropped: maps.Clone(r.dropped),
		fit: r.fit, fitProb: r.fitProb, fp: r.fp, sFit: r.sFit, sigI: r.sigI, last: r.last,
		speciesScale: maps.Clone(r.speciesScale), cdBand: maps.Clone(r.cdBand), cdLine: maps.Clone(r.cdLine), warnings: len(r.warnings)}
	for _, b := range r.bands {
		bs := bandState{jcore: b.jcore, g: b.g, h: b.h, hasG: b.hasG}
		for _, br := range b.branches {
			bs.jhi = append(bs.jhi, br.jhi)
		}
		st.bands = append(st.bands, bs)
	}
	return st
}

func (r *run) restore(st runState) {
	r.assigned, r.bans, r.dropped = st.assigned, st.bans, st.dropped
	r.fit, r.fitProb, r.fp, r.sFit, r.sigI, r.last = st.fit, st.fitProb, st.fp, st.sFit, st.sigI, st.last
	r.speciesScale, r.cdBand, r.cdLine = st.speciesScale, st.cdBand, st.cdLine
	r.warnings = r.warnings[:st.warnings]
	for i, b := range r.bands {
		bs := st.bands[i]
		b.jcore, b.g, b.h, b.hasG = bs.jcore, bs.g, bs.h, bs.hasG
		for k, br := range b.branches {
			br.jhi = bs.jhi[k]
		}
	}
}
