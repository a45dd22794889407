package report

import (
	"html"
	"html/template"
	"regexp"
	"strings"

	"bandwright/internal/mdtext"
	"bandwright/internal/typeset"
)

// renderMarkdown shows a Markdown file that bandwright wrote (assign.md) as
// HTML. It knows the subset those files use — headings (#, ##, …), list
// items ("- "), pipe tables with a delimiter row, paragraphs, and inline
// **bold**, `code` and the escapes of mdtext — and nothing else: every text
// is escaped, and the only elements are those it makes itself (h3, h4, ul,
// li, p, strong, code and the report's table markup), so a file edited by
// hand cannot put markup or script into the page. Numbers and "cm-1" in the
// text are typeset as in the rest of the report.
func renderMarkdown(src string) template.HTML {
	var b strings.Builder
	lines := strings.Split(strings.ReplaceAll(src, "\r\n", "\n"), "\n")
	var para []string
	flushPara := func() {
		if len(para) > 0 {
			b.WriteString("<p>" + inlineHTML(strings.Join(para, " ")) + "</p>\n")
			para = nil
		}
	}
	for i := 0; i < len(lines); {
		ln := strings.TrimRight(lines[i], " \t")
		switch {
		case strings.TrimSpace(ln) == "":
			flushPara()
			i++
		case headingLevel(ln) > 0:
			flushPara()
			lv := min(headingLevel(ln)+2, 6)
			tag := "h" + string(rune('0'+lv))
			b.WriteString("<" + tag + ">" + inlineHTML(strings.TrimSpace(ln[headingLevel(ln):])) + "</" + tag + ">\n")
			i++
		case strings.HasPrefix(ln, "- "):
			flushPara()
			b.WriteString(`<ul class="items">`)
			for i < len(lines) && strings.HasPrefix(lines[i], "- ") {
				b.WriteString("<li>" + inlineHTML(strings.TrimSpace(lines[i][2:])) + "</li>")
				i++
			}
			b.WriteString("</ul>\n")
		case strings.HasPrefix(ln, "|"):
			flushPara()
			j := i
			for j < len(lines) && strings.HasPrefix(strings.TrimSpace(lines[j]), "|") {
				j++
			}
			tableHTML(&b, lines[i:j])
			i = j
		default:
			para = append(para, strings.TrimSpace(ln))
			i++
		}
	}
	flushPara()
	return template.HTML(b.String())
}

// headingLevel returns the level of an ATX heading line ("## x" → 2), or 0.
func headingLevel(ln string) int {
	n := 0
	for n < len(ln) && n < 6 && ln[n] == '#' {
		n++
	}
	if n == 0 || n >= len(ln) || ln[n] != ' ' {
		return 0
	}
	return n
}

// delimiterCell matches a cell of a table's delimiter row.
var delimiterCell = regexp.MustCompile(`^:?-{3,}:?$`)

// tableHTML writes the rows of a pipe table as the report's table markup;
// rows without a delimiter row after the first are shown as paragraphs.
func tableHTML(b *strings.Builder, rows []string) {
	if len(rows) < 2 {
		for _, r := range rows {
			b.WriteString("<p>" + inlineHTML(r) + "</p>\n")
		}
		return
	}
	head, delim := mdtext.SplitRow(rows[0]), mdtext.SplitRow(rows[1])
	right := make([]bool, len(head))
	for j, d := range delim {
		if !delimiterCell.MatchString(d) {
			for _, r := range rows {
				b.WriteString("<p>" + inlineHTML(r) + "</p>\n")
			}
			return
		}
		if j < len(right) {
			right[j] = strings.HasSuffix(d, ":")
		}
	}
	class := func(j int) string {
		if j < len(right) && right[j] {
			return ` class="num"`
		}
		return ""
	}
	short := ""
	if len(rows)-2 <= shortTableRows {
		short = " short"
	}
	b.WriteString(`<div class="tbl` + short + `"><div class="scroll"><table>` + "\n<thead><tr>")
	for j, h := range head {
		b.WriteString(`<th scope="col"` + class(j) + ">" + inlineHTML(h) + "</th>")
	}
	b.WriteString("</tr></thead>\n<tbody>\n")
	for _, r := range rows[2:] {
		cells := mdtext.SplitRow(r)
		b.WriteString("<tr>")
		for j := range head {
			c := ""
			if j < len(cells) {
				c = cells[j]
			}
			b.WriteString("<td" + class(j) + ">" + inlineHTML(c) + "</td>")
		}
		b.WriteString("</tr>\n")
	}
	b.WriteString("</tbody>\n</table></div></div>\n")
}

// inlineHTML renders the inline Markdown of one line: escapes resolved,
// **bold** and `code`, every text escaped for HTML.
func inlineHTML(s string) string {
	var b strings.Builder
	for _, in := range mdtext.Unescape(s) {
		text := html.EscapeString(in.Text)
		if !in.Code {
			text = prose(text)
		}
		switch {
		case in.Code:
			text = "<code>" + text + "</code>"
		case in.Bold:
			text = "<strong>" + text + "</strong>"
		}
		b.WriteString(text)
	}
	return b.String()
}

var (
	proseNumber = regexp.MustCompile(`[-+]?[0-9]+(?:\.[0-9]+)?(?:\([0-9]+\))?(?:[eE][-+]?[0-9]+)?`)
	proseUnit   = regexp.MustCompile(`\bcm-1\b`)
)

// prose typesets the numbers and the unit cm-1 of (escaped) text: true
// minus signs, exponents as ×10ⁿ, cm⁻¹. A number counts when it stands
// alone — after the start, a space or "(", before the end, a space or
// ")", ",", ";", ":" — so that the band label 1-0 is left as it is. An
// explicit plus sign is kept.
func prose(s string) string {
	s = proseUnit.ReplaceAllString(s, typeset.Unit("cm-1"))
	var b strings.Builder
	last := 0
	for _, m := range proseNumber.FindAllStringIndex(s, -1) {
		before := m[0] == 0 || strings.ContainsRune(" \t(", rune(s[m[0]-1]))
		after := m[1] == len(s) || strings.ContainsRune(" \t),;:", rune(s[m[1]]))
		if !before || !after {
			continue
		}
		n := s[m[0]:m[1]]
		t := typeset.Number(n)
		if strings.HasPrefix(n, "+") {
			t = "+" + t
		}
		b.WriteString(s[last:m[0]] + t)
		last = m[1]
	}
	return b.String() + s[last:]
}
