package report

import (
	"bufio"
	"io"
	"strings"
)

// The Markdown report carries the same sections and tables as the HTML page;
// its figures are the report-*.svg files beside it, referenced by relative
// name. Text from files is neutralised: HTML markup becomes entities and the
// characters that start Markdown constructs are backslash-escaped, so a
// comment can neither inject HTML nor format the page.

var mdReplacer = strings.NewReplacer(
	`\`, `\\`, "`", "\\`", "*", `\*`, "_", `\_`, "[", `\[`, "]", `\]`,
	"|", `\|`, "~", `\~`, "&", "&amp;", "<", "&lt;", ">", "&gt;",
	"\r\n", " ", "\n", " ", "\r", " ", "\t", " ",
)

// mdText escapes plain text for Markdown inline content (paragraphs, list
// items, table cells, image descriptions).
func mdText(s string) string {
	s = mdReplacer.Replace(s)
	// Block markers that only count at the start of a line.
	return blockSafe(s)
}

// mdCell escapes text for a table cell, where block markers do not count.
func mdCell(s string) string { return mdReplacer.Replace(s) }

// blockSafe escapes a marker at the start of s that would open a heading, a
// list item or a thematic break (CommonMark: "# ", "- ", "+ ", "---",
// "1. ", "1) ").
func blockSafe(s string) string {
	if s == "" {
		return s
	}
	spaceOrEnd := func(i int) bool { return i >= len(s) || s[i] == ' ' || s[i] == '\t' }
	switch s[0] {
	case '#':
		return `\` + s
	case '+':
		if spaceOrEnd(1) {
			return `\` + s
		}
	case '-':
		if spaceOrEnd(1) || s[1] == '-' {
			return `\` + s
		}
	}
	i := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
	}
	if i > 0 && i < len(s) && (s[i] == '.' || s[i] == ')') && spaceOrEnd(i+1) {
		return s[:i] + `\` + s[i:]
	}
	return s
}

func writeMarkdown(w io.Writer, d *document) error {
	b := bufio.NewWriter(w)
	p := func(ss ...string) {
		for _, s := range ss {
			b.WriteString(s)
		}
	}
	p("# ", mdText(d.Title), "\n\n", mdText(d.Lead), "\n\n")
	var st []string
	for _, s := range d.Stages {
		if s.Present {
			st = append(st, "**"+mdText(s.Name)+"** ("+mdText(s.Files)+")")
		} else {
			st = append(st, mdText(s.Name)+": not in this folder")
		}
	}
	p("Stages: ", strings.Join(st, " · "), "\n\n")
	var toc []string
	for _, s := range d.Sections {
		toc = append(toc, sprintf("%d %s", s.Num, mdText(s.Title)))
	}
	p("Sections: ", strings.Join(toc, " · "), "\n\n")
	for _, s := range d.Sections {
		p(sprintf("## %d. %s\n\n", s.Num, mdText(s.Title)))
		for _, bl := range s.Blocks {
			switch bl.Kind {
			case kindPara:
				p(mdText(bl.Text), "\n\n")
			case kindList:
				for _, it := range bl.Items {
					p("- ", mdText(it), "\n")
				}
				p("\n")
			case kindTable:
				mdTable(p, bl.Table)
			case kindFigure:
				f := bl.Fig
				if f.SVG != nil {
					p("![", mdText(f.Alt), "](", f.Name, ")\n\n")
					p(sprintf("*Figure %d.* ", f.Num), mdText(f.Caption), "\n\n")
				} else {
					p(sprintf("*Figure %d.* ", f.Num), mdText(f.Caption), " — ", mdText(f.Missing), "\n\n")
				}
			case kindFile:
				p("[", mdText(bl.File.Name), "](", bl.File.Name, ") (in this folder)\n\n")
			}
		}
	}
	p("---\n\nBuilt by bandwright from the files of one output folder; the figures are the report-\\*.svg files beside this one.\n")
	return b.Flush()
}

func mdTable(p func(...string), t *table) {
	p(sprintf("*Table %d.* ", t.Num), mdText(t.Caption), "\n\n")
	cell := func(s string) string {
		s = mdCell(s)
		if s == "" {
			return " "
		}
		return s
	}
	p("|")
	for _, h := range t.Head {
		p(" ", cell(h), " |")
	}
	p("\n|")
	for j := range t.Head {
		if t.Align(j) == "num" {
			p("---:|")
		} else {
			p("---|")
		}
	}
	p("\n")
	for _, r := range t.Rows {
		p("|")
		for j := range t.Head {
			c := ""
			if j < len(r) {
				c = r[j]
			}
			p(" ", cell(c), " |")
		}
		p("\n")
	}
	p("\n")
	if t.Note != "" {
		p(mdText(t.Note), "\n\n")
	}
}
