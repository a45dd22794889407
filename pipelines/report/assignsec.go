package report

import (
	"sort"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
)

// assignSection summarises the assign stage's files.
func assignSection(d *document, f *folder) {
	s := d.section("assign", "Line assignment")
	if f.lines != nil {
		type key struct {
			sp       string
			vUp, vLo int
		}
		type agg struct {
			n, jMin, jMax int
			br            map[string]int
		}
		m := map[key]*agg{}
		var keys []key
		for _, l := range f.lines {
			k := key{l.Species, l.VUp, l.VLo}
			a := m[k]
			if a == nil {
				a = &agg{jMin: l.JLo, jMax: l.JLo, br: map[string]int{}}
				m[k] = a
				keys = append(keys, k)
			}
			a.n++
			a.jMin, a.jMax = min(a.jMin, l.JLo), max(a.jMax, l.JLo)
			b := l.Branch
			if b == "" {
				b = linelist.BranchLetter(l.JUp - l.JLo)
			}
			a.br[b]++
		}
		sort.Slice(keys, func(i, j int) bool {
			a, b := keys[i], keys[j]
			if a.sp != b.sp {
				return a.sp < b.sp
			}
			if a.vLo != b.vLo {
				return a.vLo < b.vLo
			}
			return a.vUp < b.vUp
		})
		t := &table{Caption: sprintf("Assigned lines in lines.csv (%d), by band.", len(f.lines)), Head: []string{"species", "band v′–v″", "lines", "by branch", "J″ range"}, Numeric: []bool{false, false, true, false, false}}
		for _, k := range keys {
			a := m[k]
			var bs []string
			for _, b := range []string{"O", "P", "Q", "R", "S"} {
				if a.br[b] > 0 {
					bs = append(bs, sprintf("%s %d", b, a.br[b]))
				}
			}
			t.Rows = append(t.Rows, []string{k.sp, linelist.BandLabel(k.vUp, k.vLo), strconv.Itoa(a.n), strings.Join(bs, ", "), sprintf("%d–%d", a.jMin, a.jMax)})
		}
		d.table(s, t)
	}
	if f.linesErr != "" {
		s.para("lines.csv could not be read as a line list: %s", f.linesErr)
	}
	if u := f.unassign; u != nil {
		if len(u.rows) == 0 {
			s.para("unassigned.csv lists no peaks: every peak was assigned.")
		} else {
			const maxRows = 25
			t := &table{Caption: sprintf("Peaks left unassigned (unassigned.csv, %d peaks).", len(u.rows)), Head: u.head}
			for _, r := range u.rows[:min(len(u.rows), maxRows)] {
				row := make([]string, len(u.head))
				copy(row, r)
				t.Rows = append(t.Rows, row)
			}
			if len(u.rows) > maxRows {
				t.Note = sprintf("The first %d of %d; the rest are in unassigned.csv.", maxRows, len(u.rows))
			}
			d.table(s, t)
		}
	}
	if f.assignMD != nil {
		s.para("The assign stage's own summary, assign.md:")
		s.file(constants.AssignReportFile, string(f.assignMD))
	}
}
