package assign

import (
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"sort"
	"strings"

	"github.com/BurntSushi/toml"
	"gonum.org/v1/gonum/mat"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/fit/species"
	"bandwright/fit/states"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
)

// StartSpecies is one isotopologue the assignment looks for, with the
// constants its lines are predicted from.
type StartSpecies struct {
	Label string // canonical isotopologue label
	// Abundance is the relative abundance used for predicted intensities:
	// as given in the start file, else the product of the two atoms'
	// representative isotopic abundances (IUPAC/CIAAW, from the species table).
	Abundance float64
	// Constants evaluate E(v, J); Index is the species' index in
	// Constants.Model. Start files give constants without covariance (no
	// fitted parameters): their predictions carry σ = 0, and the band lock
	// measures how far off they are.
	Constants *constants.Set
	Index     int
	// ScaledFrom names the isotopologue whose constants were mass-scaled to
	// this one (Dunham relations Y_kl ∝ μ^−(k+2l)/2), empty when the species'
	// own constants were given.
	ScaledFrom string
	Iso        species.Isotopologue
	// lacks names the constants a start file left out that bands other than
	// pure rotation in v = 0 need ("omega_e, alpha_e"; "the equilibrium
	// constants" for a species given by B_0), and row the line of its
	// [[species]] table; empty for complete constants (see CheckBands).
	lacks string
	row   int
}

// Start is the set of species and starting constants of an assignment.
type Start struct {
	File    string // the start file or constants record it came from
	Species []StartSpecies
}

// startEntry is one [[species]] table of a start file. Pointers tell given
// keys from absent ones.
type startEntry struct {
	Name      *string  `toml:"name"`
	OmegaE    *float64 `toml:"omega_e"`
	OmegaExe  *float64 `toml:"omega_e_x_e"`
	OmegaEye  *float64 `toml:"omega_e_y_e"`
	Be        *float64 `toml:"B_e"`
	AlphaE    *float64 `toml:"alpha_e"`
	GammaE    *float64 `toml:"gamma_e"`
	De        *float64 `toml:"D_e"`
	BetaE     *float64 `toml:"beta_e"`
	B0        *float64 `toml:"B_0"`
	D0        *float64 `toml:"D_0"`
	Abundance *float64 `toml:"abundance"`
}

type startFile struct {
	// Unit is the unit of the constants: cm-1 (default), MHz or GHz.
	Unit    *string      `toml:"unit"`
	Species []startEntry `toml:"species"`
}

// startKeys are the keys of a [[species]] table, in the order messages list them.
var startKeys = []string{"name", "omega_e", "omega_e_x_e", "omega_e_y_e", "B_e", "alpha_e", "gamma_e", "D_e", "beta_e", "B_0", "D_0", "abundance"}

// requiredConstants are the keys a species with its own constants must give
// for any band other than pure rotation in v = 0, which needs only B_e or
// B_0 (and optionally D_e or D_0).
var requiredConstants = []string{"omega_e", "omega_e_x_e", "B_e", "alpha_e", "D_e"}

// groundKeys are the keys of the v = 0 form, B_0 and D_0, which cannot be
// mixed with the equilibrium constants.
var equilibriumKeys = []string{"omega_e", "omega_e_x_e", "omega_e_y_e", "B_e", "alpha_e", "gamma_e", "D_e", "beta_e"}

// ReadStartFile reads a start file; see ReadStart.
func ReadStartFile(path string) (*Start, error) {
	f, err := openInput(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return ReadStart(f, path)
}

// ReadStart reads starting constants in the equilibrium notation of the trade
// (TOML; cm⁻¹, or the unit of a top-level unit = "MHz" or "GHz"):
//
//	[[species]]
//	name = "12C16O"
//	omega_e = 2169.8        # ωe
//	omega_e_x_e = 13.29     # ωexe
//	B_e = 1.9313            # Be
//	alpha_e = 0.0175        # αe
//	D_e = 6.1e-6            # De
//	abundance = 1.0         # optional, relative, for intensity prediction
//
// with optional omega_e_y_e (ωeye), gamma_e (γe) and beta_e (βe). They are
// turned into a Dunham expansion E(v, J) = Σ Y_kl (v+½)^k [J(J+1)]^l with
// Y10 = ωe, Y20 = −ωexe, Y30 = ωeye, Y01 = Be, Y11 = −αe, Y21 = γe,
// Y02 = −De, Y12 = −βe. For pure rotation in v = 0 only B_e (and optionally
// D_e) is needed, or instead B_0 and D_0, the constants of v = 0 (Y01 = B_0,
// Y02 = −D_0, no vibrational dependence); the bands of an assignment are
// checked against what each species gives (CheckBands). A [[species]] table
// with a name (and optionally an abundance) but no constants asks for that
// isotopologue too: its constants
// follow by the Dunham mass scaling Y_kl ∝ μ^−(k+2l)/2 from the first listed
// isotopologue of the same molecule that has constants. Unknown keys, missing
// or non-finite values and unknown isotopologues are errors naming the file,
// row and key.
func ReadStart(r io.Reader, name string) (*Start, error) {
	c := linelist.NewCollector(name)
	f, loc, ok := decodeStart(r, c)
	if !ok {
		return nil, inputError(c)
	}
	unit := linelist.Wavenumber
	if f.Unit != nil {
		u, err := linelist.ParseUnit(*f.Unit)
		if err != nil {
			c.Add(loc.find(-2, "unit"), "unit", "unknown unit %q: use %s", *f.Unit, linelist.UnitChoices)
			return nil, inputError(c)
		}
		unit = u
	}
	var gs []givenSpecies
	seen := map[string]int{}
	for i, e := range f.Species {
		if g, ok := checkStartEntry(c, loc, i, e, seen, unit); ok {
			gs = append(gs, g)
		}
	}
	if err := inputError(c); err != nil {
		return nil, err
	}
	st := &Start{File: name}
	for _, g := range gs {
		if sp, ok := startSpecies(c, g, gs, unit); ok {
			st.Species = append(st.Species, sp)
		}
	}
	if err := inputError(c); err != nil {
		return nil, err
	}
	return st, nil
}

// decodeStart reads and decodes a start file, reporting to c a read error,
// a file too large, TOML errors, unknown keys and a file without a
// [[species]] table; it reports false when any was found.
func decodeStart(r io.Reader, c *linelist.Collector) (startFile, *keyLocator, bool) {
	var f startFile
	data, err := textcheck.ReadLimited(r, textcheck.MaxSettingsBytes, "a start file")
	var large *textcheck.TooLargeError
	switch {
	case errors.As(err, &large):
		c.Add(0, "", "%v", err)
		return f, nil, false
	case err != nil:
		c.AddErr(0, "", "read error: "+err.Error(), err)
		return f, nil, false
	}
	var deep *textcheck.NestingError
	if err := textcheck.TOMLNesting(data, textcheck.MaxNesting); errors.As(err, &deep) {
		c.Add(deep.Line, "", "%v", err)
		return f, nil, false
	}
	md, err := toml.Decode(string(data), &f)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			field := ""
			if pe.LastKey != "" {
				field = pe.LastKey
			}
			c.AddErr(pe.Position.Line, field, pe.Message+textcheck.DecimalCommaHint(data, pe.Position.Line), err)
		} else {
			c.AddErr(0, "", tomlReason(err), err)
		}
		return f, nil, false
	}
	loc := newKeyLocator(data)
	for _, k := range md.Undecoded() {
		key := k.String()
		row, field := 0, key
		if len(k) >= 3 && k[0] == "species" {
			// Keys of array tables are reported without the index; find the
			// table by walking the file.
			row = loc.find(-1, k[len(k)-1])
		} else if len(k) == 2 && k[0] == "species" {
			row = loc.find(-1, k[1])
			field = "species." + k[1]
		} else {
			row = loc.find(-2, k[0])
		}
		c.Add(row, field, "unknown key (a [[species]] table takes %s)", strings.Join(startKeys, ", "))
	}
	if len(f.Species) == 0 && c.Count() == 0 {
		c.Add(0, "species", "no [[species]] table: name at least one isotopologue with its constants")
	}
	return f, loc, c.Count() == 0
}

// givenSpecies is one checked [[species]] table: its isotopologue, entry and
// line, whether it gives constants of its own, and what those lack for
// bands other than pure rotation in v = 0 (StartSpecies.lacks).
type givenSpecies struct {
	iso   species.Isotopologue
	e     startEntry
	row   int
	full  bool
	lacks string
}

// checkStartEntry checks the i-th [[species]] table: its name (an
// isotopologue not listed before, recorded in seen), finite values, positive
// ωe, Be and abundance, De ≥ 0, and for a table with constants the required
// ones. Problems go to c; it reports false when the table cannot be used.
// checkStartMagnitudes refuses constants no diatomic molecule has: any
// constant beyond linelist.MaxWavenumber in magnitude (above every
// dissociation energy), B_e above linelist.MaxRotationalConstant (that of
// H2), a typo such as omega_e = 1e308 that would otherwise fail deep inside
// the prediction without naming the key.
func checkStartMagnitudes(c *linelist.Collector, at func(string) int, label string, vals map[string]*float64, unit linelist.Unit) {
	for _, k := range startKeys[1:] {
		v := vals[k]
		if v == nil || k == "abundance" || math.IsNaN(*v) || math.IsInf(*v, 0) {
			continue
		}
		x, given := unit.ToWavenumber(*v), fmt.Sprintf("%g cm-1", *v)
		if unit != linelist.Wavenumber {
			given = fmt.Sprintf("%g %s (%g cm-1)", *v, unit, x)
		}
		switch {
		case math.Abs(x) > linelist.MaxWavenumber:
			c.Add(at(k), label+"."+k, "%s is beyond any constant of a diatomic molecule (|value| ≤ %g cm-1, above every dissociation energy)", given, linelist.MaxWavenumber)
		case (k == "B_e" || k == "B_0") && x > linelist.MaxRotationalConstant:
			c.Add(at(k), label+"."+k, "%s is above the largest rotational constant of any molecule (H2, about 61 cm-1; limit %g)", given, linelist.MaxRotationalConstant)
		}
	}
}

func checkStartEntry(c *linelist.Collector, loc *keyLocator, i int, e startEntry, seen map[string]int, unit linelist.Unit) (givenSpecies, bool) {
	row := loc.table(i)
	at := func(key string) int {
		if r := loc.find(i, key); r > 0 {
			return r
		}
		return row
	}
	if e.Name == nil {
		c.Add(row, fmt.Sprintf("species[%d].name", i+1), "missing: give the isotopologue, e.g. name = \"12C16O\"")
		return givenSpecies{}, false
	}
	iso, err := species.Parse(*e.Name)
	if err != nil {
		c.AddErr(at("name"), fmt.Sprintf("species[%d].name", i+1), strings.TrimPrefix(err.Error(), "species: "), err)
		return givenSpecies{}, false
	}
	if j, dup := seen[iso.Label]; dup {
		c.Add(at("name"), fmt.Sprintf("species[%d].name", i+1), "%s is listed twice (also as species %d)", iso.Label, j+1)
		return givenSpecies{}, false
	}
	seen[iso.Label] = i
	vals := map[string]*float64{"omega_e": e.OmegaE, "omega_e_x_e": e.OmegaExe, "omega_e_y_e": e.OmegaEye, "B_e": e.Be,
		"alpha_e": e.AlphaE, "gamma_e": e.GammaE, "D_e": e.De, "beta_e": e.BetaE, "B_0": e.B0, "D_0": e.D0, "abundance": e.Abundance}
	nConst := 0
	for _, k := range startKeys[1:] {
		v := vals[k]
		if v == nil {
			continue
		}
		if k != "abundance" {
			nConst++
		}
		if math.IsNaN(*v) || math.IsInf(*v, 0) {
			c.Add(at(k), fmt.Sprintf("%s.%s", iso.Label, k), "must be a finite number")
		}
	}
	for _, k := range []string{"omega_e", "B_e", "B_0", "abundance"} {
		if v := vals[k]; v != nil && !(*v > 0) {
			c.Add(at(k), fmt.Sprintf("%s.%s", iso.Label, k), "must be > 0, got %g", *v)
		}
	}
	for _, k := range []string{"D_e", "D_0"} {
		if v := vals[k]; v != nil && *v < 0 {
			c.Add(at(k), iso.Label+"."+k, "must be ≥ 0 (D > 0 for a bound state), got %g", *v)
		}
	}
	checkStartMagnitudes(c, at, iso.Label, vals, unit)
	g := givenSpecies{iso: iso, e: e, row: row, full: nConst > 0}
	if g.full {
		g.lacks = checkConstantSet(c, row, iso.Label, vals)
	}
	return g, true
}

// checkConstantSet checks which constants a species with constants gives: a
// rotational constant (B_e, or B_0 of the v = 0 form, which excludes the
// equilibrium constants), and returns what bands other than pure rotation in
// v = 0 would still need ("" when nothing).
func checkConstantSet(c *linelist.Collector, row int, label string, vals map[string]*float64) string {
	if vals["B_0"] != nil || vals["D_0"] != nil {
		var mixed []string
		for _, k := range equilibriumKeys {
			if vals[k] != nil {
				mixed = append(mixed, k)
			}
		}
		switch {
		case len(mixed) > 0:
			c.Add(row, label, "B_0 and D_0 give the constants of v = 0 alone; leave out %s, or give the equilibrium constants (%s) instead", strings.Join(mixed, ", "), strings.Join(requiredConstants, ", "))
		case vals["B_0"] == nil:
			c.Add(row, label, "D_0 without B_0: give B_0 too")
		}
		return "the equilibrium constants " + strings.Join(requiredConstants, ", ") + " (B_0 and D_0 describe v = 0 only)"
	}
	if vals["B_e"] == nil {
		c.Add(row, label, "missing B_e (or B_0): a species with constants needs a rotational constant; leave out all constants to scale them from another isotopologue")
		return ""
	}
	var miss []string
	for _, k := range requiredConstants {
		if vals[k] == nil {
			miss = append(miss, k)
		}
	}
	return strings.Join(miss, ", ")
}

// startSpecies builds the species of table g: its own constants, or those of
// the first table of gs of the same molecule with constants, mass-scaled.
// Problems go to c; it reports false when the species cannot be built.
func startSpecies(c *linelist.Collector, g givenSpecies, gs []givenSpecies, unit linelist.Unit) (StartSpecies, bool) {
	sp := StartSpecies{Label: g.iso.Label, Iso: g.iso, lacks: g.lacks, row: g.row}
	if g.e.Abundance != nil {
		sp.Abundance = *g.e.Abundance
	} else {
		sp.Abundance = NaturalAbundance(g.iso)
	}
	ref := &g
	if !g.full {
		ref = nil
		for k := range gs {
			if gs[k].full && sameMolecule(gs[k].iso, g.iso) {
				ref = &gs[k]
				break
			}
		}
		if ref == nil {
			c.Add(g.row, g.iso.Label, "no constants, and no isotopologue of the same molecule with constants to scale them from")
			return sp, false
		}
		sp.ScaledFrom = ref.iso.Label
		sp.lacks = ref.lacks
	}
	cs, idx, err := dunhamStart(ref.iso, g.iso, ref.e, unit)
	if err != nil {
		c.AddErr(g.row, g.iso.Label, err.Error(), err)
		return sp, false
	}
	sp.Constants, sp.Index = cs, idx
	if sp.Abundance == 0 {
		c.Add(g.row, g.iso.Label+".abundance", "the isotope table gives this isotopologue no natural abundance; give abundance = …")
		return sp, false
	}
	return sp, true
}

func tomlReason(err error) string {
	return strings.TrimPrefix(err.Error(), "toml: ")
}

// dunhamStart builds constants without covariance for target from the
// equilibrium constants of ref, given in unit (target == ref, or an
// isotopologue of the same molecule reached by mass scaling). B_0 and D_0
// stand for Y01 and −Y02 without vibrational dependence. It returns the
// constants and the species index of target.
func dunhamStart(ref, target species.Isotopologue, e startEntry, unit linelist.Unit) (*constants.Set, int, error) {
	vals := map[string]float64{}
	set := func(name string, v *float64, sign float64) {
		if v != nil {
			vals[name] = sign * unit.ToWavenumber(*v)
		}
	}
	set("Y01", e.B0, 1)
	set("Y02", e.D0, -1)
	set("Y10", e.OmegaE, 1)
	set("Y20", e.OmegaExe, -1)
	set("Y30", e.OmegaEye, 1)
	set("Y01", e.Be, 1)
	set("Y11", e.AlphaE, -1)
	set("Y21", e.GammaE, 1)
	set("Y02", e.De, -1)
	set("Y12", e.BetaE, -1)
	return dunhamConstants(ref, target, vals)
}

// dunhamConstants builds fixed Dunham constants (no covariance) from the Y_kl
// of ref, for target.
func dunhamConstants(ref, target species.Isotopologue, vals map[string]float64) (*constants.Set, int, error) {
	var terms []string
	for n := range vals {
		terms = append(terms, n)
	}
	sort.Strings(terms)
	isos := []species.Isotopologue{ref}
	idx := 0
	if target.Label != ref.Label {
		isos = append(isos, target)
		idx = 1
	}
	m, err := model.NewDunham(isos, model.DunhamOptions{Terms: terms})
	if err != nil {
		return nil, 0, fmt.Errorf("assign: %w", err)
	}
	ps := m.Params()
	for i := range ps {
		ps[i].Value = vals[ps[i].Name]
		ps[i].Fixed = true
	}
	return &constants.Set{Model: m, Params: ps, Values: model.Values(ps), Cov: mat.NewSymDense(1, []float64{0})}, idx, nil
}

// NaturalAbundance returns the product of the representative isotopic
// abundances of the two atoms (IUPAC/CIAAW 2013, from the embedded species
// table, entered from memory): the mole fraction of the isotopologue in a
// sample of natural isotopic composition.
func NaturalAbundance(iso species.Isotopologue) float64 {
	return iso.A.Abundance * iso.B.Abundance
}

func sameMolecule(a, b species.Isotopologue) bool {
	x, y := a.A.Symbol+"+"+a.B.Symbol, b.A.Symbol+"+"+b.B.Symbol
	if a.A.Symbol > a.B.Symbol {
		x = a.B.Symbol + "+" + a.A.Symbol
	}
	if b.A.Symbol > b.B.Symbol {
		y = b.B.Symbol + "+" + b.A.Symbol
	}
	return x == y
}

// StartFromConstants turns a constants record (an earlier fit) into a start:
// every species of the record, plus the isotopologues named in extra, which
// must belong to the molecule of a Dunham record (their constants follow by
// mass scaling; the covariance carries over since the fitted parameters are
// those of the reference). Abundances are natural (NaturalAbundance).
func StartFromConstants(c *constants.Set, name string, extra []string) (*Start, error) {
	if sts := c.States(); len(sts) > 1 || sts[0].Case() != states.Singlet {
		var terms []string
		for _, s := range sts {
			terms = append(terms, s.Term())
		}
		return nil, fmt.Errorf("assign: %s describes the electronic states %s: assign handles the bands of a ¹Σ ground state only; assign open-shell and electronic spectra by hand (or with predict --lines) and fit the line list", name, strings.Join(terms, ", "))
	}
	st := &Start{File: name}
	for i, lab := range c.Model.Species() {
		iso, err := species.Parse(lab)
		if err != nil {
			return nil, fmt.Errorf("assign: %s: %w", name, err)
		}
		st.Species = append(st.Species, StartSpecies{Label: iso.Label, Iso: iso, Abundance: NaturalAbundance(iso), Constants: c, Index: i})
	}
	for _, lab := range extra {
		iso, err := species.Parse(lab)
		if err != nil {
			return nil, fmt.Errorf("assign: --species: %w", err)
		}
		if model.SpeciesIndex(c.Model, iso.Label) >= 0 {
			continue
		}
		d, ok := c.Model.(*model.Dunham)
		if !ok {
			return nil, fmt.Errorf("assign: --species %s: %s is a %s record without that isotopologue; only a Dunham record can be mass-scaled to a new isotopologue", iso.Label, name, c.Model.Kind())
		}
		if len(d.BOBElements()) > 0 {
			return nil, fmt.Errorf("assign: --species %s: %s has Born–Oppenheimer-breakdown terms, which cannot be extended to a new isotopologue", iso.Label, name)
		}
		isos := append(d.Isotopologues(), iso)
		var terms []string
		for _, p := range c.Params {
			terms = append(terms, p.Name)
		}
		m, err := model.NewDunham(isos, model.DunhamOptions{Terms: terms})
		if err != nil {
			return nil, fmt.Errorf("assign: --species %s: %w", iso.Label, err)
		}
		nc := *c
		nc.Model = m
		st.Species = append(st.Species, StartSpecies{Label: iso.Label, Iso: iso, Abundance: NaturalAbundance(iso), Constants: &nc, Index: len(isos) - 1, ScaledFrom: d.Species()[0]})
	}
	return st, nil
}

// CheckBands refuses bands the starting constants of a species cannot
// predict: a species given by B alone (B_e or B_0, and D) serves pure rotation
// in v = 0 (band 0-0) only; every other band needs the equilibrium constants
// ω_e, ω_e x_e, B_e, α_e and D_e. The error names the start file, the line of
// the species' table and what is missing.
func (st *Start) CheckBands(bands []linelist.Band) error {
	for _, sp := range st.Species {
		if sp.lacks == "" {
			continue
		}
		for _, b := range bands {
			if b.VUp == 0 && b.VLo == 0 {
				continue
			}
			return failure.Errorf(failure.BadInput, "assign: %s: %s: band %s needs %s, which the start file does not give (B and D alone serve pure rotation in v = 0: --spectrum rotation --bands 0-0)",
				textcheck.At(st.File, sp.row), sp.Label, b, sp.lacks)
		}
	}
	return nil
}

// Select keeps the species named in labels (in that order), or all when
// labels is empty. Unknown labels are an error listing the start's species.
func (st *Start) Select(labels []string) error {
	if len(labels) == 0 {
		return nil
	}
	var out []StartSpecies
	for _, l := range labels {
		iso, err := species.Parse(l)
		if err != nil {
			return fmt.Errorf("assign: --species: %w", err)
		}
		found := false
		for _, s := range st.Species {
			if s.Label == iso.Label {
				out = append(out, s)
				found = true
			}
		}
		if !found {
			var have []string
			for _, s := range st.Species {
				have = append(have, s.Label)
			}
			return fmt.Errorf("assign: --species %s: %s has no such isotopologue (it has %s)", l, st.File, strings.Join(have, ", "))
		}
	}
	st.Species = out
	return nil
}

// Labels returns the species labels in order.
func (st *Start) Labels() []string {
	var out []string
	for _, s := range st.Species {
		out = append(out, s.Label)
	}
	return out
}

// keyLocator finds the line numbers of [[species]] tables and their keys in a
// TOML text, for messages.
type keyLocator struct {
	lines  []string
	tables []int // 0-based line index of each [[species]] header
}

var speciesHeader = regexp.MustCompile(`^\s*\[\[\s*species\s*\]\]`)

func newKeyLocator(data []byte) *keyLocator {
	l := &keyLocator{lines: strings.Split(string(data), "\n")}
	for i, s := range l.lines {
		if speciesHeader.MatchString(s) {
			l.tables = append(l.tables, i)
		}
	}
	return l
}

// table returns the 1-based line of the i-th [[species]] header (0 if unknown).
func (l *keyLocator) table(i int) int {
	if i >= 0 && i < len(l.tables) {
		return l.tables[i] + 1
	}
	return 0
}

// find returns the 1-based line of key inside the i-th [[species]] table;
// i = -1 searches every table, i = -2 the text before the first table.
func (l *keyLocator) find(i int, key string) int {
	from, to := 0, len(l.lines)
	switch {
	case i >= 0 && i < len(l.tables):
		from = l.tables[i] + 1
		if i+1 < len(l.tables) {
			to = l.tables[i+1]
		}
	case i == -2 && len(l.tables) > 0:
		to = l.tables[0]
	case i >= 0:
		return 0
	}
	re := regexp.MustCompile(`^\s*("?)` + regexp.QuoteMeta(key) + `("?)\s*=`)
	for j := from; j < to; j++ {
		if re.MatchString(l.lines[j]) {
			return j + 1
		}
	}
	return 0
}
