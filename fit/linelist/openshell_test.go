package linelist

import (
	"bytes"
	"errors"
	"strings"
	"testing"

	"bandwright/fit/species"
	"bandwright/fit/states"
)

var (
	o2States = []states.State{{Label: "X", Multiplicity: 3, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '-'}}}
	noStates = []states.State{
		{Label: "X", Multiplicity: 2, Lambda: 1},
		{Label: "A", Multiplicity: 2, Symmetry: species.StateSymmetry{Reflection: '+'}, TermEnergy: 43965.7},
	}
)

const openHdr = "species,v_up,J_up,v_lo,J_lo,position,unc,unit,N_up,N_lo,F_up,F_lo,parity_up,parity_lo,state_up,state_lo\n"

// TestOpenShellColumns reads O2 fine-structure lines given by N and J (16O2
// X³Σg⁻: F and parity follow) and NO lines given by F and parity, checks the
// completed labels and writes them back.
func TestOpenShellColumns(t *testing.T) {
	in := openHdr +
		// N = 1: J = 1 ← 2 (N+ line) and J = 1 ← 0 (N− line), magnetic-dipole lines within N.
		"16O16O,0,1,0,2,56264.774,0.05,MHz,1,1,,,,,,\n" +
		"16O16O,0,1,0,0,118750.343,0.05,MHz,1,1,,,,,,\n"
	list, err := Read(strings.NewReader(in), "o2.csv")
	if err != nil {
		t.Fatal(err)
	}
	if err := CheckStates(list, o2States); err != nil {
		t.Fatal(err)
	}
	want := []OpenShell{
		{Up: LevelLabel{N: 1, F: 2, Parity: states.ParityF}, Lo: LevelLabel{N: 1, F: 1, Parity: states.ParityE}},
		{Up: LevelLabel{N: 1, F: 2, Parity: states.ParityF}, Lo: LevelLabel{N: 1, F: 3, Parity: states.ParityE}},
	}
	for i, w := range want {
		if got := *list.Lines[i].Open; got != w {
			t.Errorf("line %d: %+v, want %+v", i+1, got, w)
		}
	}
	in = openHdr +
		"14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,1,1,e,e,,\n" +
		"14N16O,0,0.5,0,1.5,44200.1,0.01,cm-1,,,,2,f,f,A,\n" +
		"14N16O,0,1.5,0,1.5,0.0118,1e-6,cm-1,,,1,1,e,f,X,X\n"
	list, err = Read(strings.NewReader(in), "no.csv")
	if err != nil {
		t.Fatal(err)
	}
	if err := CheckStates(list, noStates); err != nil {
		t.Fatal(err)
	}
	l := list.Lines[1]
	if l.J2Up() != 1 || l.J2Lo() != 3 || l.Open.Up != (LevelLabel{State: "A", N: 1, F: 2, Parity: states.ParityF}) || l.Open.Lo.N != 2 {
		t.Errorf("A–X line: J2 %d %d, %+v", l.J2Up(), l.J2Lo(), *l.Open)
	}
	if list.Lines[2].Open.Up.State != "" {
		t.Errorf("the ground state's label is kept: %+v", list.Lines[2].Open.Up)
	}
	var buf bytes.Buffer
	if err := Write(&buf, list.Lines, nil); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), ",3.5,") || !strings.Contains(buf.String(), "parity_lo") {
		t.Errorf("written:\n%s", buf.String())
	}
	back, err := Read(&buf, "back.csv")
	if err != nil {
		t.Fatal(err)
	}
	for i := range back.Lines {
		if *back.Lines[i].Open != *list.Lines[i].Open || back.Lines[i].J2Up() != list.Lines[i].J2Up() {
			t.Errorf("line %d read back as %+v, written %+v", i+1, *back.Lines[i].Open, *list.Lines[i].Open)
		}
	}
}

// TestOpenShellRefusals: each bad level is refused naming file, row and field.
func TestOpenShellRefusals(t *testing.T) {
	cases := []struct {
		name string
		sts  []states.State
		row  string
		want string
	}{
		{"2Pi level without F", noStates, "14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,,1,e,e,,", "x.csv:2: F_up: a level of X ²Π needs F (1 or 2)"},
		{"2Pi level without parity", noStates, "14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,1,1,e,,,", "x.csv:2: parity_lo: a level of X ²Π needs its parity label e or f"},
		{"N and J against S", o2States, "16O16O,0,1,0,2,56264.774,0.05,MHz,4,1,,,,,,", "x.csv:2: N_up: N = 4 and J = 1 do not couple with S = 1"},
		{"2Pi J = 1/2 with N = 0", noStates, "14N16O,1,1.5,0,0.5,1883.1,0.001,cm-1,,0,1,1,e,e,,", "x.csv:2: N_lo: N = 0, J = 0.5 and F1 disagree"},
		{"N, J and F disagree", o2States, "16O16O,0,1,0,2,56264.774,0.05,MHz,1,1,3,,,,,", "x.csv:2: N_up: N = 1, J = 1 and F3 disagree"},
		{"parity on 1Sigma", nil, "12C16O,1,1,0,0,2147.08,0.001,cm-1,,,,,e,,,", "x.csv:2: parity_up: a level of X ¹Σ⁺ takes no parity label"},
		{"state label absent", noStates, "14N16O,0,0.5,0,1.5,44200.1,0.01,cm-1,,,,2,,f,B,", `x.csv:2: state_up: no state is labelled "B" in the electronic-states file (its states: X, A)`},
		{"state label without states", nil, "12C16O,0,1,0,0,2147.08,0.001,cm-1,,,,,,,A,", `x.csv:2: state_up: state "A": state labels need the electronic-states file (--states)`},
		{"half-integer J without states", nil, "14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,,,,,,", "x.csv:2: J_up: J = 3.5 is a half-integer, but state X ¹Σ⁺ has integer J (without --states"},
		{"integer J in 2Pi", noStates, "14N16O,1,3,0,2,1883.1,0.001,cm-1,,,1,1,e,e,,", "x.csv:2: J_up: J = 3 is an integer, but state X ²Π has half-integer J"},
		{"parity rule", noStates, "14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,1,1,e,f,,", "x.csv:2: parity_up: e–f with ΔJ = +1 breaks the electric-dipole rule"},
		{"parity-keeping line in 2Pi", noStates, "14N16O,0,3.5,0,2.5,3.1,0.001,cm-1,,,1,1,e,f,,", "x.csv:2: parity_up: e–f with ΔJ = +1 breaks"},
		{"ΔJ of 2", noStates, "14N16O,1,4.5,0,2.5,1883.1,0.001,cm-1,,,1,1,e,e,,", "x.csv:2: J_up: J_up - J_lo = +2 is outside the selection rules of open-shell and electronic spectra"},
		{"bad parity", noStates, "14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,1,1,g,e,,", `x.csv:2: parity_up: "g" is not a parity label`},
		{"ground state 2Pi, closed-shell line", noStates, "", "x.csv:2: F_up: a level of X ²Π needs F (1 or 2)"},
		// The Λ-doubling line of OH X²Π3/2 J = 3/2 near 1666 MHz (from memory), its e/f
		// labels left out: the levels differ in parity, so it is not a zero-frequency line.
		{"2Pi Λ-doubling line without labels", noStates, "16O1H,0,1.5,0,1.5,1666.4,0.05,MHz,,,,,,,,", "x.csv:2: F_up: a level of X ²Π needs F (1 or 2)"},
		{"the same level twice", noStates, "14N16O,0,1.5,0,1.5,0.1,0.001,cm-1,,,1,1,e,e,,", "x.csv:2: v_up: upper level equals the lower level: a zero-frequency transition"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			in := openHdr + c.row + "\n"
			if c.row == "" {
				in = "species,v_up,J_up,v_lo,J_lo,position,unc\n14N16O,1,3.5,0,2.5,1883.1,0.001\n"
			}
			list, err := Read(strings.NewReader(in), "x.csv")
			if err == nil {
				err = CheckStates(list, c.sts)
			}
			var le *Error
			if !errors.As(err, &le) {
				t.Fatalf("error %v, want a *Error", err)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("error:\n%v\nwant it to contain\n%s", err, c.want)
			}
		})
	}
}

// TestBranchNotation: open-shell branch labels read back as written.
func TestBranchNotation(t *testing.T) {
	for _, c := range []struct {
		s string
		b Branch
	}{
		{"pQ12", Branch{DeltaJ: 0, DeltaN: -1, HasN: true, FUp: 1, FLo: 2}},
		{"R1", Branch{DeltaJ: 1, FUp: 1, FLo: 1}},
		{"sR31", Branch{DeltaJ: 1, DeltaN: 2, HasN: true, FUp: 3, FLo: 1}},
		{"Q", Branch{}},
	} {
		b, err := ParseBranch(c.s)
		if err != nil || b != c.b {
			t.Errorf("ParseBranch(%q) = %+v, %v; want %+v", c.s, b, err, c.b)
		}
		if b.String() != c.s {
			t.Errorf("%+v written %q, want %q", b, b.String(), c.s)
		}
	}
	for _, bad := range []string{"", "x", "Pq", "P123", "P0", "qq"} {
		if _, err := ParseBranch(bad); err == nil {
			t.Errorf("ParseBranch(%q) accepted", bad)
		}
	}
}

// TestWriteMixedLines: a line list mixing ¹Σ lines of the ground state and
// open-shell lines writes empty open-shell cells for the former and reads
// back the same.
func TestWriteMixedLines(t *testing.T) {
	in := openHdr + "14N16O,1,3.5,0,2.5,1883.1,0.001,cm-1,,,1,1,e,e,,\n"
	list, err := Read(strings.NewReader(in), "a.csv")
	if err != nil {
		t.Fatal(err)
	}
	closed, err := Read(strings.NewReader("species,v_up,J_up,v_lo,J_lo,position,unc\n12C16O,1,1,0,0,2147.08,0.001\n"), "b.csv")
	if err != nil {
		t.Fatal(err)
	}
	lines := append(closed.Lines, list.Lines...)
	var buf bytes.Buffer
	if err := Write(&buf, lines, nil); err != nil {
		t.Fatal(err)
	}
	back, err := Read(&buf, "back.csv")
	if err != nil {
		t.Fatalf("%v\n%s", err, buf.String())
	}
	if back.Lines[0].Open != nil || back.Lines[1].Open == nil || *back.Lines[1].Open != *lines[1].Open {
		t.Errorf("read back %+v and %+v", back.Lines[0].Open, back.Lines[1].Open)
	}
}
