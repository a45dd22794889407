package nightly

import (
	"bytes"
	"fmt"
	"html/template"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/google/renameio/v2"

	"bandwright/constants"
	"bandwright/internal/mdtext"
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

type sumFile struct {
	Input, SHA8, Status, Started, Finished, Output, Link, Message string
	OK                                                            bool
}

type sumConst struct {
	Input, Constant, Value, Unit, Z, Mean, N, Note string
	Flagged                                        bool
}

type sumSkip struct{ Input, Reason string }

type summaryData struct {
	Date, Generated, Archive, Version, Pipeline string
	Threshold                                   string
	Total, OK, Failed, Flagged                  int
	Files                                       []sumFile
	Constants                                   []sumConst
	Drift                                       []sumConst
	Skipped                                     []sumSkip
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
		okSHA := map[string]bool{}
		err := r.a.led.each(func(rec []string) {
			fin, err := time.Parse(time.RFC3339, rec[4])
			if err != nil || r.dateOf(fin) != date {
				return
			}
			f := sumFile{Input: rec[0], SHA8: short(rec[1]), Status: rec[2], Started: rec[3], Finished: rec[4],
				Output: rec[5], Message: rec[6], OK: rec[2] == string(StatusOK)}
			if f.OK {
				d.OK++
				okSHA[rec[1]] = true
				f.Link = f.Output + "/"
				if _, err := os.Stat(filepath.Join(r.a.dir, filepath.FromSlash(f.Output), constants.ReportHTMLFile)); err == nil {
					f.Link = f.Output + "/report.html"
				}
			} else {
				d.Failed++
			}
			d.Total++
			d.Files = append(d.Files, f)
		})
		if err != nil {
			return err
		}
		err = r.a.hist.each(func(rec []string) {
			if !okSHA[rec[0]] {
				return
			}
			v, _ := strconv.ParseFloat(rec[5], 64)
			s, _ := strconv.ParseFloat(rec[6], 64)
			c := sumConst{Input: rec[1], Constant: rec[4], Value: constants.FormatParen(v, s), Unit: rec[7],
				N: rec[8], Flagged: rec[12] == "flagged"}
			if !c.Flagged {
				c.Note = rec[12]
			}
			if z, err := strconv.ParseFloat(rec[11], 64); err == nil {
				c.Z = strconv.FormatFloat(z, 'f', 1, 64)
				m, _ := strconv.ParseFloat(rec[9], 64)
				sm, _ := strconv.ParseFloat(rec[10], 64)
				c.Mean = constants.FormatParen(m, sm)
			}
			d.Constants = append(d.Constants, c)
			if c.Flagged {
				d.Drift = append(d.Drift, c)
				d.Flagged++
			}
		})
		if err != nil {
			return err
		}
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

func short(sha string) string {
	if len(sha) < 8 {
		return sha
	}
	return sha[:8]
}

var summaryHTML = template.Must(template.New("summary").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>bandwright nightly summary {{.Date}}</title>
<style>
body { font-family: sans-serif; margin: 2em; color: #222; }
table { border-collapse: collapse; margin: 1em 0; }
th, td { border: 1px solid #bbb; padding: 0.25em 0.6em; text-align: left; vertical-align: top; }
td.num { font-family: monospace; text-align: right; }
tr.failed td, tr.drift td { background: #fde8e8; }
.small { color: #666; font-size: 0.9em; }
</style>
</head>
<body>
<h1>Nightly summary {{.Date}}</h1>
<p class="small">Archive {{.Archive}} · generated {{.Generated}} · bandwright {{.Version}}{{if .Pipeline}} · pipeline SHA-256 {{.Pipeline}}{{end}}</p>
<p><strong>{{.Total}}</strong> files processed on this date: <strong>{{.OK}}</strong> ok, <strong>{{.Failed}}</strong> failed.
{{if .Flagged}}<strong>{{.Flagged}} constants drifted</strong> (more than {{.Threshold}} combined σ from the weighted mean of the earlier results).{{else}}No constant drifted beyond {{.Threshold}} combined σ.{{end}}</p>
{{if .Drift}}
<h2>Drift</h2>
<table>
<tr><th>file</th><th>constant</th><th>value (1σ)</th><th>unit</th><th>weighted mean of earlier results (1σ)</th><th>earlier results</th><th>z / σ</th></tr>
{{range .Drift}}<tr class="drift"><td>{{.Input}}</td><td>{{.Constant}}</td><td class="num">{{.Value}}</td><td>{{.Unit}}</td><td class="num">{{.Mean}}</td><td class="num">{{.N}}</td><td class="num">{{.Z}}</td></tr>
{{end}}</table>
{{end}}
<h2>Files</h2>
{{if .Files}}<table>
<tr><th>file</th><th>SHA-256</th><th>outcome</th><th>started</th><th>finished</th><th>results</th><th>message</th></tr>
{{range .Files}}<tr{{if not .OK}} class="failed"{{end}}><td>{{.Input}}</td><td class="num">{{.SHA8}}</td><td>{{.Status}}</td><td>{{.Started}}</td><td>{{.Finished}}</td><td>{{if .OK}}<a href="{{.Link}}">{{.Output}}</a>{{end}}</td><td>{{.Message}}</td></tr>
{{end}}</table>{{else}}<p>No file was processed on this date.</p>{{end}}
{{if .Constants}}
<h2>Key constants</h2>
<p class="small">Values with their 1σ in parenthetical notation: 1.922529(3) means 1.922529 ± 0.000003. z is the difference from the weighted mean of the earlier results of the same constant in units of the combined σ.</p>
<table>
<tr><th>file</th><th>constant</th><th>value (1σ)</th><th>unit</th><th>z / σ</th></tr>
{{range .Constants}}<tr{{if .Flagged}} class="drift"{{end}}><td>{{.Input}}</td><td>{{.Constant}}</td><td class="num">{{.Value}}</td><td>{{.Unit}}</td><td class="num">{{if .Z}}{{.Z}}{{else if .Note}}{{.Note}}{{else}}first{{end}}</td></tr>
{{end}}</table>
{{end}}
{{if .Skipped}}
<h2>Not processed in the latest run</h2>
<table>
<tr><th>file</th><th>reason</th></tr>
{{range .Skipped}}<tr><td>{{.Input}}</td><td>{{.Reason}}</td></tr>
{{end}}</table>
{{end}}
</body>
</html>
`))

func writeMarkdown(b *bytes.Buffer, d summaryData) {
	e := mdtext.Escape
	fmt.Fprintf(b, "# Nightly summary %s\n\n", d.Date)
	fmt.Fprintf(b, "Archive %s · generated %s · bandwright %s", e(d.Archive), d.Generated, e(d.Version))
	if d.Pipeline != "" {
		fmt.Fprintf(b, " · pipeline SHA-256 %s", e(d.Pipeline))
	}
	fmt.Fprintf(b, "\n\n**%d** files processed on this date: **%d** ok, **%d** failed. ", d.Total, d.OK, d.Failed)
	if d.Flagged > 0 {
		fmt.Fprintf(b, "**%d constants drifted** (more than %s combined σ from the weighted mean of the earlier results).\n\n", d.Flagged, d.Threshold)
	} else {
		fmt.Fprintf(b, "No constant drifted beyond %s combined σ.\n\n", d.Threshold)
	}
	if len(d.Drift) > 0 {
		b.WriteString("## Drift\n\n| file | constant | value (1σ) | unit | weighted mean of earlier results (1σ) | earlier results | z / σ |\n|---|---|---|---|---|---|---|\n")
		for _, c := range d.Drift {
			fmt.Fprintf(b, "| %s | %s | %s | %s | %s | %s | %s |\n", e(c.Input), e(c.Constant), c.Value, e(c.Unit), c.Mean, c.N, c.Z)
		}
		b.WriteString("\n")
	}
	b.WriteString("## Files\n\n")
	if len(d.Files) == 0 {
		b.WriteString("No file was processed on this date.\n\n")
	} else {
		b.WriteString("| file | SHA-256 | outcome | started | finished | results | message |\n|---|---|---|---|---|---|---|\n")
		for _, f := range d.Files {
			res := ""
			if f.OK {
				res = "[" + e(f.Output) + "](" + mdLink(f.Link) + ")"
			}
			fmt.Fprintf(b, "| %s | %s | %s | %s | %s | %s | %s |\n", e(f.Input), f.SHA8, e(f.Status), e(f.Started), e(f.Finished), res, e(f.Message))
		}
		b.WriteString("\n")
	}
	if len(d.Constants) > 0 {
		b.WriteString("## Key constants\n\nValues with their 1σ in parenthetical notation: 1.922529(3) means 1.922529 ± 0.000003. z is the difference from the weighted mean of the earlier results of the same constant in units of the combined σ.\n\n")
		b.WriteString("| file | constant | value (1σ) | unit | z / σ |\n|---|---|---|---|---|\n")
		for _, c := range d.Constants {
			z := c.Z
			switch {
			case z == "" && c.Note != "":
				z = e(c.Note)
			case z == "":
				z = "first"
			}
			if c.Flagged {
				z = "**" + z + " DRIFT**"
			}
			fmt.Fprintf(b, "| %s | %s | %s | %s | %s |\n", e(c.Input), e(c.Constant), c.Value, e(c.Unit), z)
		}
		b.WriteString("\n")
	}
	if len(d.Skipped) > 0 {
		b.WriteString("## Not processed in the latest run\n\n| file | reason |\n|---|---|\n")
		for _, s := range d.Skipped {
			fmt.Fprintf(b, "| %s | %s |\n", e(s.Input), e(s.Reason))
		}
		b.WriteString("\n")
	}
}

// mdLink percent-encodes the characters that would end or break a Markdown
// link destination (the folder names are already restricted by folderStem).
func mdLink(s string) string {
	r := strings.NewReplacer(" ", "%20", "(", "%28", ")", "%29", "<", "%3C", ">", "%3E", "[", "%5B", "]", "%5D", "|", "%7C")
	return r.Replace(s)
}
