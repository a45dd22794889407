package pipelines

import (
	"bufio"
	"os"
	"slices"

	"bandwright/fit/linelist"
)

// LooksLikePeakList reports whether the CSV file at path is a peak list: its
// header has a position column but none of the quantum-number columns of a
// line list (species, v_up, J_up, v_lo, J_lo). A file that cannot be read or
// has no usable header is not taken for one (the line-list reader then says
// what is wrong with it).
func LooksLikePeakList(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	tab := linelist.ReadHeader(bufio.NewReader(f), linelist.NewCollector(path), "")
	if tab == nil || !slices.Contains(tab.Keys, "position") {
		return false
	}
	for _, k := range []string{"species", "v_up", "j_up", "v_lo", "j_lo"} {
		if slices.Contains(tab.Keys, k) {
			return false
		}
	}
	return true
}
