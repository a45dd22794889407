// Package linelist reads, validates and writes bandwright line lists: the assigned
// transitions that a fit consumes.
//
// # File format
//
// A line list is a CSV file with a header row. Column order is free and names are
// matched case-insensitively after trimming surrounding white space. Numbers use a dot as
// decimal separator. Lines whose first non-blank character is '#' are comments; blank
// lines are skipped; a UTF-8 byte-order mark at the start is ignored; LF and CRLF line
// endings are both read.
//
//	column    required  meaning
//	species   yes       isotopologue label ("12C16O", "D35Cl"); stored in canonical form
//	v_up      yes       vibrational quantum number of the upper level (integer, 0..100)
//	J_up      yes       rotational quantum number of the upper level (integer, 0..1000)
//	v_lo      yes       vibrational quantum number of the lower level
//	J_lo      yes       rotational quantum number of the lower level
//	position  yes       line position, > 0, in the row's unit
//	unc       yes       1σ uncertainty of position, > 0, same unit as position
//	unit      no        "cm-1" (default when absent or empty), "MHz" or "GHz", any letter case
//	branch    no        O, P, Q, R or S; checked against ΔJ = J_up − J_lo
//	comment   no        free text
//	N_up      no        N of the upper level (Hund's case (b)), integer ≥ 0
//	N_lo      no        N of the lower level
//	F_up      no        spin component of the upper level, 1 … 2S+1 ("F1" also read)
//	F_lo      no        spin component of the lower level
//	parity_up no        e or f, the parity label of the upper level
//	parity_lo no        e or f, the parity label of the lower level
//	state_up  no        electronic-state label of the upper level (states file); empty: the ground state
//	state_lo  no        electronic-state label of the lower level
//
// Any other column is kept and passed through (List.Extra, Line.Extra). Every cell must
// be UTF-8 text.
//
// # Units
//
// A position in cm⁻¹ must be a transition within one electronic state of a diatomic
// molecule, which bounds it: it must lie below MaxWavenumber (above the dissociation
// energy of every diatomic molecule), and a pure-rotation line (v_up = v_lo) must imply
// a rotational constant ν/(x_up − x_lo), x = J(J+1), below MaxRotationalConstant.
// Positions in MHz written without a unit are far beyond both (a vibrational band
// in MHz is above 10⁶, a rotational constant in MHz above 100), so such rows are refused
// with a hint to add a unit column. In a file without a unit column, a band (one
// species, v_up, v_lo) whose positions — divided by x_up − x_lo for pure rotation —
// spread over more than a factor MixedUnitRatio is refused as a mix of cm⁻¹ and MHz.
//
// # Conventions
//
// A line without any of the open-shell columns filled and with integer J is a line
// between ¹Σ levels of the ground state. ΔJ = J_up − J_lo names the branch: O (−2),
// P (−1), Q (0), R (+1), S (+2). The selection rules of the spectra bandwright fits are
// infrared ΔJ = ±1, Raman ΔJ = 0, ±2 and pure rotation ΔJ = ±1, so |ΔJ| > 2 is
// refused. The upper level must lie above the lower one: v_up > v_lo, or v_up = v_lo
// with J_up > J_lo.
//
// # Open-shell and electronic lines
//
// A line with any of the columns N_up … state_lo filled, or with half-integer J
// (written as a decimal, 3.5), is an open-shell or electronic line (Line.Open). The
// reader checks its syntax, |ΔJ| ≤ 1 and that J_up and J_lo are both integers or both
// half-integers; whether each level exists and is fully identified needs the
// electronic states and is checked by CheckStates (the rules of package states). Its
// branch may be written in the trade's open-shell notation (Branch: "pQ12", "R1").
// The checks of positions in cm⁻¹ below skip lines between spin or Λ-doubling
// components of one vibronic level, and MaxWavenumber does not bound lines between
// two electronic states.
//
// Positions and uncertainties are kept as written, in their own unit; Line.Wavenumber
// and Line.UncWavenumber convert to cm⁻¹ with 1 cm⁻¹ = 29 979.2458 MHz (exact, from the
// defined speed of light). A position in GHz is checked and converted as one in MHz.
//
// # Errors
//
// Read, ReadFile and ReadFiles check every row and return all problems of a file at
// once (up to MaxProblems per file) as one *Error; each Problem reads
// FILE:ROW: field: reason, ROW being the physical line number in the file (the header
// counts), so that a user can jump to it in an editor.
//
// # Implementation
//
// The header names are mapped onto the standard columns by github.com/gocarina/gocsv
// (struct tags of headerRow); the rows are split by encoding/csv and converted here with
// strconv, which is several times faster than decoding each row by reflection.
package linelist

import (
	"fmt"
	"strconv"
	"strings"

	"bandwright/units"
)

// Unit is the unit of a line position and its uncertainty. This file is the one
// home of the unit names bandwright reads and writes, of the default unit and of
// the conversions to and from cm⁻¹.
type Unit int

const (
	// Wavenumber is cm⁻¹, written "cm-1". It is the default (DefaultUnit) and the
	// internal unit of every calculation and of the constants record.
	Wavenumber Unit = iota
	// MHz is frequency in megahertz.
	MHz
	// GHz is frequency in gigahertz; accepted wherever MHz is.
	GHz
)

// DefaultUnit is the unit of a position whose file or row gives none.
const DefaultUnit = Wavenumber

// UnitChoices lists the unit names for messages and help texts: "cm-1, MHz or GHz".
const UnitChoices = "cm-1, MHz or GHz"

// String returns the unit as written in files: "cm-1", "MHz" or "GHz".
func (u Unit) String() string {
	switch u {
	case Wavenumber:
		return "cm-1"
	case MHz:
		return "MHz"
	case GHz:
		return "GHz"
	}
	return "Unit(" + strconv.Itoa(int(u)) + ")"
}

// Pretty returns the unit as printed for people: "cm⁻¹", "MHz", "GHz".
func (u Unit) Pretty() string {
	if u == Wavenumber {
		return "cm⁻¹"
	}
	return u.String()
}

// IsFrequency reports whether the unit is a frequency (MHz or GHz).
func (u Unit) IsFrequency() bool { return u == MHz || u == GHz }

// PerWavenumber returns how many of the unit make 1 cm⁻¹: 1 for cm⁻¹,
// 29 979.2458 for MHz and 29.979 2458 for GHz (exact, from the defined speed
// of light).
func (u Unit) PerWavenumber() float64 {
	switch u {
	case MHz:
		return units.MHzPerWavenumber
	case GHz:
		return units.MHzPerWavenumber / 1e3
	}
	return 1
}

// ToWavenumber converts x, in unit u, to cm⁻¹.
func (u Unit) ToWavenumber(x float64) float64 {
	if u == Wavenumber {
		return x
	}
	return x / u.PerWavenumber()
}

// FromWavenumber converts x, in cm⁻¹, to unit u.
func (u Unit) FromWavenumber(x float64) float64 {
	if u == Wavenumber {
		return x
	}
	return x * u.PerWavenumber()
}

// ParseUnit reads a unit name: "cm-1", "MHz" or "GHz", in any letter case,
// surrounding white space ignored. Anything else, the empty string included, is
// an error naming the value.
func ParseUnit(s string) (Unit, error) {
	t := strings.TrimSpace(s)
	for _, u := range []Unit{Wavenumber, MHz, GHz} {
		if strings.EqualFold(t, u.String()) {
			return u, nil
		}
	}
	return 0, fmt.Errorf("linelist: unknown unit %q: use %s", s, UnitChoices)
}

// Line is one assigned transition (v_up, J_up) ← (v_lo, J_lo) of one isotopologue.
type Line struct {
	File    string // path or name of the file it was read from, as given
	Row     int    // physical line number in File (1-based; the header is a line too)
	Species string // canonical isotopologue label (species.Parse(...).Label)

	VUp, JUp, VLo, JLo int // vibrational and rotational quantum numbers

	Position float64 // line position as given, in Unit
	Unc      float64 // 1σ uncertainty of Position as given, in Unit
	Unit     Unit
	Branch   string   // branch letter as given (may be empty)
	Comment  string   // free text
	Extra    []string // pass-through values, aligned with List.Extra
	// Open is the open-shell and electronic identity of the two levels (the
	// columns N_up … state_lo, half-integer J); nil for a line between ¹Σ
	// levels of the ground state, which has none of them. JUp and JLo hold
	// J − ½ when Open.HalfJ; J2Up and J2Lo give 2J in every case.
	Open *OpenShell
}

// Wavenumber returns the position in cm⁻¹: Position, or Position / units.MHzPerWavenumber
// for a line given in MHz.
func (l Line) Wavenumber() float64 { return l.Unit.ToWavenumber(l.Position) }

// UncWavenumber returns the 1σ uncertainty in cm⁻¹: Unc, or Unc / units.MHzPerWavenumber for
// a line given in MHz.
func (l Line) UncWavenumber() float64 { return l.Unit.ToWavenumber(l.Unc) }

// DeltaJ returns ΔJ = J_up − J_lo.
func (l Line) DeltaJ() int { return l.JUp - l.JLo }

// List is a set of lines read from one or more files.
type List struct {
	Lines []Line
	// Extra names the pass-through columns: the union over all files read, in order of
	// first appearance, each name as first written (trimmed). Line.Extra is aligned with it.
	Extra []string
	// Warnings are things that do not stop a fit but that a person should see, each
	// naming the file and row: a line given twice (same species, quantum numbers,
	// position and unit; see Read).
	Warnings []Problem
}

// Species returns the distinct isotopologue labels of the lines, in order of first
// appearance.
func (l *List) Species() []string {
	var out []string
	seen := make(map[string]bool)
	for i := range l.Lines {
		s := l.Lines[i].Species
		if !seen[s] {
			seen[s] = true
			out = append(out, s)
		}
	}
	return out
}
