package linelist

import (
	"fmt"
	"math"
	"slices"
	"strconv"

	"bandwright/units"
)

// checkUnits runs the checks that need every line of the files read: positions
// that cannot be in cm⁻¹ (see the package doc, Units) are problems of their file;
// lines given twice become warnings. It returns the *Error of the problems found,
// or nil.
func (rd *reader) checkUnits(cs ...*collector) error {
	byFile := make(map[string]*collector, len(cs))
	for _, c := range cs {
		byFile[c.file] = c
	}
	mixed := rd.checkMixedBands(byFile)
	rd.checkWavenumbers(byFile, mixed)
	rd.checkBandOutliers(byFile)
	if err := merge(cs...); err != nil {
		return err
	}
	rd.warnDuplicates()
	return nil
}

// unitBand is a band of one file, the unit in which the check of mixed units
// compares positions.
type unitBand struct {
	file, species    string
	vUp, vLo         int
	stateUp, stateLo string
}

// bandOf returns the band of line l for the check of mixed units, and
// whether the line takes part in the checks of positions in cm⁻¹: lines
// between spin components or Λ-doubling components of one vibronic level
// (their positions range from MHz to hundreds of cm⁻¹) do not.
func bandOf(l *Line) (unitBand, bool) {
	k := unitBand{file: l.File, species: l.Species, vUp: l.VUp, vLo: l.VLo}
	if l.Open == nil {
		return k, true
	}
	k.stateUp, k.stateLo = l.Open.Up.State, l.Open.Lo.State
	if k.stateUp != k.stateLo || l.VUp != l.VLo {
		return k, true
	}
	u, lo := l.Open.Up, l.Open.Lo
	dj := l.JUp - l.JLo
	sameF := (u.F > 0 && u.F == lo.F) || (u.F == 0 && lo.F == 0 && u.N >= 0 && lo.N >= 0 && u.N-lo.N == dj)
	return k, sameF && (dj == 1 || dj == -1)
}

// checkMixedBands reports the bands of files without a unit column whose
// reduced positions spread over more than MixedUnitRatio (a mix of cm⁻¹ and
// MHz), and returns them.
func (rd *reader) checkMixedBands(byFile map[string]*collector) map[unitBand]bool {
	lines := rd.list.Lines
	type extent struct {
		min, max   float64
		minI, maxI int
	}
	var order []unitBand
	bands := map[unitBand]*extent{}
	// Lines usually come band by band: remember the last band to spare a
	// map lookup (string hashing) per line on the hot path of large files.
	var lastKey unitBand
	var last *extent
	lastFile, lastNoUnit := "", false
	for i := range lines {
		l := &lines[i]
		if l.File != lastFile || i == 0 {
			lastFile, lastNoUnit = l.File, rd.noUnitCol[l.File]
		}
		if !lastNoUnit {
			continue
		}
		k, ok := bandOf(l)
		if !ok {
			continue
		}
		r := reducedPosition(l)
		e := last
		if last == nil || k != lastKey {
			var ok bool
			e, ok = bands[k]
			if !ok {
				e = &extent{min: r, max: r, minI: i, maxI: i}
				bands[k] = e
				order = append(order, k)
			}
			lastKey, last = k, e
		}
		if r < e.min {
			e.min, e.minI = r, i
		}
		if r > e.max {
			e.max, e.maxI = r, i
		}
	}
	mixed := map[unitBand]bool{}
	for _, k := range order {
		e := bands[k]
		if e.max > MixedUnitRatio*e.min {
			mixed[k] = true
			hi, lo := &lines[e.maxI], &lines[e.minI]
			per := ""
			if hi.VUp == hi.VLo && k.stateUp == k.stateLo {
				per = " per unit of J(J+1)"
			}
			byFile[k.file].add(hi.Row, "position", "%s is%s %.3g times that of row %d (%s) in the same band (%s %s): the file seems to mix cm-1 and MHz; add a unit column (cm-1 or MHz) saying which each row is",
				fmtPos(hi.Position), per, e.max/e.min, lo.Row, fmtPos(lo.Position), k.species, BandLabel(k.vUp, k.vLo))
		}
	}
	return mixed
}

// checkWavenumbers reports rows in cm⁻¹ whose position cannot be one: beyond
// MaxWavenumber, or a pure-rotation line implying a rotational constant above
// MaxRotationalConstant. Bands already reported as mixed are skipped.
func (rd *reader) checkWavenumbers(byFile map[string]*collector, mixed map[unitBand]bool) {
	for i := range rd.list.Lines {
		l := &rd.list.Lines[i]
		k, ok := bandOf(l)
		if l.Unit != Wavenumber || !ok || (len(mixed) > 0 && mixed[k]) {
			continue
		}
		electronic := k.stateUp != k.stateLo
		hint := "is the row's unit MHz? say so in its unit column"
		if rd.noUnitCol[l.File] {
			hint = "if the positions are in MHz, add a unit column (cm-1 or MHz)"
		}
		if l.Position >= MaxWavenumber && !electronic {
			byFile[l.File].add(l.Row, "position", "%s cm-1 is beyond the dissociation energy of every diatomic molecule (no transition within one electronic state reaches %g cm-1); %s",
				fmtPos(l.Position), MaxWavenumber, hint)
			continue
		}
		if l.VUp == l.VLo && !electronic {
			if b := reducedPosition(l); b > MaxRotationalConstant {
				byFile[l.File].add(l.Row, "position", "%s cm-1 for a pure-rotation line J=%d-%d implies a rotational constant of %.4g cm-1, larger than that of any molecule (H2: 60.85 cm-1); %s",
					fmtPos(l.Position), l.JUp, l.JLo, b, hint)
			}
		}
	}
}

// OutlierRatio is the factor by which the reduced position (in cm⁻¹) of a
// line of a file with a unit column may differ from the median of its band
// before the row is refused: a band's own spread is below a factor 3, while a
// position in cm⁻¹ labelled MHz (or the reverse) is off by 29 979.
const OutlierRatio = 100.0

// checkBandOutliers reports, in files with a unit column, the rows whose
// reduced position converted to cm⁻¹ lies more than OutlierRatio from the
// median of their band (same file, species and vibrational levels; bands of
// three lines or more whose rows are not all in one unit): a one-character
// unit typo, whose tiny uncertainty in the wrong unit would otherwise
// dominate the fit. A band in one unit throughout has no unit to mistype, and
// is read alike with and without a unit column.
func (rd *reader) checkBandOutliers(byFile map[string]*collector) {
	lines := rd.list.Lines
	bands := map[unitBand][]int{}
	var order []unitBand
	for i := range lines {
		l := &lines[i]
		if rd.noUnitCol[l.File] {
			continue
		}
		k, checked := bandOf(l)
		if !checked {
			continue
		}
		if _, ok := bands[k]; !ok {
			order = append(order, k)
		}
		bands[k] = append(bands[k], i)
	}
	for _, k := range order {
		idx := bands[k]
		if len(idx) < 3 || !mixesUnits(lines, idx) {
			continue
		}
		med := bandMedian(lines, idx)
		for _, i := range idx {
			if ratio := reducedCm(&lines[i]) / med; ratio > OutlierRatio || ratio < 1/OutlierRatio {
				l := &lines[i]
				byFile[k.file].add(l.Row, "position", "%s %s is %.3g times the median of the other lines of its band (%s %s, %d lines): is the row's unit right (1 cm-1 = 29979.2458 MHz)?",
					fmtPos(l.Position), l.Unit, ratio, k.species, BandLabel(k.vUp, k.vLo), len(idx))
			}
		}
	}
}

// reducedCm is reducedPosition in cm⁻¹.
func reducedCm(l *Line) float64 {
	r := reducedPosition(l)
	if l.Unit == MHz {
		r /= units.MHzPerWavenumber
	}
	return r
}

// bandMedian returns the median reduced position (cm⁻¹) of the lines idx,
// from at most 1001 of them taken evenly (enough to place a band within a
// factor OutlierRatio, and cheap for a band of a million lines).
func bandMedian(lines []Line, idx []int) float64 {
	step := max(1, len(idx)/1001)
	x := make([]float64, 0, len(idx)/step+1)
	for j := 0; j < len(idx); j += step {
		x = append(x, reducedCm(&lines[idx[j]]))
	}
	slices.Sort(x)
	n := len(x)
	if n%2 == 1 {
		return x[n/2]
	}
	return (x[n/2-1] + x[n/2]) / 2
}

// warnDuplicates adds a warning for every line with the species, quantum
// numbers, position and unit of the first line at that position, and for
// every line of a file whose species, position and unit repeat an earlier
// line's of the file with another transition — one peak assigned to two
// transitions (up to MaxProblems, then a count). One map, keyed by the
// position, serves both.
func (rd *reader) warnDuplicates() {
	lines := rd.list.Lines
	type posKey struct {
		species  string
		position uint64
		unit     Unit
	}
	first := make(map[posKey]int, len(lines))
	warned := 0
	for i := range lines {
		l := &lines[i]
		k := posKey{l.Species, math.Float64bits(l.Position), l.Unit}
		j, seen := first[k]
		if !seen {
			first[k] = i
			continue
		}
		o := &lines[j]
		var reason string
		switch {
		case o.VUp == l.VUp && o.JUp == l.JUp && o.VLo == l.VLo && o.JLo == l.JLo && sameLabels(o, l):
			reason = fmt.Sprintf("duplicate line: the same species, quantum numbers and position as %s; it is counted twice in the fit (delete one copy if it was pasted twice)", rowOf(o, l))
		case o.File == l.File:
			reason = fmt.Sprintf("one peak assigned to two transitions: position %s %s is also row %d's, assigned to %s, and here to %s; a blended peak counts twice in the fit (keep one, or raise the unc of both)",
				fmtPos(l.Position), l.Unit, o.Row, LineLabel(o), LineLabel(l))
		default:
			continue
		}
		warned++
		if warned <= MaxProblems {
			rd.list.Warnings = append(rd.list.Warnings, Problem{File: l.File, Row: l.Row, Reason: reason})
		}
	}
	if warned > MaxProblems {
		l := &lines[len(lines)-1]
		rd.list.Warnings = append(rd.list.Warnings, Problem{File: l.File, Row: 0,
			Reason: fmt.Sprintf("… and %d more duplicate lines or shared peaks (%d in all)", warned-MaxProblems, warned)})
	}
}

// sameLabels reports whether two lines have the same open-shell labels (or
// none).
func sameLabels(o, l *Line) bool {
	if o.Open == nil || l.Open == nil {
		return o.Open == l.Open
	}
	return *o.Open == *l.Open
}

// rowOf names the row of line o as seen from line l: "row 12", or
// "FILE:12" when o is in another file.
func rowOf(o, l *Line) string {
	if o.File != l.File {
		return fmt.Sprintf("%s:%d", o.File, o.Row)
	}
	return "row " + strconv.Itoa(o.Row)
}

// reducedPosition is the position of a line divided, for pure rotation (v_up =
// v_lo), by x_up − x_lo with x = J(J+1): about B_v, the same for every line of the
// band. For other bands it is the position itself.
func reducedPosition(l *Line) float64 {
	if l.VUp != l.VLo || (l.Open != nil && l.Open.Up.State != l.Open.Lo.State) {
		return l.Position
	}
	xu := float64(l.JUp) * float64(l.JUp+1)
	xl := float64(l.JLo) * float64(l.JLo+1)
	if xu <= xl {
		return l.Position
	}
	return l.Position / (xu - xl)
}

func fmtPos(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// minRelativeUnc is the smallest uncertainty accepted relative to its
// position: about four units in the last place of a 64-bit float (2.2e-16),
// below which the weight 1/unc² of the line means nothing and overflows
// the least-squares scaling.
const minRelativeUnc = 1e-15

// UncProblem returns why an uncertainty unc (> 0) cannot go with the position
// pos (> 0, same unit), or "" when it can: it must be smaller than the
// position, and not below the resolution of a 64-bit float at the position.
// The line-list and peak-list readers share it.
func UncProblem(pos, unc float64) string {
	switch {
	case unc >= pos:
		return fmt.Sprintf("%g is not smaller than the position %g: an uncertainty that large says nothing about the line", unc, pos)
	case unc < pos*minRelativeUnc:
		return fmt.Sprintf("%g is below the resolution of a 64-bit float at the position %g (relative %g); give the real uncertainty", unc, pos, minRelativeUnc)
	}
	return ""
}

// mixesUnits reports whether the lines idx are not all in one unit.
func mixesUnits(lines []Line, idx []int) bool {
	for _, i := range idx[1:] {
		if lines[i].Unit != lines[idx[0]].Unit {
			return true
		}
	}
	return false
}
