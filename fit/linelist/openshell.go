package linelist

import (
	"errors"
	"math"
	"strconv"
	"strings"

	"bandwright/fit/states"
	"bandwright/internal/csvcell"
)

// Open-shell and electronic lines: the columns N_up, N_lo, F_up, F_lo,
// parity_up, parity_lo, state_up and state_lo, half-integer J, and the checks
// of the levels against the electronic states (CheckStates).

// LevelLabel is what identifies one level of a line beyond v and J.
type LevelLabel struct {
	// State is the label of the level's electronic state as written; ""
	// the ground state.
	State string
	// N is the rotational quantum number without electron spin, -1 when not
	// given; F the spin component, 0 when not given; Parity e or f,
	// NoParity when not given. CheckStates completes them.
	N      int
	F      int
	Parity states.Parity
}

// OpenShell is the open-shell and electronic identity of the two levels of a
// line.
type OpenShell struct {
	Up, Lo LevelLabel
	// HalfJ: the levels have half-integer J, J_up = JUp + ½ and
	// J_lo = JLo + ½.
	HalfJ bool
}

// J2Up returns 2J of the upper level.
func (l *Line) J2Up() int {
	if l.Open != nil && l.Open.HalfJ {
		return 2*l.JUp + 1
	}
	return 2 * l.JUp
}

// J2Lo returns 2J of the lower level.
func (l *Line) J2Lo() int {
	if l.Open != nil && l.Open.HalfJ {
		return 2*l.JLo + 1
	}
	return 2 * l.JLo
}

// openColumns are the columns that make a line an open-shell one, in the
// order Write writes them.
var openColumns = [...]column{colNUp, colNLo, colFUp, colFLo, colParityUp, colParityLo, colStateUp, colStateLo}

// OpenColumns returns the names of the open-shell columns in the order Write
// writes them (after the standard columns, when a line has them).
func OpenColumns() []string {
	out := make([]string, len(openColumns))
	for i, c := range openColumns {
		out[i] = columnNames[c]
	}
	return out
}

// angular reads a J column as 2J: an integer or half-integer in [0, MaxJ].
func (f *file) angular(rec []string, cl column, row int) (int, bool) {
	i := f.col[cl]
	if i < 0 {
		return 0, false
	}
	name := columnNames[cl]
	t := strings.TrimSpace(rec[i])
	if n, err := strconv.Atoi(t); err == nil {
		return f.checkJ2(2*n, t, name, row)
	}
	x, t, ok := f.number(rec[i], cl, row)
	if !ok {
		return 0, false
	}
	if 2*x != math.Trunc(2*x) {
		f.c.add(row, name, "must be an integer or a half-integer (3 or 3.5), got %s", t)
		return 0, false
	}
	if x > MaxJ+1 || x < -1 {
		x = math.Copysign(MaxJ+1, x)
	}
	return f.checkJ2(int(2*x), t, name, row)
}

func (f *file) checkJ2(j2 int, t, name string, row int) (int, bool) {
	switch {
	case j2 < 0:
		f.c.add(row, name, "must be >= 0, got %s", t)
		return 0, false
	case j2 > 2*MaxJ:
		f.c.add(row, name, "%s exceeds the limit J <= %d (a column mix-up?)", t, MaxJ)
		return 0, false
	}
	return j2, true
}

// openShell reads the open-shell columns of a row into l.Open, which stays
// nil when none of them is filled and J is an integer. It checks what needs
// no electronic states: N ≥ 0 and F ≥ 1 integers, parity e or f, both J
// integers or both half-integers, |ΔJ| ≤ 1, and that the two levels differ.
func (f *file) openShell(rec []string, row int, l *Line, j2 [2]int, jok bool) {
	half := jok && (j2[0]%2 == 1 || j2[1]%2 == 1)
	any := half
	for _, cl := range openColumns {
		if i := f.col[cl]; i >= 0 && strings.TrimSpace(rec[i]) != "" {
			any = true
		}
	}
	if !any {
		return
	}
	o := f.rd.newOpen()
	o.HalfJ = half
	o.Up = f.levelLabel(rec, row, colNUp, colFUp, colParityUp, colStateUp)
	o.Lo = f.levelLabel(rec, row, colNLo, colFLo, colParityLo, colStateLo)
	l.Open = o
	if !jok {
		return
	}
	switch dj := (j2[0] - j2[1]) / 2; {
	case j2[0]%2 != j2[1]%2:
		f.c.add(row, "J_lo", "J_up = %s and J_lo = %s: both must be integers or both half-integers", states.FormatJ(j2[0]), states.FormatJ(j2[1]))
	case dj < -1 || dj > 1:
		f.c.add(row, "J_up", "J_up - J_lo = %+d is outside the selection rules of open-shell and electronic spectra (ΔJ = 0, ±1)", dj)
	case o.Up == o.Lo && o.Up.Parity != states.NoParity && l.VUp == l.VLo && dj == 0:
		// Without parity labels the levels may still differ once the labels
		// are completed (a Λ-doubling line given by J alone): CheckStates
		// decides, or asks for the labels.
		f.c.add(row, "v_up", "upper level equals the lower level: a zero-frequency transition")
	}
}

// newOpen returns storage for one line's OpenShell, carved from a slab.
func (rd *reader) newOpen() *OpenShell {
	if len(rd.openSlab) == 0 {
		rd.openSlab = make([]OpenShell, 1024)
	}
	o := &rd.openSlab[0]
	rd.openSlab = rd.openSlab[1:]
	return o
}

// levelLabel reads the N, F, parity and state cells of one level.
func (f *file) levelLabel(rec []string, row int, cn, cf, cp, cs column) LevelLabel {
	lab := LevelLabel{N: -1}
	if t, ok := f.cell(rec, cn); ok {
		n, err := strconv.Atoi(t)
		if err != nil || n < 0 || n > MaxJ+1 {
			f.c.add(row, columnNames[cn], "must be an integer 0…%d, got %q", MaxJ+1, t)
		}
		lab.N = n
	}
	if t, ok := f.cell(rec, cf); ok {
		n, err := strconv.Atoi(strings.TrimPrefix(strings.TrimPrefix(t, "F"), "f"))
		if err != nil || n < 1 || n > 9 {
			f.c.add(row, columnNames[cf], "must be a spin component 1…9 (F1 is 1), got %q", t)
		}
		lab.F = n
	}
	if t, ok := f.cell(rec, cp); ok {
		p, err := states.ParseParity(t)
		if err != nil {
			f.c.add(row, columnNames[cp], "%v", err)
		}
		lab.Parity = p
	}
	if t, ok := f.cell(rec, cs); ok {
		lab.State = textCell(t)
	}
	return lab
}

// cell returns the trimmed text of column cl and whether it is filled.
func (f *file) cell(rec []string, cl column) (string, bool) {
	i := f.col[cl]
	if i < 0 {
		return "", false
	}
	t := strings.TrimSpace(rec[i])
	return t, t != ""
}

// CheckStates checks the levels of every line against the electronic states
// sts (the ground state first; nil: a ¹Σ⁺ ground state alone, what a fit
// without an electronic-states file assumes) and completes their labels
// (N, F and parity where the state implies them). The checks:
//
//   - a state label must name a state of sts ("" is the ground state);
//   - each level must identify one level of its state (states.State.Check:
//     J half-integer or integer by the multiplicity, F or N for Σ states, F
//     and parity for ²Π, parity for Π, no parity label on ¹Σ);
//   - the branch, when written with a ΔN letter or F indices, must agree
//     with the levels;
//   - parity (the selection rules of one-photon spectra): electric-dipole
//     lines change the total parity, which in e/f labels means e↔e and
//     f↔f for ΔJ = ±1 and e↔f for ΔJ = 0. Within one vibrational level of
//     a Σ state with spin, lines that keep the parity (ΔN even) are
//     magnetic-dipole lines, as O2's fine-structure lines near 60 GHz
//     (ΔN = 0) and its rotational lines (ΔN = ±2); they are accepted too.
//     Lines between
//     states of different multiplicity (intercombination bands, which borrow
//     their intensity through spin–orbit mixing and include magnetic-dipole
//     bands such as O2's b–X) are not checked for parity.
//
// Problems are returned as one *Error naming file, row and field.
func CheckStates(list *List, sts []states.State) error {
	if len(sts) == 0 || (len(sts) == 1 && sts[0].Case() == states.Singlet) {
		closed := true
		for i := range list.Lines {
			if list.Lines[i].Open != nil {
				closed = false
				break
			}
		}
		if closed {
			return nil // ¹Σ lines of a ¹Σ ground state: nothing to check
		}
	}
	cs := map[string]*collector{}
	var order []*collector
	var c *collector
	for i := range list.Lines {
		l := &list.Lines[i]
		if c == nil || c.file != l.File {
			if c = cs[l.File]; c == nil {
				c = &collector{file: l.File}
				cs[l.File] = c
				order = append(order, c)
			}
		}
		checkLine(c, l, sts)
	}
	return merge(order...)
}

// checkLine checks one line (see CheckStates).
func checkLine(c *collector, l *Line, sts []states.State) {
	given := sts != nil
	if !given {
		sts = []states.State{states.Ground()}
	}
	if l.Open == nil {
		if sts[0].Case() == states.Singlet {
			return
		}
		l.Open = &OpenShell{Up: LevelLabel{N: -1}, Lo: LevelLabel{N: -1}}
	}
	o := l.Open
	var st [2]int
	var ok [2]bool
	for k, side := range []struct {
		lab  *LevelLabel
		j2   int
		name string
	}{{&o.Up, l.J2Up(), "up"}, {&o.Lo, l.J2Lo(), "lo"}} {
		st[k], ok[k] = checkLevel(c, l.Row, side.lab, side.j2, side.name, sts, given)
	}
	if ok[0] && ok[1] {
		checkSelection(c, l, sts[st[0]], sts[st[1]], st[0] == st[1])
	}
}

// checkLevel checks and completes one level; it returns the state's index.
func checkLevel(c *collector, row int, lab *LevelLabel, j2 int, side string, sts []states.State, given bool) (int, bool) {
	st := 0
	if lab.State != "" {
		st = states.Index(sts, lab.State)
		if st < 0 {
			if !given {
				c.add(row, "state_"+side, "state %q: state labels need the electronic-states file (--states)", lab.State)
			} else {
				c.add(row, "state_"+side, "no state is labelled %q in the electronic-states file (its states: %s)", lab.State, stateLabels(sts))
			}
			return 0, false
		}
	}
	done, err := sts[st].Check(states.Label{J2: j2, N: lab.N, F: lab.F, Parity: lab.Parity})
	if err != nil {
		field := "state_" + side
		var le *states.LabelError
		if errors.As(err, &le) && le.Field != "state" {
			field = le.Field + "_" + side
		}
		reason := err.Error()
		if le != nil {
			reason = le.Reason
		}
		if !given {
			reason += " (without --states the ground state is taken as a ¹Σ⁺ state; give the electronic-states file)"
		}
		c.add(row, field, "%s", reason)
		return st, false
	}
	lab.N, lab.F, lab.Parity = done.N, done.F, done.Parity
	if st == 0 {
		lab.State = ""
	}
	return st, true
}

func stateLabels(sts []states.State) string {
	var out []string
	for _, s := range sts {
		out = append(out, s.Label)
	}
	return strings.Join(out, ", ")
}

// checkSelection checks the branch and the parity rule of a line whose
// levels are complete (see CheckStates).
func checkSelection(c *collector, l *Line, up, lo states.State, sameState bool) {
	o := l.Open
	dj := l.JUp - l.JLo
	dn := o.Up.N - o.Lo.N
	if sameState && l.VUp == l.VLo && dj == 0 && o.Up == o.Lo {
		c.add(l.Row, "v_up", "upper level equals the lower level: a zero-frequency transition")
		return
	}
	if b, err := ParseBranch(l.Branch); l.Branch != "" && err == nil {
		switch {
		case b.HasN && b.DeltaN != dn:
			c.add(l.Row, "branch", "branch %s has ΔN = %+d, but N_up - N_lo = %+d", l.Branch, b.DeltaN, dn)
		case b.FUp != 0 && (b.FUp != o.Up.F || b.FLo != o.Lo.F):
			c.add(l.Row, "branch", "branch %s names F%d–F%d, but the levels are F%d and F%d", l.Branch, b.FUp, b.FLo, o.Up.F, o.Lo.F)
		}
	}
	if up.Multiplicity != lo.Multiplicity {
		return
	}
	electric := (dj == 0) != (o.Up.Parity == o.Lo.Parity)
	magnetic := sameState && l.VUp == l.VLo && up.Lambda == 0 && up.Multiplicity > 1
	if !electric && !magnetic {
		c.add(l.Row, "parity_up", "%s–%s with ΔJ = %+d breaks the electric-dipole rule (ΔJ = ±1: e–e or f–f; ΔJ = 0: e–f); parity-keeping magnetic-dipole lines are taken only within one vibrational level of a Σ state with spin",
			o.Up.Parity, o.Lo.Parity, dj)
	}
}

// FormatJ writes J as files write it: "3", "3.5".
func FormatJ(j2 int) string { return states.FormatJ(j2) }

// OpenCells returns the open-shell cells of a line's labels in the order of
// OpenColumns (N, F, parity and state of the upper, then the lower level as
// written by Write; empty cells for what is not given, all empty for nil),
// state labels through csvcell.Neutralise.
func OpenCells(o *OpenShell) []string {
	out := make([]string, len(openColumns))
	if o == nil {
		return out
	}
	num := func(n int, ok bool) string {
		if ok {
			return strconv.Itoa(n)
		}
		return ""
	}
	copy(out, []string{num(o.Up.N, o.Up.N >= 0), num(o.Lo.N, o.Lo.N >= 0), num(o.Up.F, o.Up.F > 0), num(o.Lo.F, o.Lo.F > 0),
		o.Up.Parity.String(), o.Lo.Parity.String(), csvcell.Neutralise(o.Up.State), csvcell.Neutralise(o.Lo.State)})
	return out
}

// appendOpen appends the open-shell cells of l (OpenCells).
func appendOpen(row []byte, l *Line) []byte {
	if l.Open == nil {
		return append(row, ",,,,,,,,"...)
	}
	for _, c := range OpenCells(l.Open) {
		row = appendCell(row, 1, c)
	}
	return row
}

// AppendJ appends J = j2/2 as files write it ("3", "3.5") to b.
func AppendJ(b []byte, j2 int) []byte { return appendJ(b, j2) }

// appendJ appends J = j2/2 as a decimal.
func appendJ(b []byte, j2 int) []byte {
	b = strconv.AppendInt(b, int64(j2/2), 10)
	if j2%2 == 1 {
		b = append(b, ".5"...)
	}
	return b
}

// HasOpenShell reports whether some line has open-shell labels (the writers
// then add the open-shell columns).
func HasOpenShell(lines []Line) bool {
	for i := range lines {
		if lines[i].Open != nil {
			return true
		}
	}
	return false
}
