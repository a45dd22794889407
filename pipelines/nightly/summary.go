package nightly

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/google/renameio/v2"

	"bandwright/constants"
	"bandwright/internal/typeset"
)

// SummaryName returns the base name (without extension) of the summary of a
// date: "summary-2026-03-14".
func SummaryName(date string) string { return "summary-" + date }

// summaries writes the summary of every date on which this run finished a
// row, and of the run's start date.
func (r *runner) summaries(start time.Time) error {
	today := r.dateOf(start)
	r.mu.Lock()
	dates := []string{today}
	for d := range r.dates {
		if d != today {
			dates = append(dates, d)
		}
	}
	r.mu.Unlock()
	sort.Strings(dates)
	for _, d := range dates {
		var extra *Report
		if d == today {
			extra = r.rep
		}
		h, m, err := r.writeSummary(d, extra)
		if err != nil {
			return err
		}
		if d == today {
			r.rep.Summary, r.rep.SummaryMarkdown = h, m
		}
	}
	return nil
}

// summaryData is what a summary shows: one row per file finished on the
// date (its result or its failure), the key constants as columns, the drifted
// quantities (each once), and a trend figure per key constant.
type summaryData struct {
	Date, Generated, Archive, Version, Pipeline string
	Threshold                                   string
	Total, OK, Failed, Flagged                  int
	Results                                     []sumResult
	Cols                                        []sumCol
	Drift                                       []sumDrift
	Trends                                      []trend
	Skipped                                     []sumSkip
}

// sumResult is one row of the results table.
type sumResult struct {
	sha                                                  string
	Input, SHA8, Status, Finished, Output, Link, Message string
	Model, S, Used, Rejected                             string
	OK, Drifted                                          bool
	Cells                                                []sumCell
	Flags                                                [][]string // drifted quantities, each once with all its names
}

// sumCell is a key constant of a result: value(σ) and its drift test.
type sumCell struct {
	Value, Z string
	Flagged  bool
}

// sumCol is a key-constant column: the constant's name in the files, and
// its unit.
type sumCol struct{ Name, Unit string }

// sumDrift is a drifted quantity of one result, with all its names.
type sumDrift struct {
	Input, Value, Unit, Mean, N, Z string
	Names                          []string
}

type sumSkip struct{ Input, Reason string }

// histRow is a row of history.csv as the summary reads it.
type histRow struct {
	sha, input, finished, species, name, unit, model string
	value, sigma, z, mean, sigmaMean                 float64
	n                                                int
	flagged                                          bool
	note                                             string
}

func parseHistRow(rec []string) histRow {
	f := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			return math.NaN()
		}
		return v
	}
	n, _ := strconv.Atoi(rec[8])
	h := histRow{sha: rec[0], input: rec[1], finished: rec[2], species: rec[3], name: rec[4], value: f(rec[5]), sigma: f(rec[6]),
		unit: rec[7], n: n, mean: f(rec[9]), sigmaMean: f(rec[10]), z: f(rec[11]), flagged: rec[12] == "flagged", model: rec[13]}
	if !h.flagged {
		h.note = rec[12]
	}
	return h
}

// writeSummary writes ARCHIVE/summary-<date>.html and .md from the ledger rows
// finished on date (all shards and runs) and their history rows; extra adds
// the files this run skipped or ignored. Done under the ledger lock so that
// the last writer has seen every row.
func (r *runner) writeSummary(date string, extra *Report) (string, string, error) {
	var htmlPath, mdPath string
	err := r.a.locked(func() error {
		if err := r.a.refresh(); err != nil {
			return err
		}
		d := summaryData{Date: date, Generated: r.o.Now().Format(time.RFC3339), Archive: r.a.shown,
			Version: r.o.Version, Pipeline: r.o.PipelineHash, Threshold: fmtF(r.o.DriftSigma)}
		var all []histRow
		if err := r.a.hist.each(func(rec []string) { all = append(all, parseHistRow(rec)) }); err != nil {
			return err
		}
		if err := r.collectResults(&d, date, all); err != nil {
			return err
		}
		d.Trends = trends(d.Cols, all, r.o.DriftSigma)
		if extra != nil {
			for _, f := range extra.Files {
				if f.Status == StatusSkipped {
					d.Skipped = append(d.Skipped, sumSkip{f.Input, f.Message})
				}
			}
			for _, g := range extra.Ignored {
				d.Skipped = append(d.Skipped, sumSkip{g.Name, "ignored: " + g.Reason})
			}
		}
		var hb, mb bytes.Buffer
		if err := summaryHTML.Execute(&hb, d); err != nil {
			return fmt.Errorf("nightly: summary: %w", err)
		}
		writeMarkdown(&mb, d)
		base := filepath.Join(r.a.dir, SummaryName(date))
		tmp := renameio.WithTempDir(filepath.Join(r.a.dir, workDir))
		if err := renameio.WriteFile(base+".html", hb.Bytes(), 0o644, tmp); err != nil {
			return fmt.Errorf("nightly: writing the summary: %w", err)
		}
		if err := renameio.WriteFile(base+".md", mb.Bytes(), 0o644, tmp); err != nil {
			return fmt.Errorf("nightly: writing the summary: %w", err)
		}
		htmlPath = filepath.Join(r.a.shown, SummaryName(date)+".html")
		mdPath = filepath.Join(r.a.shown, SummaryName(date)+".md")
		return nil
	})
	return htmlPath, mdPath, err
}

// collectResults fills the results table of date: a row per ledger row
// finished that day, with the fit's model and statistics from the result's
// constants.json, its key constants and its drifted quantities.
func (r *runner) collectResults(d *summaryData, date string, all []histRow) error {
	bySHA := map[string][]histRow{}
	for _, h := range all {
		bySHA[h.sha] = append(bySHA[h.sha], h)
	}
	err := r.a.led.each(func(rec []string) {
		fin, err := time.Parse(time.RFC3339, rec[4])
		if err != nil || r.dateOf(fin) != date {
			return
		}
		res := sumResult{sha: rec[1], Input: rec[0], SHA8: short(rec[1]), Status: rec[2], Finished: fin.Format("2006-01-02 15:04"), Output: rec[5], Message: rec[6], OK: rec[2] == string(StatusOK)}
		d.Total++
		if !res.OK {
			d.Failed++
			d.Results = append(d.Results, res)
			return
		}
		d.OK++
		res.Link = res.Output + "/"
		dir := filepath.Join(r.a.dir, filepath.FromSlash(res.Output))
		if _, err := os.Stat(filepath.Join(dir, constants.ReportHTMLFile)); err == nil {
			res.Link = res.Output + "/" + constants.ReportHTMLFile
		}
		res.fitStats(dir)
		hs := bySHA[rec[1]]
		res.Flags, d.Drift = driftOf(res.Input, hs, d.Drift)
		res.Drifted = len(res.Flags) > 0
		d.Flagged += len(res.Flags)
		d.Results = append(d.Results, res)
	})
	if err != nil {
		return err
	}
	d.Cols = keyColumns(d.Results, bySHA)
	for i := range d.Results {
		res := &d.Results[i]
		if !res.OK {
			continue
		}
		for _, c := range d.Cols {
			res.Cells = append(res.Cells, cellOf(bySHA[res.sha], c))
		}
	}
	return nil
}

// fitStats reads the model and the statistics of a result's fit from its
// constants.json ("" where it cannot be read).
func (res *sumResult) fitStats(dir string) {
	b, err := os.ReadFile(filepath.Join(dir, constants.ConstantsFile))
	if err != nil {
		return
	}
	rec, err := constants.Read(bytes.NewReader(b), constants.ConstantsFile)
	if err != nil {
		return
	}
	res.Model = strings.ReplaceAll(ModelKey(rec), ",", ", ")
	res.S = typeset.Number(strconv.FormatFloat(rec.Stats.Sigma, 'g', 3, 64))
	res.Used, res.Rejected = strconv.Itoa(rec.Stats.Used), strconv.Itoa(rec.Stats.Rejected)
}

// driftOf returns the drifted quantities of one result's history rows, each
// once with all its names (see aliasGroups), and adds them to list.
func driftOf(input string, hs []histRow, list []sumDrift) ([][]string, []sumDrift) {
	cs := make([]Constant, len(hs))
	for i, h := range hs {
		cs[i] = Constant{Species: h.species, Name: h.name, Value: h.value, Sigma: h.sigma, Unit: h.unit, Model: h.model}
	}
	var flags [][]string
	for _, g := range aliasGroups(cs) {
		var names []string
		first := -1
		for _, i := range g {
			names = append(names, hs[i].name)
			if hs[i].flagged && first < 0 {
				first = i
			}
		}
		if first < 0 {
			continue
		}
		h := hs[first]
		flags = append(flags, names)
		list = append(list, sumDrift{Input: input, Names: names, Value: paren(h.value, h.sigma), Unit: h.unit,
			Mean: paren(h.mean, h.sigmaMean), N: strconv.Itoa(h.n), Z: typeset.Number(strconv.FormatFloat(h.z, 'f', 1, 64))})
	}
	return flags, list
}

// keyPriority lists the key constants the summary shows as columns, in
// order, by their name without the isotopologue: the scale factor against
// the reference, then the equilibrium constants, then the first band
// origin.
var keyPriority = []string{"kappa_vs_reference", "omega_e", "omega_e_x_e", "B_e", "alpha_e", "r_e", "nu0_1-0"}

// maxKeyColumns is the most key-constant columns of the results table.
const maxKeyColumns = 4

// keyColumns picks the key-constant columns of the date's results: the
// constants of keyPriority that a result has (each isotopologue its own
// column), at most maxKeyColumns; without any, the first constants of the
// first result.
func keyColumns(rs []sumResult, bySHA map[string][]histRow) []sumCol {
	seen := map[sumCol]bool{}
	var present []sumCol
	for i := range rs {
		if !rs[i].OK {
			continue
		}
		for _, h := range bySHA[rs[i].sha] {
			c := sumCol{h.name, h.unit}
			if !seen[c] {
				seen[c] = true
				present = append(present, c)
			}
		}
	}
	var cols []sumCol
	for _, base := range keyPriority {
		for _, c := range present {
			if len(cols) < maxKeyColumns && (c.Name == base || strings.HasPrefix(c.Name, base+"[")) {
				cols = append(cols, c)
			}
		}
	}
	if len(cols) == 0 {
		cols = present[:min(len(present), maxKeyColumns-1)]
	}
	return cols
}

// cellOf is the cell of column c for a result's history rows.
func cellOf(hs []histRow, c sumCol) sumCell {
	for _, h := range hs {
		if h.name == c.Name && h.unit == c.Unit {
			cell := sumCell{Value: paren(h.value, h.sigma), Flagged: h.flagged}
			switch {
			case !math.IsNaN(h.z):
				cell.Z = "z " + typeset.Number(strings.Replace(strconv.FormatFloat(h.z, 'f', 1, 64), "-0.0", "0.0", 1))
			case h.note != "":
				cell.Z = "untested"
			default:
				cell.Z = "first"
			}
			return cell
		}
	}
	return sumCell{Value: "—"}
}

// paren is value(σ) typeset.
func paren(v, s float64) string {
	if math.IsNaN(v) {
		return "—"
	}
	return typeset.Number(constants.FormatParen(v, s))
}

func short(sha string) string {
	if len(sha) < 8 {
		return sha
	}
	return sha[:8]
}

// mdLink percent-encodes the characters that would end or break a Markdown
// link destination (the folder names are already restricted by folderStem).
func mdLink(s string) string {
	r := strings.NewReplacer(" ", "%20", "(", "%28", ")", "%29", "<", "%3C", ">", "%3E", "[", "%5B", "]", "%5D", "|", "%7C")
	return r.Replace(s)
}
