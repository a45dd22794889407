package report

import (
	"html/template"

	"bandwright/internal/typeset"
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
	Title string
	Lead  string // one line under the title
	// Running is the running title of printed pages (the report, its input
	// and date), Flag a line under the title that must not be missed (the
	// drift flag of a nightly result); both may be empty.
	Running  string
	Flag     string
	Alert    bool
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
	Items []item
	Table *table
	Fig   *figure
	File  *embedded
}

// item is a list item, with an optional list under it.
type item struct {
	Text string
	Sub  []string
}

// table is a captioned table; Numeric marks right-aligned columns, Wrap
// columns of long unbroken text (paths, hashes) that may break anywhere, and
// Kind the columns whose cells are typeset in HTML (names of constants,
// units, isotopologues).
type table struct {
	Num     int
	Caption string
	Head    []string
	Numeric []bool
	Wrap    []bool
	Kind    []cellKind
	// HTMLOnly marks columns the Markdown report leaves out (a typeset name
	// beside the name as the files write it).
	HTMLOnly []bool
	Rows     [][]string
	Note     string
}

// cellKind says how the HTML report typesets the cells of a column; the
// Markdown report writes them as they are.
type cellKind int

const (
	cellText    cellKind = iota
	cellName             // a constant's name (parameter ID): typeset.Name
	cellUnit             // a unit of the files: typeset.UnitHTML
	cellSpecies          // an isotopologue label: typeset.Species
)

// Cell returns cell c of column j for HTML, escaped and typeset by the
// column's kind.
func (t *table) Cell(j int, c string) template.HTML {
	k := cellText
	if j < len(t.Kind) {
		k = t.Kind[j]
	}
	switch k {
	case cellName:
		if c != "" {
			return typeset.Name(c)
		}
	case cellUnit:
		return typeset.UnitHTML(c)
	case cellSpecies:
		return typeset.Species(c)
	}
	return template.HTML(template.HTMLEscapeString(c))
}

// Short reports whether the table is short enough to be kept on one printed
// page (a longer one breaks between rows, its header repeated).
func (t *table) Short() bool { return len(t.Rows) <= shortTableRows }

// shortTableRows is the most rows a table kept whole on a printed page has:
// about a third of an A4 page at the print size of the tables, so that
// keeping it whole leaves at most a third of a page empty.
const shortTableRows = 14

// figure is a captioned plot. Missing says why there is no plot when SVG is
// nil.
type figure struct {
	Num     int
	Name    string // file name of the SVG in the Markdown report
	Alt     string // short description (Markdown alt text, SVG title)
	Caption string
	SVG     []byte // the <svg> element, without XML prelude
	Missing string
	Square  bool // a square figure (the correlation map), shown narrower
}

// embedded is a Markdown file of the folder, shown rendered in the HTML
// report and linked from the Markdown report.
type embedded struct {
	Name    string
	Content string
}

// Rendered is the file as HTML (renderMarkdown escapes every text of it).
func (e *embedded) Rendered() template.HTML { return renderMarkdown(e.Content) }

// IsPara and the other predicates let the HTML template switch on the kind.
func (b block) IsPara() bool   { return b.Kind == kindPara }
func (b block) IsList() bool   { return b.Kind == kindList }
func (b block) IsTable() bool  { return b.Kind == kindTable }
func (b block) IsFigure() bool { return b.Kind == kindFigure }
func (b block) IsFile() bool   { return b.Kind == kindFile }

// dropEmptyColumns removes the columns (after the first) in which no row has
// text: an empty column only takes width.
func (t *table) dropEmptyColumns() {
	if len(t.Rows) == 0 {
		return
	}
	keep := make([]bool, len(t.Head))
	keep[0] = true
	for _, r := range t.Rows {
		for j := range keep {
			if j < len(r) && r[j] != "" {
				keep[j] = true
			}
		}
	}
	pick := func(n int, at func(int)) {
		for j := 0; j < n; j++ {
			if keep[j] {
				at(j)
			}
		}
	}
	var head []string
	var numeric, wrap []bool
	var kind []cellKind
	var htmlOnly []bool
	pick(len(t.Head), func(j int) {
		htmlOnly = append(htmlOnly, j < len(t.HTMLOnly) && t.HTMLOnly[j])
		head = append(head, t.Head[j])
		numeric = append(numeric, j < len(t.Numeric) && t.Numeric[j])
		wrap = append(wrap, j < len(t.Wrap) && t.Wrap[j])
		k := cellText
		if j < len(t.Kind) {
			k = t.Kind[j]
		}
		kind = append(kind, k)
	})
	for i, r := range t.Rows {
		var row []string
		pick(len(t.Head), func(j int) {
			c := ""
			if j < len(r) {
				c = r[j]
			}
			row = append(row, c)
		})
		t.Rows[i] = row
	}
	t.Head, t.Numeric, t.Wrap, t.Kind, t.HTMLOnly = head, numeric, wrap, kind, htmlOnly
}

// InlineSVG is the figure's SVG for inline use in HTML. The SVG comes from
// gonum/plot's SVG canvas, which escapes every text it draws.
func (f *figure) InlineSVG() template.HTML { return template.HTML(f.SVG) }

// Align returns the CSS class of column j: "num" (right-aligned, no
// break), "wrap" (breaks anywhere), "long" (text long enough to be given a
// readable width rather than squeezed into a tall narrow column), or "".
func (t *table) Align(j int) string {
	if j < len(t.Numeric) && t.Numeric[j] {
		return "num"
	}
	if j < len(t.Wrap) && t.Wrap[j] {
		return "wrap"
	}
	for _, r := range t.Rows {
		if j < len(r) && len([]rune(r[j])) > longCell {
			return "long"
		}
	}
	return ""
}

// longCell is the length from which a text cell counts as long (Align).
const longCell = 48

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
	b := block{Kind: kindList}
	for _, it := range items {
		b.Items = append(b.Items, item{Text: it})
	}
	s.Blocks = append(s.Blocks, b)
}

// nested adds a list whose items may carry lists of their own.
func (s *section) nested(items []item) {
	if len(items) > 0 {
		s.Blocks = append(s.Blocks, block{Kind: kindList, Items: items})
	}
}

func (d *document) table(s *section, t *table) {
	t.dropEmptyColumns()
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
