package fit

import (
	"strings"
	"testing"

	"bandwright/fit/linelist"
	"bandwright/fit/species"
	"bandwright/fit/states"
)

// TestCheckSpinStatistics: 16O has nuclear spin 0 (NUBASE2020, from memory),
// so a ¹Σg⁺ state of 16O2 has even J only; lines reaching odd J alone (the
// N of its X³Σg⁻ ground state) are refused with the pattern named. 14N2
// (spin 1: both parities) and heteronuclear molecules pass.
func TestCheckSpinStatistics(t *testing.T) {
	line := func(sp string, ju, jl int) linelist.Line {
		return linelist.Line{File: "o2.csv", Row: 2 + ju, Species: sp, VUp: 0, JUp: ju, VLo: 0, JLo: jl, Position: 1, Unc: 1}
	}
	var odd, n2, co []linelist.Line
	for n := 1; n < 20; n += 2 {
		odd = append(odd, line("16O16O", n+2, n))
		n2 = append(n2, line("14N14N", n+2, n), line("14N14N", n+1, n-1))
		co = append(co, line("12C16O", n+1, n))
	}
	err := CheckSpinStatistics(odd, nil)
	if err == nil || !strings.Contains(err.Error(), "o2.csv:5: 16O16O: the lines reach odd-J levels (only odd N)") || !strings.Contains(err.Error(), "X ³Σg⁻") {
		t.Errorf("16O2 odd J: %v", err)
	}
	for _, ls := range [][]linelist.Line{n2, co, {line("16O16O", 2, 0)}} {
		if err := CheckSpinStatistics(ls, nil); err != nil {
			t.Errorf("%s: %v", ls[0].Species, err)
		}
	}
}

// TestCheckSpinStatisticsOfStates: with the electronic states given, the
// levels are judged by their own state: odd N of 16O2 X³Σg⁻ pass, an even N
// is refused naming the state.
func TestCheckSpinStatisticsOfStates(t *testing.T) {
	x := states.State{Label: "X", Multiplicity: 3, Symmetry: species.StateSymmetry{Parity: 'g', Reflection: '-'}}
	in := "species,v_up,J_up,v_lo,J_lo,N_up,N_lo,position,unc,unit\n16O2,0,1,0,2,1,1,56264.774,0.02,MHz\n16O2,0,3,0,4,3,3,58446.588,0.02,MHz\n"
	list, err := linelist.Read(strings.NewReader(in), "o2.csv")
	if err != nil {
		t.Fatal(err)
	}
	if err := linelist.CheckStates(list, []states.State{x}); err != nil {
		t.Fatal(err)
	}
	if err := CheckSpinStatistics(list.Lines, []states.State{x}); err != nil {
		t.Errorf("odd N of X³Σg⁻: %v", err)
	}
	bad, err := linelist.Read(strings.NewReader(in+"16O2,0,2,0,3,2,2,60000.0,0.02,MHz\n"), "o2.csv")
	if err != nil {
		t.Fatal(err)
	}
	if err := linelist.CheckStates(bad, []states.State{x}); err != nil {
		t.Fatal(err)
	}
	err = CheckSpinStatistics(bad.Lines, []states.State{x})
	if err == nil || !strings.Contains(err.Error(), "o2.csv:4: 16O16O: the lines reach even-N levels (even N among others) of X ³Σg⁻, which has none") {
		t.Errorf("even N of X³Σg⁻: %v", err)
	}
}
