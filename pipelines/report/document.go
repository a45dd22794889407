package report

import (
	"html/template"
)

// The report is assembled once as a neutral document (sections of
// paragraphs, lists, tables and figures holding plain text) and then written
// twice, as HTML and as Markdown, so that both carry the same tables. Every
// string in the document is plain text; each writer escapes it for its format.

type blockKind int

const (
	kindPara blockKind = iota
	kindList
	kindTable
	kindFigure
	kindFile
)

type document struct {
	Title    string
	Lead     string  // one line under the title
	Stages   []stage // the stage strip
	Sections []*section
	figures  []*figure
	tables   int
}

type stage struct {
	Name    string
	Present bool
	Files   string
}

type section struct {
	ID     string
	Num    int
	Title  string
	Blocks []block
}

type block struct {
	Kind  blockKind
	Text  string
	Items []string
	Table *table
	Fig   *figure
	File  *embedded
}

// table is a captioned table; Numeric marks right-aligned columns, Wrap
// columns of long unbroken text (paths, hashes) that may break anywhere.
type table struct {
	Num     int
	Caption string
	Head    []string
	Numeric []bool
	Wrap    []bool
	Rows    [][]string
	Note    string
}

// figure is a captioned plot. Missing says why there is no plot when SVG is
// nil.
type figure struct {
	Num     int
	Name    string // file name of the SVG in the Markdown report
	Alt     string // short description (Markdown alt text, SVG title)
	Caption string
	SVG     []byte // the <svg> element, without XML prelude
	Missing string
}

// embedded is a text file of the folder shown in the HTML report (collapsed)
// and linked from the Markdown report.
type embedded struct {
	Name    string
	Content string
}

// IsPara and the other predicates let the HTML template switch on the kind.
func (b block) IsPara() bool   { return b.Kind == kindPara }
func (b block) IsList() bool   { return b.Kind == kindList }
func (b block) IsTable() bool  { return b.Kind == kindTable }
func (b block) IsFigure() bool { return b.Kind == kindFigure }
func (b block) IsFile() bool   { return b.Kind == kindFile }

// InlineSVG is the figure's SVG for inline use in HTML. The SVG comes from
// gonum/plot's SVG canvas, which escapes every text it draws.
func (f *figure) InlineSVG() template.HTML { return template.HTML(f.SVG) }

// Align returns the CSS class of column j.
func (t *table) Align(j int) string {
	if j < len(t.Numeric) && t.Numeric[j] {
		return "num"
	}
	if j < len(t.Wrap) && t.Wrap[j] {
		return "wrap"
	}
	return ""
}

func (d *document) section(id, title string) *section {
	s := &section{ID: id, Num: len(d.Sections) + 1, Title: title}
	d.Sections = append(d.Sections, s)
	return s
}

func (s *section) para(format string, a ...any) {
	text := format
	if len(a) > 0 {
		text = sprintf(format, a...)
	}
	s.Blocks = append(s.Blocks, block{Kind: kindPara, Text: text})
}

func (s *section) list(items []string) {
	if len(items) == 0 {
		return
	}
	s.Blocks = append(s.Blocks, block{Kind: kindList, Items: items})
}

func (d *document) table(s *section, t *table) {
	d.tables++
	t.Num = d.tables
	s.Blocks = append(s.Blocks, block{Kind: kindTable, Table: t})
}

func (d *document) figure(s *section, f *figure) {
	f.Num = len(d.figures) + 1
	d.figures = append(d.figures, f)
	s.Blocks = append(s.Blocks, block{Kind: kindFigure, Fig: f})
}

func (s *section) file(name, content string) {
	s.Blocks = append(s.Blocks, block{Kind: kindFile, File: &embedded{Name: name, Content: content}})
}
