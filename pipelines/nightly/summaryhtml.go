package nightly

import (
	"html/template"

	"bandwright/internal/typeset"
)

// summaryStyle follows the stylesheet of the run reports (package report):
// a page that never scrolls sideways (wide tables scroll in their own box,
// with a shadow where columns hide), numbers in the body font with tabular
// figures, dates that do not break, and a print layout on A4 with the date
// and page numbers on every page and the header row repeated.
const summaryStyle = `
:root { --ink: #1b1f24; --muted: #545e69; --rule: #cfd6dd; --accent: #0072b2; --alert: #c0392b; --tint: rgba(0, 114, 178, 0.06); }
* { box-sizing: border-box; }
html { -webkit-text-size-adjust: 100%; text-size-adjust: 100%; }
body { margin: 0 auto; max-width: 72rem; padding: 1.5rem 1.25rem 3rem; color: var(--ink); background: #fff;
  font: 15px/1.5 system-ui, -apple-system, "Segoe UI", "Liberation Sans", Arial, sans-serif; overflow-wrap: break-word; }
h1 { font-size: 1.5rem; margin: 0 0 0.3rem; }
h2 { font-size: 1.15rem; margin: 1.6rem 0 0.5rem; padding-bottom: 0.2rem; border-bottom: 1px solid var(--rule); }
p.small { color: var(--muted); font-size: 0.85rem; margin: 0 0 0.8rem; overflow-wrap: anywhere; }
p.verdict { padding: 0.35rem 0.7rem; border-left: 4px solid var(--accent); background: var(--tint); }
p.verdict.alert { border-left-color: var(--alert); background: #fdf0ee; }
.scroll { overflow-x: auto; max-width: 100%; margin: 0.6rem 0 1rem;
  background:
    linear-gradient(to right, #fff 30%, rgba(255, 255, 255, 0)) left center / 2.5rem 100% no-repeat local,
    linear-gradient(to left, #fff 30%, rgba(255, 255, 255, 0)) right center / 2.5rem 100% no-repeat local,
    radial-gradient(farthest-side at 0 50%, rgba(0, 0, 0, 0.25), rgba(0, 0, 0, 0)) left center / 0.9rem 100% no-repeat scroll,
    radial-gradient(farthest-side at 100% 50%, rgba(0, 0, 0, 0.25), rgba(0, 0, 0, 0)) right center / 0.9rem 100% no-repeat scroll; }
table { border-collapse: collapse; font-size: 0.86rem; }
th { text-align: left; font-weight: 600; border-bottom: 2px solid var(--accent); padding: 0.25rem 0.5rem; vertical-align: bottom; }
td { border-bottom: 1px solid var(--rule); padding: 0.2rem 0.5rem; vertical-align: top; }
tbody tr:nth-child(even) td { background: var(--tint); }
th.num { text-align: right; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.date { white-space: nowrap; font-variant-numeric: tabular-nums; }
td.msg { min-width: 16rem; overflow-wrap: anywhere; }
td.file { overflow-wrap: anywhere; min-width: 7rem; }
span.z { display: block; font-size: 0.78rem; color: var(--muted); }
tr.failed td { background: #fdf0ee; }
td.flagged, tr.drift td { background: #fdf0ee; }
td.flagged span.z { color: var(--alert); font-weight: 600; }
figure { margin: 0.8rem 0 1.2rem; }
figure svg { display: block; width: 100%; max-width: 34rem; height: auto; }
figcaption { font-size: 0.85rem; color: var(--muted); }
@media (max-width: 40rem) { body { padding: 1rem 0.75rem 2rem; font-size: 14px; } th, td { padding: 0.2rem 0.35rem; } }
@media print {
  body { max-width: none; padding: 0; font-size: 9.5pt; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  h2 { break-after: avoid; }
  tr, figure { break-inside: avoid; }
  thead { display: table-header-group; }
  .scroll { overflow: visible; background: none; }
  table { font-size: 7pt; }
  th, td { padding: 0.08rem 0.18rem; }
  td.msg { min-width: 0; }
  td.file { min-width: 4.5rem; }
  td.date { white-space: normal; }
  figure svg { max-width: 140mm; }
}
`

var summaryHTML = template.Must(template.New("summary").Funcs(template.FuncMap{
	"name": typeset.Name, "unit": typeset.UnitHTML,
}).Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="bandwright">
<title>bandwright nightly summary {{.Date}}</title>
<style>` + summaryStyle + `
@page { size: A4; margin: 15mm 12mm 16mm 12mm;
  @top-left { content: "bandwright nightly summary {{.Date}}"; font: 7.5pt system-ui, "Liberation Sans", Arial, sans-serif; color: #545e69; }
  @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7.5pt system-ui, "Liberation Sans", Arial, sans-serif; color: #545e69; }
}
</style>
</head>
<body>
<h1>Nightly summary {{.Date}}</h1>
<p class="small">Archive {{.Archive}} · generated {{.Generated}} · bandwright {{.Version}}{{if .Pipeline}} · pipeline SHA-256 {{.Pipeline}}{{end}}</p>
<p class="verdict{{if or .Flagged .Failed}} alert{{end}}"><strong>{{.Total}}</strong> files processed on this date: <strong>{{.OK}}</strong> ok, <strong>{{.Failed}}</strong> failed.
{{if .Flagged}}<strong>{{.Flagged}} quantities drifted</strong> (more than {{.Threshold}} combined σ from the weighted mean of the earlier results; a quantity with two names, such as ωe and Y10, counts once).{{else}}No constant drifted beyond {{.Threshold}} combined σ.{{end}}</p>
{{if .Drift}}<h2>Drift</h2>
<div class="scroll"><table>
<thead><tr><th scope="col">file</th><th scope="col">quantity (all its names)</th><th scope="col" class="num">value (1σ)</th><th scope="col">unit</th><th scope="col" class="num">weighted mean of earlier results (1σ)</th><th scope="col" class="num">earlier results</th><th scope="col" class="num">z</th></tr></thead>
<tbody>
{{range .Drift}}<tr class="drift"><td class="file">{{.Input}}</td><td>{{range $i, $n := .Names}}{{if $i}} = {{end}}{{name $n}}{{end}}</td><td class="num">{{.Value}}</td><td>{{unit .Unit}}</td><td class="num">{{.Mean}}</td><td class="num">{{.N}}</td><td class="num">{{.Z}}</td></tr>
{{end}}</tbody></table></div>
{{end}}<h2>Results</h2>
{{if .Results}}<p class="small">One row per file finished on this date. Values with their 1σ in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003; under each, z is its difference from the weighted mean of the earlier results of the same constant and model, in combined σ ("first": none before it). s is the dimensionless standard deviation of the fit.</p>
<div class="scroll"><table>
<thead><tr><th scope="col">file</th><th scope="col">SHA-8</th><th scope="col">finished (UTC)</th><th scope="col">outcome</th><th scope="col">model</th><th scope="col" class="num">s</th><th scope="col" class="num">lines used</th><th scope="col" class="num">rejected</th>{{range .Cols}}<th scope="col" class="num">{{name .Name}} / {{unit .Unit}}</th>{{end}}<th scope="col">flags and notes</th></tr></thead>
<tbody>
{{range .Results}}<tr{{if not .OK}} class="failed"{{end}}><td class="file">{{if .OK}}<a href="{{.Link}}">{{.Input}}</a>{{else}}{{.Input}}{{end}}</td><td class="date">{{.SHA8}}</td><td class="date">{{.Finished}}</td><td>{{.Status}}</td><td>{{.Model}}</td><td class="num">{{.S}}</td><td class="num">{{.Used}}</td><td class="num">{{.Rejected}}</td>{{if .OK}}{{range .Cells}}<td class="num{{if .Flagged}} flagged{{end}}">{{.Value}}{{with .Z}}<span class="z">{{.}}</span>{{end}}</td>{{end}}{{else}}{{range $.Cols}}<td></td>{{end}}{{end}}<td class="msg">{{if .Flags}}<strong>drift: {{range $i, $f := .Flags}}{{if $i}}; {{end}}{{range $j, $n := $f}}{{if $j}} = {{end}}{{name $n}}{{end}}{{end}}</strong>{{end}}{{if not .OK}}{{.Message}}{{else if .Message}}{{if .Flags}} · {{end}}notes below{{end}}</td></tr>
{{end}}</tbody></table></div>{{else}}<p>No file was processed on this date.</p>{{end}}
{{if .Results}}<h2>Notes of the results</h2>
<ul>{{range .Results}}{{if and .OK .Message}}<li><strong>{{.Input}}</strong> ({{.SHA8}}): {{.Message}}</li>{{end}}{{end}}</ul>
{{end}}{{if .Trends}}<h2>Trends of the key constants</h2>
{{range .Trends}}<figure role="group" aria-label="trend of {{.Name}}"><figcaption><strong>{{name .Name}}</strong> / {{unit .Unit}}</figcaption>{{.SVG}}<figcaption>{{.Caption}}</figcaption></figure>
{{end}}{{end}}{{if .Skipped}}<h2>Not processed in the latest run</h2>
<div class="scroll"><table>
<thead><tr><th scope="col">file</th><th scope="col">reason</th></tr></thead>
<tbody>
{{range .Skipped}}<tr><td class="file">{{.Input}}</td><td class="msg">{{.Reason}}</td></tr>
{{end}}</tbody></table></div>
{{end}}</body>
</html>
`))
