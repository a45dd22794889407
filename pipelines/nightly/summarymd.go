package nightly

import (
	"bytes"
	"fmt"
	"strings"

	"bandwright/internal/mdtext"
	"bandwright/internal/typeset"
)

// writeMarkdown writes the summary in Markdown: the same tables as the HTML
// page; the trend figures are in the HTML page only.
func writeMarkdown(b *bytes.Buffer, d summaryData) {
	e := mdtext.Escape
	fmt.Fprintf(b, "# Nightly summary %s\n\n", d.Date)
	fmt.Fprintf(b, "Archive %s · generated %s · bandwright %s", e(d.Archive), d.Generated, e(d.Version))
	if d.Pipeline != "" {
		fmt.Fprintf(b, " · pipeline SHA-256 %s", e(d.Pipeline))
	}
	fmt.Fprintf(b, "\n\n**%d** files processed on this date: **%d** ok, **%d** failed. ", d.Total, d.OK, d.Failed)
	if d.Flagged > 0 {
		fmt.Fprintf(b, "**%d quantities drifted** (more than %s combined σ from the weighted mean of the earlier results; a quantity with two names, such as omega\\_e and Y10, counts once).\n\n", d.Flagged, d.Threshold)
	} else {
		fmt.Fprintf(b, "No constant drifted beyond %s combined σ.\n\n", d.Threshold)
	}
	if len(d.Drift) > 0 {
		b.WriteString("## Drift\n\n| file | quantity (all its names) | value (1σ) | unit | weighted mean of earlier results (1σ) | earlier results | z |\n|---|---|---:|---|---:|---:|---:|\n")
		for _, c := range d.Drift {
			fmt.Fprintf(b, "| %s | %s | %s | %s | %s | %s | %s |\n", e(c.Input), e(strings.Join(c.Names, " = ")), e(c.Value), e(typeset.Unit(c.Unit)), e(c.Mean), c.N, e(c.Z))
		}
		b.WriteString("\n")
	}
	b.WriteString("## Results\n\n")
	if len(d.Results) == 0 {
		b.WriteString("No file was processed on this date.\n\n")
	} else {
		writeResultsMarkdown(b, d)
	}
	var notes []string
	for _, r := range d.Results {
		if r.OK && r.Message != "" {
			notes = append(notes, "- **"+e(r.Input)+"** ("+r.SHA8+"): "+e(r.Message))
		}
	}
	if len(notes) > 0 {
		b.WriteString("## Notes of the results\n\n" + strings.Join(notes, "\n") + "\n\n")
	}
	if len(d.Trends) > 0 {
		b.WriteString("The trend of each key constant over the archive's history is drawn in the HTML summary.\n\n")
	}
	if len(d.Skipped) > 0 {
		b.WriteString("## Not processed in the latest run\n\n| file | reason |\n|---|---|\n")
		for _, s := range d.Skipped {
			fmt.Fprintf(b, "| %s | %s |\n", e(s.Input), e(s.Reason))
		}
		b.WriteString("\n")
	}
}

// writeResultsMarkdown writes the results table of the Markdown summary.
func writeResultsMarkdown(b *bytes.Buffer, d summaryData) {
	e := mdtext.Escape
	b.WriteString("Values with their 1σ in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003; z is the difference from the weighted mean of the earlier results of the same constant and model, in combined σ. s is the dimensionless standard deviation of the fit.\n\n")
	head := []string{"file", "SHA-8", "finished", "outcome", "model", "s", "lines used", "rejected"}
	align := []string{"---", "---", "---", "---", "---", "---:", "---:", "---:"}
	for _, c := range d.Cols {
		head = append(head, e(c.Name)+" / "+e(typeset.Unit(c.Unit)))
		align = append(align, "---:")
	}
	head = append(head, "flags and notes")
	align = append(align, "---")
	fmt.Fprintf(b, "| %s |\n|%s|\n", strings.Join(head, " | "), strings.Join(align, "|"))
	for _, r := range d.Results {
		file := e(r.Input)
		if r.OK {
			file = "[" + e(r.Input) + "](" + mdLink(r.Link) + ")"
		}
		cells := []string{file, r.SHA8, e(r.Finished), e(r.Status), e(r.Model), e(r.S), r.Used, r.Rejected}
		for k := range d.Cols {
			c := ""
			if k < len(r.Cells) {
				c = e(r.Cells[k].Value) + " (" + e(r.Cells[k].Z) + ")"
				if r.Cells[k].Flagged {
					c = "**" + c + " DRIFT**"
				}
			}
			cells = append(cells, c)
		}
		note := e(r.Message)
		if r.OK && note != "" {
			note = "notes below"
		}
		if len(r.Flags) > 0 {
			var fs []string
			for _, f := range r.Flags {
				fs = append(fs, strings.Join(f, " = "))
			}
			note = "**drift: " + e(strings.Join(fs, "; ")) + "**" + map[bool]string{true: " · ", false: ""}[note != ""] + note
		}
		cells = append(cells, note)
		fmt.Fprintf(b, "| %s |\n", strings.Join(cells, " | "))
	}
	b.WriteString("\n")
}
