package states

import (
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strings"

	"github.com/BurntSushi/toml"

	"bandwright/fit/species"
	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
)

// File is an electronic-states file: the electronic states of a molecule,
// for the fit (which states the levels of the lines belong to, and starting
// values of their constants) and for the thermo stage (the states that enter
// the partition function and, optionally, the dissociation energy that bounds
// the level sum). One file serves every stage. It is read from TOML:
//
//	species = "16O16O"
//	dissociation_energy = 41260.0     # D0 in cm-1 above the lowest level, optional
//	dissociation_energy_sigma = 10.0  # its 1σ, cm-1, optional
//	[[state]]
//	label = "X"                       # no spaces or : [ ] = , (line lists and parameter names use it)
//	term_energy = 0.0                 # cm-1
//	spin_multiplicity = 3             # 2S+1
//	lambda = 0                        # |Λ|: 0 Σ, 1 Π, 2 Δ
//	symmetry = "g-"                   # Σ: + or - (g+, g-, u+, u- when homonuclear); homonuclear Λ>0: g or u
//	constants = "excited.json"        # optional constants record of this state (thermo)
//	omega_e = 1580.2                  # ω_e, cm-1, optional: for records without vibrational levels
//	omega_e_sigma = 0.5               # its 1σ, cm-1, optional
//	omega_e_x_e = 11.98               # ω_e x_e, cm-1, optional (needs omega_e): replaces the anharmonicity prior
//	omega_e_x_e_sigma = 0.05          # its 1σ, cm-1, optional
//	fine_structure_width = 4.0        # spread of the spin components of a level, cm-1, optional
//	products_energy = 0.0             # energy of the state's dissociation products above the ground state's, cm-1, optional
//	[state.start]                     # optional starting values of a fit, cm-1
//	B = 1.4377
//	lambda = 1.98
//
// term_energy is the energy of the state's model zero above the ground state's
// model zero (T_e between potential minima for Dunham models, the separation of
// the lowest vibrational levels for term-values models). Exactly one state has
// term_energy 0: the ground state, whose constants are the record given to the
// thermo stage. A state without constants is the ground-state manifold shifted by
// term_energy. Paths are relative to the file. The keys of [state.start] are
// the constants of the state's case (T, B, D, H, L, A, A_D, A_H, gamma,
// gamma_D, gamma_H, lambda, lambda_D, lambda_H, p, q, p_D, q_D, p_H, q_H; see
// package model).
//
// omega_e (with omega_e_sigma) gives the vibrational frequency of a state whose
// constants record has a single vibrational level (a pure-rotation fit): the
// levels v ≥ 1 are then extrapolated from it (see the package doc of thermo,
// Uncertainty budget). omega_e_x_e (with omega_e_x_e_sigma) gives the
// anharmonicity of those levels, x_e = omega_e_x_e/omega_e, in place of the
// prior that spans the ground states of diatomic molecules; it needs omega_e
// in the same state and lies below omega_e/2 (else G(v) would fall from v =
// 0). fine_structure_width is the spread of the 2S+1 spin
// components (or the spin–orbit components) of one rotational level, which the
// thermo stage does not resolve: about 2|λ| for a ³Σ state, |A| for a ²Π
// state; it sizes the fine-structure entry of the uncertainty budget.
// products_energy places the state's dissociation asymptote at D0 +
// products_energy above the lowest level (default: the ground state's
// asymptote).
type File struct {
	// Name is the file the states were read from (for messages).
	Name    string
	Species string
	// DissociationEnergy is D0 in cm⁻¹ above the lowest level; 0 when not given.
	DissociationEnergy float64
	// DissociationSigma is the 1σ of D0, cm⁻¹; 0 when not given.
	DissociationSigma float64
	// States are the states in the order of the file.
	States []State
	// Start are the starting values of [state.start], state by state in
	// file order, names sorted.
	Start     []Start
	speciesAt string // "name:line" of the species key, for messages
}

// Start is the starting value (cm⁻¹) of one constant of one electronic state
// for a nonlinear fit.
type Start struct {
	State string // label; empty: the ground state
	Name  string // "T", "B", "D", "A", "lambda", "gamma", "p", "q", …
	Value float64
}

// startNames are the keys of [state.start].
var startNames = []string{"T", "B", "D", "H", "L", "A", "A_D", "A_H", "gamma", "gamma_D", "gamma_H", "lambda", "lambda_D", "lambda_H", "p", "q", "p_D", "q_D", "p_H", "q_H"}

type rawFile struct {
	Species            *string    `toml:"species"`
	DissociationEnergy *float64   `toml:"dissociation_energy"`
	DissociationSigma  *float64   `toml:"dissociation_energy_sigma"`
	State              []rawState `toml:"state"`
}

type rawState struct {
	Label            *string            `toml:"label"`
	TermEnergy       *float64           `toml:"term_energy"`
	SpinMultiplicity *int               `toml:"spin_multiplicity"`
	Lambda           *int               `toml:"lambda"`
	Symmetry         *string            `toml:"symmetry"`
	Constants        *string            `toml:"constants"`
	OmegaE           *float64           `toml:"omega_e"`
	OmegaESigma      *float64           `toml:"omega_e_sigma"`
	OmegaEXE         *float64           `toml:"omega_e_x_e"`
	OmegaEXESigma    *float64           `toml:"omega_e_x_e_sigma"`
	FineWidth        *float64           `toml:"fine_structure_width"`
	ProductsEnergy   *float64           `toml:"products_energy"`
	Start            map[string]float64 `toml:"start"`
}

const statesKeys = "species, dissociation_energy, dissociation_energy_sigma, [[state]] with label, term_energy, spin_multiplicity, lambda, symmetry, constants, omega_e, omega_e_sigma, omega_e_x_e, omega_e_x_e_sigma, fine_structure_width, products_energy, [state.start]"

// Read reads and checks an electronic-states file. name is the file name
// used in messages. Unknown keys, missing required keys (term_energy, spin_multiplicity,
// lambda of every state), non-finite or negative energies, malformed symmetry
// labels, labels given twice or with characters that line lists and parameter
// names cannot carry, unknown or non-finite starting values and text that is not
// UTF-8 are errors naming the file, the line (where the key can be found in the
// text) and the field; a number written with a decimal comma gets a hint. Files
// larger than textcheck.MaxSettingsBytes or nested deeper than
// textcheck.MaxNesting are refused before they are parsed. Its errors are bad
// input (failure.BadInput, exit code 1).
func Read(r io.Reader, name string) (*File, error) {
	sf, err := read(r, name)
	if err != nil {
		return nil, failure.Wrap(failure.BadInput, err)
	}
	return sf, nil
}

func read(r io.Reader, name string) (*File, error) {
	b, err := textcheck.ReadLimited(r, textcheck.MaxSettingsBytes, "an electronic-states file")
	if err != nil {
		return nil, fmt.Errorf("states: %s: %w", name, err)
	}
	var deep *textcheck.NestingError
	if err := textcheck.TOMLNesting(b, textcheck.MaxNesting); errors.As(err, &deep) {
		return nil, fmt.Errorf("states: %s:%d: %w", name, deep.Line, err)
	}
	raw, err := decodeStates(b, name)
	if err != nil {
		return nil, err
	}
	at := statesText{name: name, b: b}
	c := &File{Name: name}
	if err := c.readTop(raw, at); err != nil {
		return nil, err
	}
	if len(raw.State) == 0 {
		return nil, fmt.Errorf("states: %s: state: no [[state]] given (the ground state at least)", name)
	}
	ground := -1
	for i, rs := range raw.State {
		s, err := readStateEntry(i, rs, ground, at)
		if err != nil {
			return nil, err
		}
		if Index(c.States, s.Label) >= 0 {
			return nil, fmt.Errorf("states: %s: state %d: label: %q is the label of an earlier state", at.state(i, "label"), i+1, s.Label)
		}
		if s.TermEnergy == 0 {
			ground = i
		}
		c.States = append(c.States, s)
		starts, err := readStart(i, s, rs.Start, at)
		if err != nil {
			return nil, err
		}
		c.Start = append(c.Start, starts...)
	}
	if ground < 0 {
		return nil, fmt.Errorf("states: %s: term_energy: no state has term_energy 0 (the ground state)", name)
	}
	return c, nil
}

// statesText is the text of an electronic-states file, to find where a key is
// written.
type statesText struct {
	name string
	b    []byte
}

// top returns "name:line" of a top-level key (name alone when the line
// cannot be found).
func (t statesText) top(key string) string {
	return textcheck.At(t.name, textcheck.KeyLine(t.b, "", -1, key))
}

// state returns "name:line" of key in [[state]] number i (0-based), the line
// of the table header when the key is not written.
func (t statesText) state(i int, key string) string {
	line := textcheck.KeyLine(t.b, "state", i, key)
	if line == 0 {
		line = textcheck.KeyLine(t.b, "state", i, "")
	}
	return textcheck.At(t.name, line)
}

// start returns "name:line" of key in the [state.start] table of [[state]]
// number i (0-based), the line of the [[state]] header when the key cannot
// be found (the scan follows headers only, as textcheck.KeyLine).
func (t statesText) start(i int, key string) string {
	count, inside := -1, false
	for n, l := range strings.Split(string(t.b), "\n") {
		h := strings.TrimSpace(l)
		if strings.HasPrefix(h, "[") {
			name := strings.TrimSpace(strings.Trim(strings.SplitN(h, "#", 2)[0], "[] \t"))
			if strings.HasPrefix(h, "[[") && name == "state" {
				count++
			}
			inside = count == i && !strings.HasPrefix(h, "[[") && name == "state.start"
			continue
		}
		if k, _, ok := strings.Cut(h, "="); inside && ok && strings.Trim(strings.TrimSpace(k), `"`) == key {
			return textcheck.At(t.name, n+1)
		}
	}
	return t.state(i, "")
}

// decodeStates decodes the TOML of an electronic-states file. A syntax error
// names the line and the key (with a hint for a decimal comma); a key the file
// does not know is an error at the line where it is written.
func decodeStates(b []byte, name string) (rawFile, error) {
	var raw rawFile
	md, err := toml.Decode(string(b), &raw)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			field := ""
			if pe.LastKey != "" {
				field = pe.LastKey + ": "
			}
			return raw, fmt.Errorf("states: %s:%d: %s%s%s", name, pe.Position.Line, field, pe.Message, textcheck.DecimalCommaHint(b, pe.Position.Line))
		}
		return raw, fmt.Errorf("states: %s: %w", name, err)
	}
	und := md.Undecoded()
	if len(und) == 0 {
		return raw, nil
	}
	keys := make([]string, len(und))
	for i, k := range und {
		keys[i] = k.String()
	}
	sort.Strings(keys)
	at := statesText{name: name, b: b}
	where := name
	for _, k := range und {
		if k.String() != keys[0] {
			continue
		}
		if len(k) == 2 && k[0] == "state" {
			for i := range raw.State {
				if l := textcheck.KeyLine(b, "state", i, k[1]); l > 0 {
					where = textcheck.At(name, l)
					break
				}
			}
		} else if len(k) == 1 {
			where = at.top(k[0])
		}
	}
	return raw, fmt.Errorf("states: %s: unknown key %q (an electronic-states file knows %s)", where, keys[0], statesKeys)
}

// readTop reads and checks the top-level keys: species and dissociation_energy.
func (c *File) readTop(raw rawFile, at statesText) error {
	if raw.Species != nil {
		if why := textcheck.InvalidUTF8(*raw.Species); why != "" {
			return fmt.Errorf("states: %s: species: %s", at.top("species"), why)
		}
		iso, err := species.Parse(*raw.Species)
		if err != nil {
			return fmt.Errorf("states: %s: species: %w", at.top("species"), err)
		}
		c.Species = iso.Label
		c.speciesAt = at.top("species")
	}
	if raw.DissociationEnergy != nil {
		d := *raw.DissociationEnergy
		if !(d > 0) || math.IsInf(d, 0) {
			return fmt.Errorf("states: %s: dissociation_energy: %v cm-1 must be a finite number > 0", at.top("dissociation_energy"), d)
		}
		c.DissociationEnergy = d
	}
	if raw.DissociationSigma != nil {
		d := *raw.DissociationSigma
		if raw.DissociationEnergy == nil {
			return fmt.Errorf("states: %s: dissociation_energy_sigma: given without dissociation_energy", at.top("dissociation_energy_sigma"))
		}
		if !(d > 0) || math.IsInf(d, 0) || d >= c.DissociationEnergy {
			return fmt.Errorf("states: %s: dissociation_energy_sigma: %v cm-1 must be a finite number > 0 and below dissociation_energy", at.top("dissociation_energy_sigma"), d)
		}
		c.DissociationSigma = d
	}
	return nil
}

// readStateEntry reads and checks [[state]] number i (0-based); ground is the
// index of the state with term energy 0 among the earlier ones, −1 if none.
func readStateEntry(i int, rs rawState, ground int, at statesText) (State, error) {
	what := fmt.Sprintf("state %d", i+1)
	var s State
	if rs.Label != nil {
		s.Label = *rs.Label
		if why := textcheck.InvalidUTF8(s.Label); why != "" {
			return s, fmt.Errorf("states: %s: %s: label: %s", at.state(i, "label"), what, why)
		}
		if s.Label == "" || strings.ContainsAny(s.Label, ":[]=, \t\n\r") {
			return s, fmt.Errorf("states: %s: %s: label: %q: a label is non-empty, without spaces or any of : [ ] = , (line lists and parameter names carry it)", at.state(i, "label"), what, s.Label)
		}
		what += fmt.Sprintf(" (%s)", s.Label)
	} else {
		s.Label = fmt.Sprintf("S%d", i+1)
	}
	// fail formats the error of key of this state.
	fail := func(key, format string, a ...any) error {
		return fmt.Errorf("states: %s: %s: %s: %s", at.state(i, key), what, key, fmt.Sprintf(format, a...))
	}
	if rs.TermEnergy == nil {
		return s, fail("term_energy", "missing (cm-1; 0 for the ground state)")
	}
	s.TermEnergy = *rs.TermEnergy
	if !(s.TermEnergy >= 0) || math.IsInf(s.TermEnergy, 0) {
		return s, fail("term_energy", "%v must be a finite number ≥ 0 cm-1", s.TermEnergy)
	}
	if s.TermEnergy == 0 && ground >= 0 {
		return s, fail("term_energy", "0 is already the term energy of state %d; exactly one state is the ground state", ground+1)
	}
	if rs.SpinMultiplicity == nil {
		return s, fail("spin_multiplicity", "missing (2S+1: 1 singlet, 2 doublet, 3 triplet, …)")
	}
	s.Multiplicity = *rs.SpinMultiplicity
	if s.Multiplicity < 1 || s.Multiplicity > 20 {
		return s, fail("spin_multiplicity", "%d must be within 1…20", s.Multiplicity)
	}
	if rs.Lambda == nil {
		return s, fail("lambda", "missing (|Λ|: 0 Σ, 1 Π, 2 Δ, …)")
	}
	s.Lambda = *rs.Lambda
	if s.Lambda < 0 || s.Lambda > 10 {
		return s, fail("lambda", "%d must be within 0…10", s.Lambda)
	}
	if rs.Symmetry != nil {
		y, err := species.ParseStateSymmetry(strings.TrimSpace(*rs.Symmetry))
		if err != nil {
			return s, fail("symmetry", "%v", err)
		}
		if s.Lambda > 0 && y.Reflection != 0 {
			return s, fail("symmetry", "%q: a state with Λ > 0 has both ± components; give only g or u", *rs.Symmetry)
		}
		s.Symmetry = y
	}
	if rs.Constants != nil {
		s.Constants = strings.TrimSpace(*rs.Constants)
		if s.Constants == "" {
			return s, fail("constants", "empty path")
		}
		if why := textcheck.InvalidUTF8(s.Constants); why != "" {
			return s, fail("constants", "%s", why)
		}
		if s.TermEnergy == 0 {
			return s, fail("constants", "the ground state (term_energy 0) takes its constants from the record given to thermo; remove this key")
		}
	}
	if err := readStateBudgetKeys(&s, rs, fail); err != nil {
		return s, err
	}
	return s, nil
}

// readStateBudgetKeys reads the keys of a [[state]] that feed the uncertainty
// budget: omega_e and omega_e_sigma (ω_e > 0, its σ ≥ 0 and below ω_e, only
// with omega_e), omega_e_x_e and omega_e_x_e_sigma (see readAnharmonicity),
// fine_structure_width (≥ 0) and products_energy (≥ 0), all finite, in
// cm⁻¹.
func readStateBudgetKeys(s *State, rs rawState, fail func(key, format string, a ...any) error) error {
	finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
	if rs.OmegaE != nil {
		if w := *rs.OmegaE; !(w > 0) || !finite(w) {
			return fail("omega_e", "%v cm-1 must be a finite number > 0", w)
		}
		s.OmegaE = *rs.OmegaE
	}
	if rs.OmegaESigma != nil {
		if rs.OmegaE == nil {
			return fail("omega_e_sigma", "given without omega_e")
		}
		if w := *rs.OmegaESigma; !(w >= 0) || !finite(w) || w >= s.OmegaE {
			return fail("omega_e_sigma", "%v cm-1 must be a finite number ≥ 0 and below omega_e", w)
		}
		s.OmegaESigma = *rs.OmegaESigma
	}
	if err := readAnharmonicity(s, rs, fail); err != nil {
		return err
	}
	if rs.FineWidth != nil {
		if w := *rs.FineWidth; !(w >= 0) || !finite(w) {
			return fail("fine_structure_width", "%v cm-1 must be a finite number ≥ 0", w)
		}
		w := *rs.FineWidth
		s.FineStructureWidth = &w
	}
	if rs.ProductsEnergy != nil {
		if w := *rs.ProductsEnergy; !(w >= 0) || !finite(w) {
			return fail("products_energy", "%v cm-1 must be a finite number ≥ 0", w)
		}
		s.ProductsEnergy = *rs.ProductsEnergy
	}
	return nil
}

// readAnharmonicity reads omega_e_x_e and omega_e_x_e_sigma of a [[state]]
// whose omega_e has been read into s: 0 < ω_e x_e < ω_e/2 (a G(v) =
// ω_e(v+½) − ω_e x_e(v+½)² that rises from v = 0 to v = 1 needs ω_e x_e <
// ω_e/2), given only with omega_e; its σ ≥ 0 and below ω_e x_e, given only
// with omega_e_x_e; all finite, cm⁻¹.
func readAnharmonicity(s *State, rs rawState, fail func(key, format string, a ...any) error) error {
	finite := func(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
	if rs.OmegaEXE != nil {
		w := *rs.OmegaEXE
		if rs.OmegaE == nil {
			return fail("omega_e_x_e", "given without omega_e (x_e = omega_e_x_e/omega_e needs both in the same state)")
		}
		if !(w > 0) || !finite(w) || w >= s.OmegaE/2 {
			return fail("omega_e_x_e", "%v cm-1 must be a finite number > 0 and below omega_e/2 = %g", w, s.OmegaE/2)
		}
		s.OmegaEXE = w
	}
	if rs.OmegaEXESigma != nil {
		w := *rs.OmegaEXESigma
		if rs.OmegaEXE == nil {
			return fail("omega_e_x_e_sigma", "given without omega_e_x_e")
		}
		if !(w >= 0) || !finite(w) || w >= s.OmegaEXE {
			return fail("omega_e_x_e_sigma", "%v cm-1 must be a finite number ≥ 0 and below omega_e_x_e", w)
		}
		s.OmegaEXESigma = w
	}
	return nil
}

// CheckSpecies checks that an electronic-states file naming its species is
// used with a constants record (named record in messages) that describes it:
// have lists the record's isotopologues.
func (c *File) CheckSpecies(record string, have []string) error {
	if c.Species == "" {
		return nil
	}
	for _, h := range have {
		if h == c.Species {
			return nil
		}
	}
	at := c.speciesAt
	if at == "" {
		at = c.Name
	}
	return fmt.Errorf("states: %s: species: the electronic-states file is for %s, but %s has %s (correct the file, or give the constants of %s)", at, c.Species, record, strings.Join(have, ", "), c.Species)
}

// Check checks the file against the isotopologue the thermo stage computes:
// the species must match when the file names one, homonuclear molecules need
// the g/u (and for Σ states ±) symmetry of every state, and molecules of two
// different elements have no g/u symmetry.
func (c *File) Check(iso species.Isotopologue) error {
	if c.Species != "" && c.Species != iso.Label {
		return fmt.Errorf("states: %s: species: the electronic-states file is for %s, the constants are used for %s", c.Name, c.Species, iso.Label)
	}
	for i, s := range c.States {
		if err := iso.CheckStateSymmetry(s.Lambda, s.Symmetry); err != nil {
			return fmt.Errorf("states: %s: state %d (%s): symmetry: %w", c.Name, i+1, s.Label, err)
		}
	}
	return nil
}

// readStart reads the [state.start] table of state s (number i, 0-based).
func readStart(i int, s State, raw map[string]float64, at statesText) ([]Start, error) {
	var names []string
	for k := range raw {
		names = append(names, k)
	}
	sort.Strings(names)
	var out []Start
	for _, n := range names {
		v := raw[n]
		where := at.start(i, n)
		switch {
		case !contains(startNames, n):
			return nil, fmt.Errorf("states: %s: state %d (%s): start.%s: not a constant (starting values are given for %s)", where, i+1, s.Label, n, strings.Join(startNames, ", "))
		case math.IsNaN(v) || math.IsInf(v, 0):
			return nil, fmt.Errorf("states: %s: state %d (%s): start.%s: %v must be a finite number (cm-1)", where, i+1, s.Label, n, v)
		}
		label := s.Label
		if s.TermEnergy == 0 {
			label = ""
		}
		out = append(out, Start{State: label, Name: n, Value: v})
	}
	return out, nil
}

func contains(xs []string, s string) bool {
	for _, x := range xs {
		if x == s {
			return true
		}
	}
	return false
}

// Ordered returns the states with the ground state (term energy 0) first and
// the others in file order: the order of the models.
func (c *File) Ordered() []State {
	var out []State
	for _, s := range c.States {
		if s.TermEnergy == 0 {
			out = append(out, s)
		}
	}
	for _, s := range c.States {
		if s.TermEnergy != 0 {
			out = append(out, s)
		}
	}
	return out
}
