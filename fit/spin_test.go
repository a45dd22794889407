package fit

import (
	"strings"
	"testing"

	"bandwright/fit/linelist"
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
	err := CheckSpinStatistics(odd)
	if err == nil || !strings.Contains(err.Error(), "o2.csv:5: 16O16O: the lines reach odd-J levels (only odd J)") || !strings.Contains(err.Error(), "X ³Σg⁻") {
		t.Errorf("16O2 odd J: %v", err)
	}
	for _, ls := range [][]linelist.Line{n2, co, {line("16O16O", 2, 0)}} {
		if err := CheckSpinStatistics(ls); err != nil {
			t.Errorf("%s: %v", ls[0].Species, err)
		}
	}
}
