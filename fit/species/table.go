// Package species holds the isotope data bandwright needs for diatomic molecules and
// parses isotopologue labels such as "12C16O", "1H35Cl", "D35Cl" or "14N2".
//
// The isotope table is embedded from isotopes.csv, whose header names the source of each
// column: atomic masses from AME2020, nuclear spins from NUBASE2020, representative
// isotopic abundances from IUPAC/CIAAW 2013, and standard atomic weights from the IUPAC
// 2005 edition (the values under the thermochemical reference tables). All of them were
// entered from memory and are cross-checked by the package tests.
//
// Units: masses in u (unified atomic mass units, m(12C) = 12 u exactly), molar masses in
// g/mol, rotational constants in cm-1, bond lengths in Å.
package species

import (
	"bytes"
	_ "embed"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
)

//go:embed isotopes.csv
var isotopesCSV []byte

// Isotope is one row of the isotope table.
type Isotope struct {
	Symbol    string  // element symbol, "Cl"
	Z         int     // atomic number
	A         int     // mass number
	Mass      float64 // atomic mass (neutral atom), u (AME2020)
	TwiceSpin int     // 2I, twice the ground-state nuclear spin (NUBASE2020)
	Abundance float64 // representative mole fraction (IUPAC 2013); 0 for an isotope absent from nature (3H)
}

// Label returns the isotope's label, mass number then symbol: "35Cl", "2H".
func (i Isotope) Label() string {
	return strconv.Itoa(i.A) + i.Symbol
}

// Spin returns the nuclear spin I = TwiceSpin/2 (units of ħ).
func (i Isotope) Spin() float64 {
	return float64(i.TwiceSpin) / 2
}

// IsBoson reports whether the nucleus is a boson, i.e. has integer spin I
// (equivalently an even mass number).
func (i Isotope) IsBoson() bool {
	return i.TwiceSpin%2 == 0
}

// SpinDegeneracy returns 2I+1, the number of nuclear-spin states of the isotope.
func (i Isotope) SpinDegeneracy() int {
	return i.TwiceSpin + 1
}

// Radioactive reports whether the table marks the isotope as radioactive (3H, 40K, 87Rb).
// An isotope that is not in the table reports false.
func (i Isotope) Radioactive() bool {
	return table.radioactive[isoKey{i.Symbol, i.A}]
}

// Element is one chemical element of the table with its isotopes.
type Element struct {
	Symbol       string
	Z            int
	AtomicWeight float64   // standard atomic weight, g/mol (IUPAC 2005 edition; see isotopes.csv)
	Isotopes     []Isotope // sorted by mass number
}

// ErrUnknownElement and ErrUnknownIsotope are wrapped by the lookup and parse errors,
// so callers can test for them with errors.Is.
var (
	ErrUnknownElement = errors.New("unknown element")
	ErrUnknownIsotope = errors.New("isotope not in the table")
)

type isoKey struct {
	sym string
	a   int
}

type tableData struct {
	isotopes    []Isotope // sorted by Z then A
	elements    map[string]Element
	isotopeAt   map[isoKey]int // index into isotopes
	radioactive map[isoKey]bool
}

// table is the embedded isotope table. A malformed embedded file is a defect of the
// build, not of user input; every test run loads it, so mustLoad cannot fail in a binary
// whose tests passed.
var table = mustLoad(isotopesCSV)

func mustLoad(b []byte) *tableData {
	t, err := loadTable(bytes.NewReader(b))
	if err != nil {
		panic(err)
	}
	return t
}

// tableColumns are the required columns of isotopes.csv, in any order.
var tableColumns = []string{"symbol", "z", "a", "mass_u", "twice_spin", "abundance", "atomic_weight", "radioactive"}

// loadTable reads and validates an isotope table in the format of isotopes.csv.
func loadTable(r io.Reader) (*tableData, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = 0
	header, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("species: isotopes.csv: reading header: %w", err)
	}
	col := make(map[string]int, len(header))
	for i, h := range header {
		col[strings.ToLower(strings.TrimSpace(h))] = i
	}
	for _, c := range tableColumns {
		if _, ok := col[c]; !ok {
			return nil, fmt.Errorf("species: isotopes.csv: header lacks column %q", c)
		}
	}
	b := newTableBuilder()
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		line, _ := cr.FieldPos(0)
		if err != nil {
			return nil, fmt.Errorf("species: isotopes.csv: %w", err)
		}
		row := tableRow{rec: rec, col: col, line: line}
		iso, radio, weight, err := row.parse()
		if err != nil {
			return nil, err
		}
		if err := b.add(row, iso, radio, weight); err != nil {
			return nil, err
		}
	}
	return b.finish()
}

// tableRow is one data row of isotopes.csv: its fields, the column of each
// header name, and its line in the file (for messages).
type tableRow struct {
	rec  []string
	col  map[string]int
	line int
}

func (r tableRow) field(name string) string { return strings.TrimSpace(r.rec[r.col[name]]) }

// bad returns the error for field name of this row.
func (r tableRow) bad(name string, cause error) error {
	return fmt.Errorf("species: isotopes.csv: line %d: field %s: %w", r.line, name, cause)
}

// parse reads the fields of the row and checks each on its own: the isotope,
// whether it is radioactive, and the standard atomic weight of its element.
func (r tableRow) parse() (iso Isotope, radio bool, weight float64, err error) {
	sym := r.field("symbol")
	if !validSymbol(sym) {
		return iso, false, 0, r.bad("symbol", fmt.Errorf("%q is not an element symbol (uppercase letter, then at most two lowercase)", sym))
	}
	z, err := strconv.Atoi(r.field("z"))
	if err != nil || z < 1 {
		return iso, false, 0, r.bad("z", fmt.Errorf("%q is not a positive integer", r.field("z")))
	}
	a, err := strconv.Atoi(r.field("a"))
	if err != nil || a < z {
		return iso, false, 0, r.bad("a", fmt.Errorf("%q is not an integer >= Z=%d", r.field("a"), z))
	}
	mass, err := strconv.ParseFloat(r.field("mass_u"), 64)
	if err != nil || !(math.Abs(mass-float64(a)) < 0.5) {
		return iso, false, 0, r.bad("mass_u", fmt.Errorf("%q is not a mass within 0.5 u of A=%d", r.field("mass_u"), a))
	}
	twoI, err := strconv.Atoi(r.field("twice_spin"))
	if err != nil || twoI < 0 {
		return iso, false, 0, r.bad("twice_spin", fmt.Errorf("%q is not a non-negative integer", r.field("twice_spin")))
	}
	// Nuclei of odd A have half-integer spin, of even A integer spin (common practice).
	if twoI%2 != a%2 {
		return iso, false, 0, r.bad("twice_spin", fmt.Errorf("2I=%d has the wrong parity for A=%d", twoI, a))
	}
	ab, err := strconv.ParseFloat(r.field("abundance"), 64)
	if err != nil || !(ab >= 0 && ab <= 1) {
		return iso, false, 0, r.bad("abundance", fmt.Errorf("%q is not a mole fraction in [0, 1]", r.field("abundance")))
	}
	weight, err = strconv.ParseFloat(r.field("atomic_weight"), 64)
	if err != nil || !(weight > 0) || math.IsInf(weight, 0) {
		return iso, false, 0, r.bad("atomic_weight", fmt.Errorf("%q is not a positive number", r.field("atomic_weight")))
	}
	switch r.field("radioactive") {
	case "yes":
		radio = true
	case "no":
	default:
		return iso, false, 0, r.bad("radioactive", fmt.Errorf("%q is neither yes nor no", r.field("radioactive")))
	}
	return Isotope{Symbol: sym, Z: z, A: a, Mass: mass, TwiceSpin: twoI, Abundance: ab}, radio, weight, nil
}

// tableBuilder collects the rows of an isotope table and checks them against
// each other: one Z per symbol, one symbol per Z, one atomic weight per
// element, each isotope once.
type tableBuilder struct {
	t       *tableData
	weights map[string]float64
	zOf     map[string]int
	symOfZ  map[int]string
}

func newTableBuilder() *tableBuilder {
	return &tableBuilder{
		t: &tableData{
			elements:    make(map[string]Element),
			isotopeAt:   make(map[isoKey]int),
			radioactive: make(map[isoKey]bool),
		},
		weights: make(map[string]float64),
		zOf:     make(map[string]int),
		symOfZ:  make(map[int]string),
	}
}

// add adds the isotope of row after checking it against the earlier rows.
func (b *tableBuilder) add(row tableRow, iso Isotope, radio bool, w float64) error {
	sym, z := iso.Symbol, iso.Z
	if prev, ok := b.zOf[sym]; ok && prev != z {
		return row.bad("z", fmt.Errorf("%s has Z=%d here but Z=%d on an earlier row", sym, z, prev))
	}
	if prev, ok := b.symOfZ[z]; ok && prev != sym {
		return row.bad("symbol", fmt.Errorf("atomic number %d is %s here but %s on an earlier row", z, sym, prev))
	}
	if prev, ok := b.weights[sym]; ok && prev != w {
		return row.bad("atomic_weight", fmt.Errorf("%s has %v here but %v on an earlier row", sym, w, prev))
	}
	k := isoKey{sym, iso.A}
	if _, dup := b.t.isotopeAt[k]; dup {
		return row.bad("a", fmt.Errorf("%d%s appears twice", iso.A, sym))
	}
	b.zOf[sym], b.symOfZ[z], b.weights[sym] = z, sym, w
	b.t.isotopeAt[k] = -1 // placeholder; indices are set after sorting
	if radio {
		b.t.radioactive[k] = true
	}
	b.t.isotopes = append(b.t.isotopes, iso)
	return nil
}

// finish sorts the isotopes by Z then A and builds the element index.
func (b *tableBuilder) finish() (*tableData, error) {
	t := b.t
	if len(t.isotopes) == 0 {
		return nil, errors.New("species: isotopes.csv: no isotope rows")
	}
	sort.Slice(t.isotopes, func(i, j int) bool {
		if t.isotopes[i].Z != t.isotopes[j].Z {
			return t.isotopes[i].Z < t.isotopes[j].Z
		}
		return t.isotopes[i].A < t.isotopes[j].A
	})
	for i, iso := range t.isotopes {
		t.isotopeAt[isoKey{iso.Symbol, iso.A}] = i
		e := t.elements[iso.Symbol]
		e.Symbol, e.Z, e.AtomicWeight = iso.Symbol, iso.Z, b.weights[iso.Symbol]
		e.Isotopes = append(e.Isotopes, iso)
		t.elements[iso.Symbol] = e
	}
	return t, nil
}

// validSymbol reports whether s has the shape of an element symbol: one uppercase ASCII
// letter followed by at most two lowercase ones.
func validSymbol(s string) bool {
	if len(s) == 0 || len(s) > 3 || s[0] < 'A' || s[0] > 'Z' {
		return false
	}
	for i := 1; i < len(s); i++ {
		if s[i] < 'a' || s[i] > 'z' {
			return false
		}
	}
	return true
}

// LookupElement returns the element with the given case-sensitive symbol ("Cl", not "CL"),
// with a copy of its isotope list. The error wraps ErrUnknownElement.
func LookupElement(symbol string) (Element, error) {
	e, ok := table.elements[symbol]
	if !ok {
		return Element{}, fmt.Errorf("species: %w %q%s", ErrUnknownElement, symbol, caseHint(symbol))
	}
	e.Isotopes = append([]Isotope(nil), e.Isotopes...)
	return e, nil
}

// LookupIsotope returns the isotope of mass number A of the element with the given
// symbol. The error wraps ErrUnknownElement or ErrUnknownIsotope and, for a known
// element, lists the isotopes the table has.
func LookupIsotope(symbol string, A int) (Isotope, error) {
	iso, err := lookupIsotope(symbol, A)
	if err != nil {
		return Isotope{}, fmt.Errorf("species: %w", err)
	}
	return iso, nil
}

// lookupIsotope is LookupIsotope without the package prefix on the error.
func lookupIsotope(symbol string, A int) (Isotope, error) {
	if i, ok := table.isotopeAt[isoKey{symbol, A}]; ok {
		return table.isotopes[i], nil
	}
	e, ok := table.elements[symbol]
	if !ok {
		return Isotope{}, fmt.Errorf("%w %q%s", ErrUnknownElement, symbol, caseHint(symbol))
	}
	have := make([]string, len(e.Isotopes))
	for i, iso := range e.Isotopes {
		have[i] = iso.Label()
	}
	return Isotope{}, fmt.Errorf("%w: no isotope %d of %s (the table has %s)", ErrUnknownIsotope, A, symbol, strings.Join(have, ", "))
}

// caseHint suggests the correctly capitalised symbol when s differs from a known one
// only in letter case ("CL" -> "Cl").
func caseHint(s string) string {
	for sym := range table.elements {
		if sym != s && strings.EqualFold(sym, s) {
			return fmt.Sprintf(" (symbols are case-sensitive: did you mean %q?)", sym)
		}
	}
	return ""
}

// Isotopes returns a copy of the whole table, sorted by Z then A.
func Isotopes() []Isotope {
	return append([]Isotope(nil), table.isotopes...)
}

// Elements returns the elements of the table sorted by Z; each has its own copy of its
// isotope list.
func Elements() []Element {
	out := make([]Element, 0, len(table.elements))
	for _, e := range table.elements {
		e.Isotopes = append([]Isotope(nil), e.Isotopes...)
		out = append(out, e)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Z < out[j].Z })
	return out
}
