package report

import (
	"bufio"
	"io"
	"strings"

	"bandwright/internal/mdtext"
	"bandwright/internal/typeset"
)

// The Markdown report carries the same sections and tables as the HTML page;
// its figures are the report-*.svg files beside it, referenced by relative
// name. Text from files is neutralised: HTML markup becomes entities and the
// characters that start Markdown constructs are backslash-escaped, so a
// comment can neither inject HTML nor format the page.

// mdText escapes text for Markdown by the one rule of package mdtext.
func mdText(s string) string { return mdtext.Escape(s) }

func writeMarkdown(w io.Writer, d *document) error {
	b := bufio.NewWriter(w)
	p := func(ss ...string) {
		for _, s := range ss {
			b.WriteString(s)
		}
	}
	p("# ", mdText(d.Title), "\n\n", mdText(d.Lead), "\n\n")
	if d.Flag != "" {
		p("**", mdText(d.Flag), "**\n\n")
	}
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
					p("- ", mdText(it.Text), "\n")
					for _, sub := range it.Sub {
						p("  - ", mdText(sub), "\n")
					}
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
		s = mdText(s)
		if s == "" {
			return " "
		}
		return s
	}
	var cols []int
	for j := range t.Head {
		if j >= len(t.HTMLOnly) || !t.HTMLOnly[j] {
			cols = append(cols, j)
		}
	}
	p("|")
	for _, j := range cols {
		p(" ", cell(t.Head[j]), " |")
	}
	p("\n|")
	for _, j := range cols {
		if t.Align(j) == "num" {
			p("---:|")
		} else {
			p("---|")
		}
	}
	p("\n")
	for _, r := range t.Rows {
		p("|")
		for _, j := range cols {
			c := ""
			if j < len(r) {
				c = r[j]
			}
			if j < len(t.Kind) && t.Kind[j] == cellUnit {
				c = typeset.Unit(c)
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
