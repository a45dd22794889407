package species

import (
	"errors"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// The embedded table must carry the reference masses and spins exactly as listed in
// docs/references.md: AME2020 (Wang et al., Chinese Phys. C 45 (2021) 030003) masses and
// NUBASE2020 (Kondev et al., Chinese Phys. C 45 (2021) 030001) spins, from memory.
func TestTableReferenceIsotopes(t *testing.T) {
	for _, c := range []struct {
		sym       string
		a         int
		mass      float64
		twiceSpin int
	}{
		{"H", 1, 1.00782503223, 1},
		{"H", 2, 2.01410177812, 2},
		{"H", 3, 3.01604928132, 1}, // tritium, AME2020 from memory
		{"C", 12, 12, 0},           // 12C is 12 u by definition
		{"C", 13, 13.00335483507, 1},
		{"N", 14, 14.00307400443, 2},
		{"N", 15, 15.00010889888, 1},
		{"O", 16, 15.99491461957, 0},
		{"O", 17, 16.99913175650, 5},
		{"O", 18, 17.99915961286, 0},
		{"F", 19, 18.99840316273, 1},
		{"S", 32, 31.9720711744, 0},
		{"Cl", 35, 34.968852682, 3},
		{"Cl", 37, 36.965902602, 3},
		{"Br", 79, 78.9183376, 3},
		{"Br", 81, 80.9162897, 3},
		{"I", 127, 126.9044719, 5},
	} {
		iso, err := LookupIsotope(c.sym, c.a)
		if err != nil {
			t.Errorf("%d%s: %v", c.a, c.sym, err)
			continue
		}
		// The CSV text and the Go literal are the same decimal, so they parse to the
		// same float64; the tolerance only guards against formatting noise.
		if !scalar.EqualWithinAbsOrRel(iso.Mass, c.mass, 0, 1e-15) {
			t.Errorf("%d%s mass = %.12f u, want %.12f (AME2020)", c.a, c.sym, iso.Mass, c.mass)
		}
		if iso.TwiceSpin != c.twiceSpin {
			t.Errorf("%d%s 2I = %d, want %d (NUBASE2020)", c.a, c.sym, iso.TwiceSpin, c.twiceSpin)
		}
		if iso.Label() != strconv.Itoa(c.a)+c.sym {
			t.Errorf("label %q, want %d%s", iso.Label(), c.a, c.sym)
		}
	}
}

// The brief asks for at least the stable isotopes of these elements.
func TestTableCoversRequiredElements(t *testing.T) {
	// Stable isotopes of each element, common practice (chart of nuclides).
	want := map[string][]int{
		"H": {1, 2}, "Li": {6, 7}, "B": {10, 11}, "C": {12, 13}, "N": {14, 15},
		"O": {16, 17, 18}, "F": {19}, "Na": {23}, "Si": {28, 29, 30}, "P": {31},
		"S": {32, 33, 34, 36}, "Cl": {35, 37}, "K": {39, 41}, "Br": {79, 81}, "I": {127},
	}
	for sym, as := range want {
		for _, a := range as {
			if _, err := LookupIsotope(sym, a); err != nil {
				t.Errorf("missing stable isotope: %v", err)
			}
		}
	}
}

// Representative abundances (IUPAC 2013) of each naturally occurring element add up to 1.
func TestAbundancesSumToOne(t *testing.T) {
	for _, e := range Elements() {
		sum := 0.0
		for _, iso := range e.Isotopes {
			sum += iso.Abundance
		}
		if !scalar.EqualWithinAbs(sum, 1, 1e-4) {
			t.Errorf("%s: abundances sum to %.6f, want 1 within 1e-4", e.Symbol, sum)
		}
	}
}

// The abundance-weighted mean of the AME2020 masses must reproduce the standard atomic
// weight: a check that catches a mistyped mass, abundance or weight in the table. The
// tolerance is 1e-3 u, except for Li, whose IUPAC 2005 weight 6.941(2) describes
// commercially processed lithium rather than the representative composition (its stated
// uncertainty is 0.002).
func TestMeanMassMatchesAtomicWeight(t *testing.T) {
	for _, e := range Elements() {
		mean := 0.0
		for _, iso := range e.Isotopes {
			mean += iso.Abundance * iso.Mass
		}
		tol := 1e-3
		if e.Symbol == "Li" {
			tol = 2e-3
		}
		if !scalar.EqualWithinAbs(mean, e.AtomicWeight, tol) {
			t.Errorf("%s: mean isotopic mass %.6f u, standard atomic weight %.6f g/mol, differ by more than %g",
				e.Symbol, mean, e.AtomicWeight, tol)
		}
	}
}

func TestIsotopeMethods(t *testing.T) {
	for _, c := range []struct {
		sym   string
		a     int
		label string
		spin  float64
		boson bool
		radio bool
	}{
		{"H", 1, "1H", 0.5, false, false},
		{"H", 2, "2H", 1, true, false},
		{"H", 3, "3H", 0.5, false, true},
		{"N", 14, "14N", 1, true, false},
		{"O", 17, "17O", 2.5, false, false},
		{"Cl", 35, "35Cl", 1.5, false, false},
		{"K", 40, "40K", 4, true, true},
	} {
		iso, err := LookupIsotope(c.sym, c.a)
		if err != nil {
			t.Fatal(err)
		}
		if iso.Label() != c.label || iso.Spin() != c.spin || iso.IsBoson() != c.boson || iso.Radioactive() != c.radio {
			t.Errorf("%s: label %q spin %v boson %v radioactive %v, want %q %v %v %v",
				c.label, iso.Label(), iso.Spin(), iso.IsBoson(), iso.Radioactive(), c.label, c.spin, c.boson, c.radio)
		}
		if iso.SpinDegeneracy() != int(2*c.spin)+1 {
			t.Errorf("%s: 2I+1 = %d, want %d", c.label, iso.SpinDegeneracy(), int(2*c.spin)+1)
		}
	}
	if h3, _ := LookupIsotope("H", 3); h3.Abundance != 0 {
		t.Errorf("3H abundance %v, want 0 (absent from natural hydrogen)", h3.Abundance)
	}
}

func TestIsotopesSortedCopy(t *testing.T) {
	all := Isotopes()
	if len(all) < 30 {
		t.Fatalf("only %d isotopes in the table", len(all))
	}
	for i := 1; i < len(all); i++ {
		p, q := all[i-1], all[i]
		if p.Z > q.Z || (p.Z == q.Z && p.A >= q.A) {
			t.Errorf("not sorted by Z then A: %s before %s", p.Label(), q.Label())
		}
	}
	all[0].Mass = 99
	if Isotopes()[0].Mass == 99 {
		t.Error("Isotopes returns the table itself, not a copy")
	}
	e, err := LookupElement("Cl")
	if err != nil {
		t.Fatal(err)
	}
	if e.Z != 17 || len(e.Isotopes) != 2 || e.AtomicWeight != 35.453 {
		t.Errorf("Cl = %+v", e)
	}
	e.Isotopes[0].Mass = 99
	if e2, _ := LookupElement("Cl"); e2.Isotopes[0].Mass == 99 {
		t.Error("LookupElement shares its isotope slice with the table")
	}
}

func TestLookupErrors(t *testing.T) {
	for _, c := range []struct {
		sym  string
		a    int
		is   error
		want string
	}{
		{"Xx", 1, ErrUnknownElement, `species: unknown element "Xx"`},
		{"CL", 35, ErrUnknownElement, `did you mean "Cl"?`},
		{"Cl", 99, ErrUnknownIsotope, "no isotope 99 of Cl (the table has 35Cl, 37Cl)"},
		{"D", 2, ErrUnknownElement, `unknown element "D"`}, // D is a label alias, not a symbol
	} {
		_, err := LookupIsotope(c.sym, c.a)
		if !errors.Is(err, c.is) || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "species: ") {
			t.Errorf("LookupIsotope(%q, %d) error %v, want %v containing %q", c.sym, c.a, err, c.is, c.want)
		}
	}
	if _, err := LookupElement("cl"); !errors.Is(err, ErrUnknownElement) || !strings.Contains(err.Error(), `"cl"`) {
		t.Errorf("LookupElement(cl) error %v", err)
	}
}

// loadTable must refuse a malformed table and name the line and field.
func TestLoadTableRejects(t *testing.T) {
	const header = "symbol,z,a,mass_u,twice_spin,abundance,atomic_weight,radioactive\n"
	for _, c := range []struct {
		name, csv, want string
	}{
		{"missing column", "symbol,z,a,mass_u,twice_spin,abundance,atomic_weight\nH,1,1,1.0078,1,1,1.008\n", `lacks column "radioactive"`},
		{"no rows", header, "no isotope rows"},
		{"bad symbol", header + "cl,17,35,34.97,3,0.76,35.45,no\n", "line 2: field symbol"},
		{"bad Z", header + "H,0,1,1.0078,1,1,1.008,no\n", "line 2: field z"},
		{"A below Z", header + "C,6,5,5.0,1,1,12,no\n", "line 2: field a"},
		{"mass far from A", header + "H,1,1,2.0078,1,1,1.008,no\n", "line 2: field mass_u"},
		{"spin parity", header + "H,1,1,1.0078,2,1,1.008,no\n", "wrong parity"},
		{"negative spin", header + "H,1,2,2.014,-2,1,1.008,no\n", "line 2: field twice_spin"},
		{"abundance above 1", header + "H,1,1,1.0078,1,1.5,1.008,no\n", "line 2: field abundance"},
		{"abundance NaN", header + "H,1,1,1.0078,1,NaN,1.008,no\n", "line 2: field abundance"},
		{"bad weight", header + "H,1,1,1.0078,1,1,-1,no\n", "line 2: field atomic_weight"},
		{"bad flag", header + "H,1,1,1.0078,1,1,1.008,maybe\n", "line 2: field radioactive"},
		{"weight differs", header + "H,1,1,1.0078,1,0.9,1.008,no\nH,1,2,2.014,2,0.1,1.00794,no\n", "line 3: field atomic_weight"},
		{"Z differs", header + "H,1,1,1.0078,1,0.9,1.008,no\nH,2,2,2.014,2,0.1,1.008,no\n", "line 3: field z"},
		{"symbol differs", header + "H,1,1,1.0078,1,0.9,1.008,no\nHe,1,2,2.014,2,0.1,1.008,no\n", "line 3: field symbol"},
		{"duplicate", header + "H,1,1,1.0078,1,0.5,1.008,no\nH,1,1,1.0078,1,0.5,1.008,no\n", "appears twice"},
		{"short row", header + "H,1,1\n", "isotopes.csv"},
	} {
		_, err := loadTable(strings.NewReader(c.csv))
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.HasPrefix(err.Error(), "species: isotopes.csv") {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
	// Comments, column order and header case are free.
	tb, err := loadTable(strings.NewReader("# comment\nZ,Symbol,A,radioactive,mass_u,twice_spin,abundance,atomic_weight\n1,H,1,no,1.0078,1,1,1.008\n"))
	if err != nil || len(tb.isotopes) != 1 || tb.isotopes[0].Symbol != "H" || tb.elements["H"].AtomicWeight != 1.008 {
		t.Errorf("reordered table: %v, %+v", err, tb)
	}
}
