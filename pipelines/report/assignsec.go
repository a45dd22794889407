package report

import (
	"sort"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/internal/typeset"
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
		t := &table{Caption: sprintf("Assigned lines in lines.csv (%d), by band.", len(f.lines)), Head: []string{"species", "band v′–v″", "lines", "by branch", "J″ range"}, Numeric: []bool{false, false, true, false, false}, Kind: []cellKind{cellSpecies}}
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
			d.table(s, unassignedTable(u))
		}
	}
	if f.assignMD != nil {
		s.para("The assign stage's own summary, assign.md (in the HTML report shown below; beside the Markdown report as its own file):")
		s.file(constants.AssignReportFile, string(f.assignMD))
	}
}

// unassignedColumns are the columns of unassigned.csv (assign.WriteUnassigned)
// as the report heads them; withUnit marks those in the peak list's unit.
var unassignedColumns = map[string]struct {
	head     string
	numeric  bool
	withUnit bool
}{
	"peak_index":       {"peak", true, false},
	"position":         {"position", true, true},
	"unc":              {"unc", true, true},
	"intensity":        {"intensity", true, false},
	"nearest":          {"nearest prediction", false, false},
	"nearest_position": {"its position", true, true},
	"distance":         {"distance", true, true},
	"dropped":          {"dropped by a check as", false, false},
	"reason":           {"why it is left over", false, false},
}

// unassignedTable shows unassigned.csv with headers and units: the unit
// column goes into the headers when every peak has the same unit, columns
// bandwright does not know keep their names, and empty columns are left out
// (document.table).
func unassignedTable(u *genericCSV) *table {
	const maxRows = 25
	unitCol, unit := -1, ""
	for j, h := range u.head {
		if strings.EqualFold(strings.TrimSpace(h), "unit") {
			unitCol = j
		}
	}
	if unitCol >= 0 {
		unit = cellOf(u.rows[0], unitCol)
		for _, r := range u.rows {
			if cellOf(r, unitCol) != unit {
				unitCol, unit = -1, ""
				break
			}
		}
	}
	t := &table{Caption: sprintf("Peaks left unassigned (unassigned.csv, %d peaks).", len(u.rows))}
	var cols []int
	for j, h := range u.head {
		if j == unitCol {
			continue
		}
		key := strings.ToLower(strings.TrimSpace(h))
		c, known := unassignedColumns[key]
		head := strings.ReplaceAll(h, "_", " ")
		if known {
			head = c.head
			if c.withUnit && unitCol >= 0 {
				head += " / " + unitName(unit)
			}
		}
		if key == "unit" {
			t.Kind = append(t.Kind, cellUnit)
		} else {
			t.Kind = append(t.Kind, cellText)
		}
		cols = append(cols, j)
		t.Head = append(t.Head, head)
		t.Numeric = append(t.Numeric, known && c.numeric)
	}
	for _, r := range u.rows[:min(len(u.rows), maxRows)] {
		row := make([]string, len(cols))
		for k, j := range cols {
			row[k] = cellOf(r, j)
			if t.Numeric[k] {
				row[k] = typeset.Number(row[k])
			}
		}
		t.Rows = append(t.Rows, row)
	}
	if len(u.rows) > maxRows {
		t.Note = sprintf("The first %d of %d; the rest are in unassigned.csv.", maxRows, len(u.rows))
	}
	return t
}

func cellOf(r []string, j int) string {
	if j < len(r) {
		return strings.TrimSpace(r[j])
	}
	return ""
}
