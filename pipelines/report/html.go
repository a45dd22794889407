package report

import (
	"html/template"
	"io"
)

// The HTML report is one page with everything inline: the stylesheet, the
// SVG figures, no script, no font or image fetched from anywhere. Every text
// goes through html/template, which escapes it for its context (the running
// title of printed pages included, in a CSS string).
//
// Layout rules (checked in a real browser by TestReportsInBrowser, see
// browser_test.go):
//   - the page never scrolls sideways: long words and hashes break, a wide
//     table scrolls inside its own box, which shows a shadow at the side
//     where more columns hide;
//   - figures scale to the column (viewBox, width 100 %) and their text is
//     sized so that it stays legible at a phone's column width;
//   - printed on A4, each page carries the running title and its number,
//     headings stay with what follows, a table longer than shortTableRows
//     breaks between rows with its header repeated, and nothing is cut at
//     the edge of the page.

// pageStyle is the stylesheet of the report and of the nightly summary
// (package nightly keeps its own copy of the rules it uses).
const pageStyle = `
:root { --ink: #1b1f24; --muted: #545e69; --rule: #cfd6dd; --accent: #0072b2; --warm: #b8860b; --alert: #c0392b; --tint: rgba(0, 114, 178, 0.06); }
* { box-sizing: border-box; }
html { -webkit-text-size-adjust: 100%; text-size-adjust: 100%; }
body { margin: 0 auto; max-width: 64rem; padding: 1.5rem 1.25rem 3rem; color: var(--ink); background: #fff;
  font: 15px/1.5 system-ui, -apple-system, "Segoe UI", "Liberation Sans", Arial, sans-serif; overflow-wrap: break-word; }
header.masthead { border-bottom: 3px solid var(--accent); padding-bottom: 0.75rem; margin-bottom: 1rem; }
header.masthead h1 { font-size: 1.5rem; line-height: 1.25; margin: 0 0 0.3rem; overflow-wrap: anywhere; }
header.masthead p.lead { margin: 0 0 0.6rem; color: var(--muted); }
p.flag { margin: 0 0 0.6rem; padding: 0.3rem 0.6rem; border-left: 4px solid var(--alert); background: #fdf0ee; font-weight: 600; }
p.flag.quiet { border-left-color: var(--accent); background: var(--tint); font-weight: normal; }
ul.stages { list-style: none; display: flex; gap: 0.4rem; padding: 0; margin: 0; flex-wrap: wrap; }
ul.stages li { border: 1px solid var(--accent); border-radius: 0.2rem; padding: 0.05rem 0.55rem; font-size: 0.85rem; }
ul.stages li.on { background: var(--accent); color: #fff; }
ul.stages li.off { border-color: var(--rule); color: var(--muted); border-style: dashed; }
nav.contents { font-size: 0.9rem; margin: 0 0 1.5rem; color: var(--muted); }
nav.contents a { color: var(--accent); text-decoration: none; margin-right: 0.9rem; display: inline-block; }
section { margin: 0 0 2.2rem; }
h2 { font-size: 1.2rem; margin: 0 0 0.6rem; padding-bottom: 0.2rem; border-bottom: 1px solid var(--rule); display: flex; align-items: baseline; gap: 0.55rem; }
h2 .no { display: inline-block; min-width: 1.6rem; text-align: center; background: var(--accent); color: #fff; border-radius: 0.2rem; font-size: 0.85rem; padding: 0.05rem 0.3rem; }
h3 { font-size: 1.02rem; margin: 1.1rem 0 0.4rem; }
h4 { font-size: 0.95rem; margin: 0.9rem 0 0.3rem; }
p { margin: 0.5rem 0; }
ul.items { margin: 0.4rem 0 0.8rem; padding-left: 1.3rem; }
ul.items li { margin: 0.15rem 0; }
ul.items ul { padding-left: 1.1rem; margin: 0.1rem 0; }
code, .mono { font-family: ui-monospace, "Liberation Mono", "DejaVu Sans Mono", monospace; font-size: 0.86em; }
.tbl { margin: 0.9rem 0 1.2rem; }
.tbl p.caption { font-size: 0.86rem; color: var(--muted); margin: 0 0 0.3rem; }
.tbl p.caption b, figcaption b { color: var(--ink); }
.scroll { overflow-x: auto; max-width: 100%;
  background:
    linear-gradient(to right, #fff 30%, rgba(255, 255, 255, 0)) left center / 2.5rem 100% no-repeat local,
    linear-gradient(to left, #fff 30%, rgba(255, 255, 255, 0)) right center / 2.5rem 100% no-repeat local,
    radial-gradient(farthest-side at 0 50%, rgba(0, 0, 0, 0.25), rgba(0, 0, 0, 0)) left center / 0.9rem 100% no-repeat scroll,
    radial-gradient(farthest-side at 100% 50%, rgba(0, 0, 0, 0.25), rgba(0, 0, 0, 0)) right center / 0.9rem 100% no-repeat scroll; }
table { border-collapse: collapse; font-size: 0.86rem; }
th { text-align: left; font-weight: 600; border-bottom: 2px solid var(--accent); padding: 0.25rem 0.5rem; vertical-align: bottom; hyphens: auto; }
td { border-bottom: 1px solid var(--rule); padding: 0.2rem 0.5rem; vertical-align: top; }
tbody tr:nth-child(even) td { background: var(--tint); }
th.num { text-align: right; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.wrap { overflow-wrap: anywhere; word-break: break-all; min-width: 9rem; font-family: ui-monospace, "Liberation Mono", "DejaVu Sans Mono", monospace; font-size: 0.78rem; }
td.long { min-width: 22rem; }
p.tablenote { font-size: 0.82rem; color: var(--muted); margin-top: 0.2rem; }
figure { margin: 1rem 0 1.4rem; padding: 0.5rem 0.6rem 0.4rem; border-left: 3px solid var(--warm); }
figure .plot svg { display: block; width: 100%; max-width: 36rem; height: auto; }
figure.square .plot svg { max-width: 30rem; }
figcaption { font-size: 0.86rem; color: var(--muted); margin-top: 0.3rem; }
figure.missing { border-left-color: var(--alert); }
figure.missing p { font-style: italic; margin: 0.2rem 0; }
div.markdown { margin: 0.6rem 0 1rem; padding: 0.2rem 0 0.2rem 0.8rem; border-left: 3px solid var(--rule); }
div.markdown p.from { margin: 0; font-size: 0.85rem; color: var(--muted); }
footer { border-top: 1px solid var(--rule); padding-top: 0.5rem; color: var(--muted); font-size: 0.8rem; }
@media (max-width: 40rem) {
  body { padding: 1rem 0.75rem 2rem; font-size: 14px; }
  header.masthead h1 { font-size: 1.3rem; }
  th, td { padding: 0.2rem 0.35rem; }
  figure { padding: 0.3rem 0 0.2rem; border-left: 0; }
  td.wrap { min-width: 7rem; }
  td.long { min-width: 17rem; }
}
@media print {
  body { max-width: none; padding: 0; font-size: 9.5pt; }
  nav.contents { display: none; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  h2, h3, h4, .tbl p.caption { break-after: avoid; page-break-after: avoid; }
  figure, .tbl.short, ul.stages, p.flag { break-inside: avoid; page-break-inside: avoid; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  thead { display: table-header-group; }
  .scroll { overflow: visible; background: none; }
  table { font-size: 7.5pt; }
  th, td { padding: 0.1rem 0.25rem; }
  td.wrap { min-width: 0; font-size: 7pt; }
  td.long { min-width: 9rem; }
  figure { padding: 0.2rem 0; border-left: 0; }
  figure .plot svg { max-width: 150mm; }
  figure.square .plot svg { max-width: 120mm; }
  footer { display: none; }
}
`

var pageTemplate = template.Must(template.New("report").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="bandwright">
<title>{{.Title}}</title>
<style>{{.Style}}
@page { size: A4; margin: 16mm 12mm 16mm 12mm;
  @top-left { content: "{{.Running}}"; font: 7.5pt system-ui, "Liberation Sans", Arial, sans-serif; color: #545e69; }
  @bottom-left { content: "bandwright report"; font: 7.5pt system-ui, "Liberation Sans", Arial, sans-serif; color: #545e69; }
  @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7.5pt system-ui, "Liberation Sans", Arial, sans-serif; color: #545e69; }
}
</style>
</head>
<body>
<header class="masthead">
<h1>{{.Title}}</h1>
<p class="lead">{{.Lead}}</p>
{{if .Flag}}<p class="flag{{if not .Alert}} quiet{{end}}">{{.Flag}}</p>
{{end}}<ul class="stages">{{range .Stages}}<li class="{{if .Present}}on{{else}}off{{end}}">{{.Name}} <span>{{if .Present}}· {{.Files}}{{else}}· not in this folder{{end}}</span></li>{{end}}</ul>
</header>
<nav class="contents" aria-label="Contents">{{range .Sections}}<a href="#{{.ID}}">{{.Num}}. {{.Title}}</a> {{end}}</nav>
<main>
{{range .Sections}}<section id="{{.ID}}">
<h2><span class="no">{{.Num}}</span> {{.Title}}</h2>
{{range .Blocks}}{{if .IsPara}}<p>{{.Text}}</p>
{{else if .IsList}}<ul class="items">{{range .Items}}<li>{{.Text}}{{with .Sub}}<ul>{{range .}}<li>{{.}}</li>{{end}}</ul>{{end}}</li>{{end}}</ul>
{{else if .IsTable}}{{with .Table}}{{$t := .}}<div class="tbl{{if .Short}} short{{end}}">
<p class="caption" id="table-{{.Num}}"><b>Table {{.Num}}.</b> {{.Caption}}</p>
<div class="scroll"><table aria-labelledby="table-{{.Num}}">
<thead><tr>{{range $j, $h := .Head}}<th scope="col" class="{{$t.Align $j}}">{{$h}}</th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr>{{range $j, $c := .}}<td class="{{$t.Align $j}}">{{$t.Cell $j $c}}</td>{{end}}</tr>
{{end}}</tbody>
</table></div>{{if .Note}}
<p class="tablenote">{{.Note}}</p>{{end}}
</div>
{{end}}{{else if .IsFigure}}{{with .Fig}}{{if .SVG}}<figure{{if .Square}} class="square"{{end}} role="group" aria-label="{{.Alt}}">
<div class="plot">{{.InlineSVG}}</div>
<figcaption><b>Figure {{.Num}}.</b> {{.Caption}}</figcaption>
</figure>
{{else}}<figure class="missing"><p>{{.Missing}}</p><figcaption><b>Figure {{.Num}}.</b> {{.Caption}}</figcaption></figure>
{{end}}{{end}}{{else if .IsFile}}{{with .File}}<div class="markdown"><p class="from">{{.Name}}, as the assign stage wrote it:</p>
{{.Rendered}}</div>
{{end}}{{end}}{{end}}</section>
{{end}}</main>
<footer>Built by bandwright from the files of one output folder; self-contained: nothing on this page is fetched from the network.</footer>
</body>
</html>
`))

// pageData is what the page template reads: the document and the stylesheet.
type pageData struct {
	*document
	Style template.CSS
}

// writeHTML writes the document as one self-contained HTML page.
func writeHTML(w io.Writer, d *document) error {
	return pageTemplate.Execute(w, pageData{d, template.CSS(pageStyle)})
}
