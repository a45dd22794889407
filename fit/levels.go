package fit

import (
	"fmt"

	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// The levels of lines in models with electronic states or fine structure:
// each line's two levels as model.Level, taken from its open-shell labels
// (completed by linelist.CheckStates).

// setLevelModel chooses the level path: a model.LevelModel whose states are
// more than a ¹Σ ground state, or lines with open-shell labels, are
// evaluated level by level (LevelTransition); a closed-shell model of
// closed-shell lines keeps the (v, J) path.
func (w *work) setLevelModel() {
	lm, ok := w.p.Model.(model.LevelModel)
	if !ok {
		return
	}
	sts := lm.States()
	open := len(sts) > 1 || sts[0].Case() != states.Singlet
	for i := range w.p.Lines {
		if w.p.Lines[i].Open != nil {
			open = true
			break
		}
	}
	if !open {
		return
	}
	w.lm = lm
	w.nonlinear = !lm.Linear()
	w.up = make([]model.Level, len(w.p.Lines))
	w.lo = make([]model.Level, len(w.p.Lines))
}

// levelsOf sets the levels of line i of species index si and returns why the
// model cannot evaluate them, "" when it can.
func (w *work) levelsOf(i, si int) string {
	l := &w.p.Lines[i]
	if w.lm == nil {
		if !w.p.Model.HasLevel(si, l.VUp) || !w.p.Model.HasLevel(si, l.VLo) {
			return fmt.Sprintf("v: the model has no parameters for v=%d or v=%d of %s", l.VUp, l.VLo, l.Species)
		}
		return ""
	}
	var why string
	w.up[i], w.lo[i], why = LineLevels(w.lm, si, l, w.values)
	return why
}

// LineLevels returns the two levels of line l of species index si in model
// m (their states from the line's open-shell labels, completed by
// linelist.CheckStates), and why m cannot evaluate them at parameters p, ""
// when it can.
func LineLevels(m model.LevelModel, si int, l *linelist.Line, p []float64) (up, lo model.Level, why string) {
	sts := m.States()
	for _, side := range []struct {
		dst   *model.Level
		v, j2 int
		lab   *linelist.LevelLabel
		field string
	}{{&up, l.VUp, l.J2Up(), upLabel(l), "up"}, {&lo, l.VLo, l.J2Lo(), loLabel(l), "lo"}} {
		st := 0
		lv := model.Level{V: side.v, J2: side.j2}
		if lab := side.lab; lab != nil {
			if lab.State != "" {
				st = states.Index(sts, lab.State)
				if st < 0 {
					return up, lo, fmt.Sprintf("state_%s: the model has no electronic state %q", side.field, lab.State)
				}
			}
			lv.F, lv.Parity = lab.F, lab.Parity
		}
		lv.State = st
		if !m.HasVibronic(si, st, side.v) {
			return up, lo, fmt.Sprintf("v_%s: the model has no parameters for v=%d of state %s of %s", side.field, side.v, sts[st].Label, l.Species)
		}
		if e := m.LevelEnergy(si, lv, p, nil); e != e {
			return up, lo, fmt.Sprintf("J_%s: state %s has no level J = %s, F%d %s (check the labels against the states file)", side.field, sts[st].Term(), states.FormatJ(side.j2), lv.F, lv.Parity)
		}
		*side.dst = lv
	}
	return up, lo, ""
}

func upLabel(l *linelist.Line) *linelist.LevelLabel {
	if l.Open == nil {
		return nil
	}
	return &l.Open.Up
}

func loLabel(l *linelist.Line) *linelist.LevelLabel {
	if l.Open == nil {
		return nil
	}
	return &l.Open.Lo
}
