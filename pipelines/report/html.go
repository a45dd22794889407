package report

import (
	"html/template"
	"io"
)

// The HTML report is one page with everything inline: the stylesheet, the
// SVG figures, no script, no font or image fetched from anywhere. Every text
// goes through html/template, which escapes it for its context.

var pageTemplate = template.Must(template.New("report").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8"/>
<meta name="viewport" content="width=device-width, initial-scale=1"/>
<meta name="generator" content="bandwright"/>
<title>{{.Title}}</title>
<style>
:root { --ink: #1b1f24; --muted: #5b6570; --rule: #cfd6dd; --accent: #0072b2; --warm: #e69f00; --alert: #d55e00; --tint: #f2f7fb; }
* { box-sizing: border-box; }
body { margin: 0 auto; max-width: 64rem; padding: 1.5rem 1.25rem 3rem; color: var(--ink); background: #fff;
  font: 15px/1.5 system-ui, -apple-system, "Segoe UI", "Liberation Sans", Arial, sans-serif; }
header.masthead { border-bottom: 3px solid var(--accent); padding-bottom: 0.75rem; margin-bottom: 1rem; }
header.masthead h1 { font-size: 1.55rem; margin: 0 0 0.2rem; letter-spacing: 0.01em; }
header.masthead p.lead { margin: 0 0 0.6rem; color: var(--muted); }
ul.stages { list-style: none; display: flex; gap: 0.4rem; padding: 0; margin: 0; flex-wrap: wrap; }
ul.stages li { border: 1px solid var(--accent); border-radius: 0.2rem; padding: 0.05rem 0.55rem; font-size: 0.85rem; }
ul.stages li.on { background: var(--accent); color: #fff; }
ul.stages li.off { border-color: var(--rule); color: var(--muted); border-style: dashed; }
ul.stages li span { opacity: 0.85; }
nav.contents { font-size: 0.9rem; margin: 0 0 1.5rem; color: var(--muted); }
nav.contents a { color: var(--accent); text-decoration: none; margin-right: 0.9rem; white-space: nowrap; }
section { margin: 0 0 2.2rem; }
h2 { font-size: 1.2rem; margin: 0 0 0.6rem; padding-bottom: 0.2rem; border-bottom: 1px solid var(--rule); display: flex; align-items: baseline; gap: 0.55rem; }
h2 .no { display: inline-block; min-width: 1.6rem; text-align: center; background: var(--accent); color: #fff; border-radius: 0.2rem; font-size: 0.85rem; padding: 0.05rem 0.3rem; }
p { margin: 0.5rem 0; }
ul.items { margin: 0.4rem 0 0.8rem; padding-left: 1.3rem; }
ul.items li { margin: 0.15rem 0; }
.tablewrap { overflow-x: auto; margin: 0.9rem 0 1.1rem; }
table { border-collapse: collapse; font-size: 0.86rem; min-width: 40%; }
caption { caption-side: top; text-align: left; font-size: 0.86rem; color: var(--muted); padding: 0 0 0.3rem; }
caption b, figcaption b { color: var(--ink); }
th { text-align: left; font-weight: 600; border-bottom: 2px solid var(--accent); padding: 0.25rem 0.6rem; vertical-align: bottom; }
td { border-bottom: 1px solid var(--rule); padding: 0.2rem 0.6rem; vertical-align: top; overflow-wrap: break-word; }
td.wrap { overflow-wrap: anywhere; word-break: break-all; font-family: ui-monospace, "Liberation Mono", monospace; font-size: 0.8rem; }
tbody tr:nth-child(even) td { background: var(--tint); }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
p.tablenote { font-size: 0.82rem; color: var(--muted); margin-top: 0.2rem; }
figure { margin: 1rem 0 1.4rem; padding: 0.5rem 0.6rem 0.4rem; border-left: 3px solid var(--warm); background: #fff; }
figure .plot svg { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 0.86rem; color: var(--muted); margin-top: 0.3rem; }
figure.missing { border-left-color: var(--alert); }
figure.missing p { font-style: italic; margin: 0.2rem 0; }
div.embedded { margin: 0.6rem 0 1rem; border: 1px solid var(--rule); }
div.embedded p.name { margin: 0; padding: 0.2rem 0.6rem; background: var(--tint); font-size: 0.85rem; color: var(--muted); }
div.embedded pre { margin: 0; padding: 0.6rem; max-height: 26rem; overflow: auto; font-size: 0.8rem; white-space: pre-wrap; }
footer { border-top: 1px solid var(--rule); padding-top: 0.5rem; color: var(--muted); font-size: 0.8rem; }
@media print {
  @page { size: A4; margin: 15mm 13mm 16mm; }
  body { max-width: none; padding: 0; font-size: 10pt; }
  nav.contents { display: none; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  h2 { break-after: avoid; page-break-after: avoid; }
  figure, .tablewrap, div.embedded { break-inside: avoid; page-break-inside: avoid; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  .tablewrap { overflow: visible; }
  table { font-size: 8.5pt; }
  div.embedded pre { max-height: none; overflow: visible; }
  figure { border-left-width: 2px; }
  section#provenance, section#cautions { break-before: auto; }
}
</style>
</head>
<body>
<header class="masthead">
<h1>{{.Title}}</h1>
<p class="lead">{{.Lead}}</p>
<ul class="stages">{{range .Stages}}<li class="{{if .Present}}on{{else}}off{{end}}">{{.Name}} <span>{{if .Present}}· {{.Files}}{{else}}· not in this folder{{end}}</span></li>{{end}}</ul>
</header>
<nav class="contents">{{range .Sections}}<a href="#{{.ID}}">{{.Num}}. {{.Title}}</a> {{end}}</nav>
<main>
{{range .Sections}}<section id="{{.ID}}">
<h2><span class="no">{{.Num}}</span> {{.Title}}</h2>
{{range .Blocks}}{{if .IsPara}}<p>{{.Text}}</p>
{{else if .IsList}}<ul class="items">{{range .Items}}<li>{{.}}</li>{{end}}</ul>
{{else if .IsTable}}{{with .Table}}{{$t := .}}<div class="tablewrap"><table>
<caption><b>Table {{.Num}}.</b> {{.Caption}}</caption>
<thead><tr>{{range $j, $h := .Head}}<th class="{{$t.Align $j}}">{{$h}}</th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr>{{range $j, $c := .}}<td class="{{$t.Align $j}}">{{$c}}</td>{{end}}</tr>
{{end}}</tbody>
</table>{{if .Note}}<p class="tablenote">{{.Note}}</p>{{end}}</div>
{{end}}{{else if .IsFigure}}{{with .Fig}}{{if .SVG}}<figure role="group" aria-label="{{.Alt}}">
<div class="plot">{{.InlineSVG}}</div>
<figcaption><b>Figure {{.Num}}.</b> {{.Caption}}</figcaption>
</figure>
{{else}}<figure class="missing"><p>{{.Missing}}</p><figcaption><b>Figure {{.Num}}.</b> {{.Caption}}</figcaption></figure>
{{end}}{{end}}{{else if .IsFile}}{{with .File}}<div class="embedded"><p class="name">{{.Name}}</p><pre>{{.Content}}</pre></div>
{{end}}{{end}}{{end}}</section>
{{end}}</main>
<footer>Built by bandwright from the files of one output folder; self-contained: nothing on this page is fetched from the network.</footer>
</body>
</html>
`))

// writeHTML writes the document as one self-contained HTML page.
func writeHTML(w io.Writer, d *document) error {
	return pageTemplate.Execute(w, d)
}
