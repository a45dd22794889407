package report_test

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"bandwright/constants"
	"bandwright/internal/failure"
	"bandwright/internal/typeset"
	"bandwright/pipelines"
	"bandwright/pipelines/report"
)

var fixedNow = func() time.Time { return time.Date(2025, 3, 14, 9, 26, 53, 0, time.UTC) }

// svgInfo is one <svg> element of a page: its texts and the fill colours of
// its paths.
type svgInfo struct {
	texts []string
	fills map[string]int
}

func (s svgInfo) hasText(want string) bool {
	for _, t := range s.texts {
		if strings.Contains(t, want) {
			return true
		}
	}
	return false
}

// page is an HTML report parsed with encoding/xml in its HTML mode.
type page struct {
	svgs     []svgInfo
	elements map[string]int
	ids      []string
	attrs    map[string][]string // attribute name → values
	text     string              // character data outside <svg>, <style>
}

func parsePage(t *testing.T, b []byte) *page {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	dec.Strict = false
	dec.AutoClose = xml.HTMLAutoClose
	dec.Entity = xml.HTMLEntity
	p := &page{elements: map[string]int{}, attrs: map[string][]string{}}
	var cur *svgInfo
	inStyle := false
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("report.html does not parse: %v", err)
		}
		switch x := tok.(type) {
		case xml.StartElement:
			p.elements[x.Name.Local]++
			for _, a := range x.Attr {
				p.attrs[a.Name.Local] = append(p.attrs[a.Name.Local], a.Value)
				if a.Name.Local == "id" {
					p.ids = append(p.ids, a.Value)
				}
				if cur != nil && a.Name.Local == "style" {
					if m := regexp.MustCompile(`fill:(#[0-9A-Fa-f]{6})`).FindStringSubmatch(a.Value); m != nil {
						cur.fills[strings.ToUpper(m[1])]++
					}
				}
			}
			switch x.Name.Local {
			case "svg":
				if cur != nil {
					t.Fatal("nested <svg>")
				}
				cur = &svgInfo{fills: map[string]int{}}
			case "style":
				inStyle = true
			}
		case xml.EndElement:
			switch x.Name.Local {
			case "svg":
				p.svgs = append(p.svgs, *cur)
				cur = nil
			case "style":
				inStyle = false
			}
		case xml.CharData:
			switch {
			case cur != nil:
				if s := strings.TrimSpace(string(x)); s != "" {
					cur.texts = append(cur.texts, s)
				}
			case !inStyle:
				text.Write(x)
			}
		}
	}
	p.text = text.String()
	return p
}

func build(t *testing.T, dir string, o report.Options) map[string][]byte {
	t.Helper()
	if o.Now == nil {
		o.Now = fixedNow
	}
	files, err := report.Build(dir, o)
	if err != nil {
		t.Fatal(err)
	}
	return files
}

// The HTML report carries its plots inline, one <svg> per drawn figure, each
// with its axis labels and series; the sections of absent stages are absent.
func TestHTMLCarriesPlots(t *testing.T) {
	dir := fitFolder(t)
	files := build(t, dir, report.Options{Version: "test"})
	p := parsePage(t, files[constants.ReportHTMLFile])
	// Bands 1-0 and 2-1 are drawn; 3-2 has one line and is not. Then
	// calculated-against-observed, o−c against position, correlations.
	if got, want := len(p.svgs), 2+2+1; got != want {
		t.Fatalf("report.html has %d <svg> elements, want %d", got, want)
	}
	band10 := p.svgs[0]
	for _, want := range []string{"v′=1 ← v″=0", "J″ (lower level)", "(o − c)/unc", "P branch", "R branch", "±3", "rejected, off scale (1)"} {
		if !band10.hasText(want) {
			t.Errorf("residual plot of 1-0 lacks %q; texts %q", want, band10.texts)
		}
	}
	// Series: 26 R and 25 P lines less the rejected one, each a glyph in its
	// Okabe–Ito colour (blue #0072B2 for P, bluish green #009E73 for R), plus
	// the legend thumbnail.
	if n := band10.fills["#0072B2"]; n < 20 {
		t.Errorf("residual plot of 1-0 has %d P-branch glyphs", n)
	}
	if n := band10.fills["#009E73"]; n < 20 {
		t.Errorf("residual plot of 1-0 has %d R-branch glyphs", n)
	}
	if n := band10.fills["#D55E00"]; n < 2 {
		t.Errorf("residual plot of 1-0 marks %d rejected glyphs (want the line and its legend entry)", n)
	}
	// The rejected line is far off scale: an arrow on the edge with its value
	// beside it (the J axis is marked at integers).
	if !band10.hasText("×10³") || band10.hasText("2.5") {
		t.Errorf("residual plot of 1-0: the off-scale value is not written, or J ticks are not integers: %q", band10.texts)
	}
	if !p.svgs[1].hasText("v′=2 ← v″=1") {
		t.Errorf("second plot is not the 2-1 band: %q", p.svgs[1].texts)
	}
	if !strings.Contains(p.text, "Not plotted: 12C16O 3-2 has 1 line(s)") {
		t.Error("the one-line band 3-2 is not explained")
	}
	for _, want := range []string{"Fortrat diagram (cm⁻¹)", "observed position / cm⁻¹", "m", "¹²C¹⁶O 1-0"} {
		if !p.svgs[2].hasText(want) {
			t.Errorf("Fortrat diagram lacks %q: %q", want, p.svgs[2].texts)
		}
	}
	if !p.svgs[3].hasText("lines-in.csv") || !p.svgs[3].hasText("(o − c)/unc") {
		t.Errorf("o−c against position lacks its file legend or axis: %q", p.svgs[3].texts)
	}
	corr := p.svgs[4]
	for _, want := range []string{"Y10", "Y20", "Y01", "Y11", "Y02", "1.00", "+1", "−1"} {
		if !corr.hasText(want) {
			t.Errorf("correlation heat map lacks %q", want)
		}
	}
	for _, id := range []string{"glance", "constants", "residuals", "positions", "correlations", "conventions", "cautions", "provenance"} {
		if !slices.Contains(p.ids, id) {
			t.Errorf("section %q missing", id)
		}
	}
	for _, id := range []string{"thermo", "assign"} {
		if slices.Contains(p.ids, id) {
			t.Errorf("section %q present without its files", id)
		}
	}
	for _, want := range []string{"thermo.csv (thermo stage): the thermodynamic section is left out.",
		"reviewed reference data", "licensed engineering practice", "toxic", "Okabe–Ito", "Y10", "test"} {
		if !strings.Contains(p.text, want) && !strings.Contains(strings.ToLower(p.text), strings.ToLower(want)) {
			t.Errorf("report.html lacks %q", want)
		}
	}
	// The parenthetical notation of constants.FormatParen is used for constants.
	if !regexp.MustCompile(`2169\.8\d*\(\d+\)`).MatchString(p.text) {
		t.Error("ωe = Y10 is not in parenthetical notation")
	}
}

// A line comment with markup appears escaped in HTML and neutralised in
// Markdown.
func TestCommentsEscaped(t *testing.T) {
	dir := fitFolder(t)
	files := build(t, dir, report.Options{Title: "<b>bold</b> title"})
	h := string(files[constants.ReportHTMLFile])
	if regexp.MustCompile(`(?i)<script`).MatchString(h) {
		t.Error("report.html contains a <script element")
	}
	if !strings.Contains(h, "&lt;script&gt;alert(1)&lt;/script&gt;") {
		t.Error("report.html does not show the comment escaped")
	}
	if strings.Contains(h, "<b>bold</b>") || !strings.Contains(h, "&lt;b&gt;bold&lt;/b&gt; title") {
		t.Error("the title is not escaped in report.html")
	}
	p := parsePage(t, files[constants.ReportHTMLFile])
	if !strings.Contains(p.text, scriptComment) {
		t.Error("the comment does not read as text in report.html")
	}
	md := string(files[constants.ReportMarkdownFile])
	if strings.Contains(md, "<script") || !strings.Contains(md, "&lt;script&gt;alert(1)&lt;/script&gt;") {
		t.Error("report.md does not neutralise the <script> comment")
	}
	// The Markdown comment must not make a link, an image, emphasis, code or
	// a table column.
	if strings.Contains(md, "[here](http") || strings.Contains(md, "*bold*") || strings.Contains(md, "`code`") ||
		strings.Contains(md, " | *bold") || !strings.Contains(md, `\[here\]`) || !strings.Contains(md, `\|`) {
		t.Error("report.md does not neutralise Markdown in a comment")
	}
	if strings.Contains(md, "<b>") {
		t.Error("the title is not neutralised in report.md")
	}
}

// Nothing in the HTML is fetched from anywhere: no src or href to a network
// address, no script, link, img, iframe, object or embed element.
func TestHTMLSelfContained(t *testing.T) {
	dir := fitFolder(t)
	files := build(t, dir, report.Options{})
	p := parsePage(t, files[constants.ReportHTMLFile])
	for _, el := range []string{"script", "link", "img", "iframe", "object", "embed", "image", "use"} {
		if p.elements[el] > 0 {
			t.Errorf("report.html has %d <%s> element(s)", p.elements[el], el)
		}
	}
	for _, a := range []string{"src", "href"} {
		for _, v := range p.attrs[a] {
			if v := strings.TrimSpace(v); !strings.HasPrefix(v, "#") {
				t.Errorf("%s=%q is not an anchor within the page", a, v)
			}
		}
	}
	if regexp.MustCompile(`(?i)(src|href)\s*=\s*["']?\s*(https?:)?//`).Match(files[constants.ReportHTMLFile]) {
		t.Error("report.html has a network src/href")
	}
	if regexp.MustCompile(`(?i)url\(|@import`).Match(files[constants.ReportHTMLFile]) {
		t.Error("the stylesheet loads something")
	}
	if !bytes.Contains(files[constants.ReportHTMLFile], []byte("@media print")) {
		t.Error("no print stylesheet")
	}
}

// The Markdown report references SVG files that the report provides and, after
// Rebuild, that exist on disk; each is a standalone SVG.
func TestMarkdownFigures(t *testing.T) {
	dir := fitFolder(t)
	files := build(t, dir, report.Options{})
	refs := regexp.MustCompile(`!\[[^\n]*?\]\(([^)\s]+)\)`).FindAllStringSubmatch(string(files[constants.ReportMarkdownFile]), -1)
	if len(refs) != 5 {
		t.Fatalf("report.md references %d figures, want 5", len(refs))
	}
	for _, r := range refs {
		name := r[1]
		if filepath.Base(name) != name || !strings.HasSuffix(name, ".svg") {
			t.Errorf("figure reference %q is not a plain relative SVG name", name)
		}
		b, ok := files[name]
		if !ok {
			t.Errorf("report.md references %s, which the report does not provide", name)
			continue
		}
		if !bytes.HasPrefix(b, []byte("<?xml")) || !bytes.Contains(b, []byte("<svg")) {
			t.Errorf("%s is not a standalone SVG", name)
		}
	}
	if _, err := report.Rebuild(dir, report.Options{Now: fixedNow}); err != nil {
		t.Fatal(err)
	}
	for _, r := range refs {
		if _, err := os.Stat(filepath.Join(dir, r[1])); err != nil {
			t.Errorf("after Rebuild: %v", err)
		}
	}
	// The same tables in both formats: every table caption of the HTML is in
	// the Markdown.
	caps := regexp.MustCompile(`<b>Table (\d+)\.</b>`).FindAllSubmatch(files[constants.ReportHTMLFile], -1)
	for _, c := range caps {
		if !bytes.Contains(files[constants.ReportMarkdownFile], []byte("*Table "+string(c[1])+".*")) {
			t.Errorf("table %s is in the HTML but not in the Markdown", c[1])
		}
	}
}

type snapshot struct {
	content []byte
	mod     time.Time
}

func snapshotDir(t *testing.T, dir string) map[string]snapshot {
	t.Helper()
	out := map[string]snapshot{}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		info, _ := e.Info()
		out[e.Name()] = snapshot{b, info.ModTime()}
	}
	return out
}

// Rebuild writes report.html, report.md and the figures, leaves every other
// file as it was, removes only its own stale figures, and leaves no
// temporary folder behind.
func TestRebuild(t *testing.T) {
	dir := fitFolder(t)
	before := snapshotDir(t, dir)
	stale := filepath.Join(dir, "report-residuals-OLD-9-8.svg")
	os.WriteFile(stale, []byte("<?xml version=\"1.0\"?>\n<!-- bandwright report figure -->\n<svg></svg>\n"), 0o644)
	mine := filepath.Join(dir, "report-mine.svg")
	os.WriteFile(mine, []byte("<svg>a user's own figure</svg>"), 0o644)
	names, err := report.Rebuild(dir, report.Options{Now: fixedNow})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(names, constants.ReportHTMLFile) || !slices.Contains(names, constants.ReportMarkdownFile) || len(names) != 7 {
		t.Errorf("Rebuild wrote %q", names)
	}
	after := snapshotDir(t, dir)
	for name, s := range before {
		a, ok := after[name]
		if !ok || !bytes.Equal(a.content, s.content) || !a.mod.Equal(s.mod) {
			t.Errorf("Rebuild touched %s", name)
		}
	}
	if _, err := os.Stat(stale); err == nil {
		t.Error("a stale figure of an older report was left")
	}
	if _, err := os.Stat(mine); err != nil {
		t.Error("Rebuild removed a file that is not one of its figures")
	}
	for _, n := range names {
		if _, ok := after[n]; !ok {
			t.Errorf("%s not written", n)
		}
	}
	parent, _ := os.ReadDir(filepath.Dir(dir))
	for _, e := range parent {
		if strings.Contains(e.Name(), "partial") {
			t.Errorf("temporary folder %s left behind", e.Name())
		}
	}
	// The files written are those Build returns.
	files := build(t, dir, report.Options{})
	for _, n := range names {
		b, _ := os.ReadFile(filepath.Join(dir, n))
		if n != constants.ReportHTMLFile && n != constants.ReportMarkdownFile && !bytes.Equal(b, files[n]) {
			t.Errorf("%s on disk differs from Build", n)
		}
	}
}

// A rebuild that fails leaves the older report as it was.
func TestRebuildFailureKeepsOldReport(t *testing.T) {
	dir := fitFolder(t)
	if _, err := report.Rebuild(dir, report.Options{Now: fixedNow}); err != nil {
		t.Fatal(err)
	}
	old := snapshotDir(t, dir)
	// A residuals.csv broken on row 3 makes the next build fail.
	res := filepath.Join(dir, "residuals.csv")
	b, _ := os.ReadFile(res)
	lines := strings.SplitAfter(string(b), "\n")
	lines[2] = strings.Replace(lines[2], ",used,", ",perhaps,", 1)
	os.WriteFile(res, []byte(strings.Join(lines, "")), 0o644)
	_, err := report.Rebuild(dir, report.Options{Now: time.Now})
	if err == nil || !strings.Contains(err.Error(), "residuals.csv: row 3: status") {
		t.Fatalf("want an error naming residuals.csv, row 3, status; got %v", err)
	}
	now := snapshotDir(t, dir)
	for _, n := range []string{constants.ReportHTMLFile, constants.ReportMarkdownFile, "report-correlation.svg"} {
		if !bytes.Equal(now[n].content, old[n].content) {
			t.Errorf("%s changed although the rebuild failed", n)
		}
	}
}

// A folder without constants.json is a clear error with exit code 1.
func TestNoConstants(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "thermo.csv"), []byte("T_K,Q,Cp\n300,108,29.1\n"), 0o644)
	_, err := report.Build(dir, report.Options{})
	if err == nil || !strings.HasPrefix(err.Error(), "report: ") || !strings.Contains(err.Error(), "no constants.json") {
		t.Fatalf("got %v", err)
	}
	if c := failure.ExitCode(err); c != 1 {
		t.Errorf("exit code %d, want 1", c)
	}
	if _, err := report.Rebuild(filepath.Join(dir, "absent"), report.Options{}); err == nil || failure.ExitCode(err) != 1 {
		t.Errorf("a missing folder: %v", err)
	}
	if _, err := report.Build(dir, report.Options{Formats: []string{"pdf"}}); err == nil || !strings.Contains(err.Error(), "pdf") {
		t.Errorf("an unknown format: %v", err)
	}
}

// With thermo.csv the report shows the excerpt, Q(T) and Cp°(T) with ±2σ
// bands and the closed-form comparison; no NaN or Inf is printed anywhere.
func TestThermoSection(t *testing.T) {
	dir := fitFolder(t)
	writeThermo(t, filepath.Join(dir, "thermo.csv"), append(thermoGrid(400), 500, 1000, 2000, 3000), true, func(i int, rec []string) {
		switch i {
		case 5:
			rec[14] = "NaN" // closed-form error
		case 6:
			rec[12] = "" // gef σ
		case 7:
			rec[16] = "inf" // Cp σ, Monte Carlo
		case 299: // the 298.15 K row
			rec[15] = "-Inf"
		}
	})
	files := build(t, dir, report.Options{})
	p := parsePage(t, files[constants.ReportHTMLFile])
	if !slices.Contains(p.ids, "thermo") {
		t.Fatal("no thermo section")
	}
	if want := "The table is for " + typeset.SpeciesText("12C16O") + "."; !strings.Contains(string(files[constants.ReportHTMLFile]), want) {
		t.Errorf("the thermo section does not say which isotopologue its table is for (%q)", want)
	}
	var q, cp, cf, sig *svgInfo
	for i := range p.svgs {
		s := &p.svgs[i]
		switch {
		case s.hasText("Partition function"):
			q = s
		case s.hasText("Heat capacity"):
			cp = s
		case s.hasText("Closed form against level sum"):
			cf = s
		case s.hasText("Relative uncertainty"):
			sig = s
		}
	}
	if q == nil || cp == nil || cf == nil || sig == nil {
		t.Fatalf("thermo figures missing: Q %v, Cp %v, closed form %v, σ %v", q != nil, cp != nil, cf != nil, sig != nil)
	}
	for _, want := range []string{"T / K", "±2σ", "level sum", "closed form"} {
		if !q.hasText(want) {
			t.Errorf("Q(T) plot lacks %q", want)
		}
	}
	for _, want := range []string{"Cp° / J mol⁻¹ K⁻¹", "±2σ"} {
		if !cp.hasText(want) {
			t.Errorf("Cp°(T) plot lacks %q", want)
		}
	}
	for _, want := range []string{"Q (Monte Carlo)", "Cp°", "S°"} {
		if !sig.hasText(want) {
			t.Errorf("σ plot lacks %q", want)
		}
	}
	for _, want := range []string{"298.15", "3000", "standard pressure: 1 bar", "Monte Carlo"} {
		if !strings.Contains(p.text, want) {
			t.Errorf("thermo section lacks %q", want)
		}
	}
	nonFinite := regexp.MustCompile(`(?i)\bnan\b|[+-]?\binf(inity)?\b`)
	for name, b := range files {
		if m := nonFinite.Find(b); m != nil {
			t.Errorf("%s prints %q", name, m)
		}
	}
}

// A table of one temperature, a band of one line: the figures say why they
// are missing and the build succeeds.
func TestOnePointPlots(t *testing.T) {
	dir := fitFolder(t)
	writeThermo(t, filepath.Join(dir, "thermo.csv"), []float64{298.15}, false, nil)
	files := build(t, dir, report.Options{})
	p := parsePage(t, files[constants.ReportHTMLFile])
	if n := strings.Count(p.text, "Not plotted"); n != 1+4 {
		t.Errorf("%d figures explained as not plotted, want 5 (one band, four thermo figures)", n)
	}
	if !strings.Contains(string(files[constants.ReportMarkdownFile]), "Not plotted: Q(T), internal partition function has 1 finite value(s)") {
		t.Error("report.md does not say why Q(T) is not plotted")
	}
}

// The assign stage's files add their section; unassigned peaks and assign.md
// are shown escaped.
func TestAssignSection(t *testing.T) {
	dir := fitFolder(t)
	in, _ := os.ReadFile(filepath.Join(filepath.Dir(dir), "lines-in.csv"))
	os.WriteFile(filepath.Join(dir, "lines.csv"), in, 0o644)
	os.WriteFile(filepath.Join(dir, "unassigned.csv"), []byte("position,unc,intensity,reason\n2100.5,0.001,0.3,<i>no match</i>\n2101.5,0.001,0.2,no match\n"), 0o644)
	os.WriteFile(filepath.Join(dir, "assign.md"), []byte("# assign\n\n<script>alert(2)</script>\n"), 0o644)
	files := build(t, dir, report.Options{})
	h := string(files[constants.ReportHTMLFile])
	if strings.Contains(h, "<i>no match") || strings.Contains(h, "<script>alert(2)") {
		t.Error("assign files are not escaped in report.html")
	}
	p := parsePage(t, files[constants.ReportHTMLFile])
	for _, want := range []string{"Assigned lines in lines.csv (94)", "P 25, R 27", "Peaks left unassigned (unassigned.csv, 2 peaks)", "<i>no match</i>", "<script>alert(2)</script>"} {
		if !strings.Contains(p.text, want) {
			t.Errorf("assignment section lacks %q", want)
		}
	}
	md := string(files[constants.ReportMarkdownFile])
	if !strings.Contains(md, "[assign.md](assign.md)") || strings.Contains(md, "<i>") {
		t.Error("report.md: assign.md not linked or a peak not neutralised")
	}
}

// Formats: html alone writes no figures; md alone writes the figures.
func TestFormats(t *testing.T) {
	dir := fitFolder(t)
	h := build(t, dir, report.Options{Formats: []string{"html"}})
	if len(h) != 1 || h[constants.ReportHTMLFile] == nil {
		t.Errorf("html only: %d files", len(h))
	}
	m := build(t, dir, report.Options{Formats: []string{"md"}})
	if m[constants.ReportHTMLFile] != nil || m[constants.ReportMarkdownFile] == nil || len(m) != 6 {
		t.Errorf("md only: %d files", len(m))
	}
	// Reproducible: the same folder and time give the same bytes.
	a := build(t, dir, report.Options{})
	b := build(t, dir, report.Options{})
	for n := range a {
		if !bytes.Equal(a[n], b[n]) {
			t.Errorf("%s differs between two builds", n)
		}
	}
}

// BenchmarkBuild builds both reports for a 1000-line fit with a 6000-row
// thermo table.
func BenchmarkBuild(b *testing.B) {
	dir := bigFitFolder(b)
	writeThermo(b, filepath.Join(dir, "thermo.csv"), thermoGrid(6000)[:6000], true, nil)
	o := report.Options{Now: fixedNow}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := report.Build(dir, o); err != nil {
			b.Fatal(err)
		}
	}
}

// TestThermoBudgetInReport: a report built from the whole chain (CO bands
// 1-0 and 2-1, the thermo stage's default table up to 6000 K) says under At
// a glance which functions rest more on the model than on the data and from
// which temperature, rounds the excerpt's values to σ_total while showing the
// statistical σ beside them, draws both bands in the figures and carries the
// caution beside the tables, in HTML and Markdown.
func TestThermoBudgetInReport(t *testing.T) {
	root := t.TempDir()
	in := filepath.Join(root, "lines.csv")
	writeLines(t, in, append(bandLines(1, 0, 25), bandLines(2, 1, 20)...), 0.0005, 3)
	out := filepath.Join(root, "out")
	if _, err := pipelines.RunChain(pipelines.ChainOptions{Inputs: []string{in}, Out: out}); err != nil {
		t.Fatal(err)
	}
	files := build(t, out, report.Options{})
	md := string(files[constants.ReportMarkdownFile])
	p := parsePage(t, files[constants.ReportHTMLFile])
	for _, text := range []string{md, p.text} {
		for _, want := range []string{
			"the model part of the uncertainty (what the lines did not observe",
			"exceeds the statistical part of the fit for Q from",
			"Cp° from",
			"only as good as the model behind them",
			"σ fit",
			"Levels outside the data",
		} {
			if !strings.Contains(text, want) {
				t.Errorf("report lacks %q", want)
			}
		}
	}
	var cp *svgInfo
	for i := range p.svgs {
		if p.svgs[i].hasText("Heat capacity") {
			cp = &p.svgs[i]
		}
	}
	if cp == nil || !cp.hasText("±2σ total") || !cp.hasText("±2σ fit") {
		t.Errorf("the Cp° figure lacks its two bands")
	}
	// The 6000 K row of the excerpt: Cp° in parentheses to σ_total, which is
	// far wider than the statistical σ there.
	row := regexp.MustCompile(`\| 6000 \| ([0-9.]+)\(([0-9]+)\) \| ([0-9.e+-]+) \|`).FindStringSubmatch(md)
	if row == nil {
		t.Fatalf("no 6000 K row with value(σ_total) and σ fit in the Markdown excerpt:\n%s", md)
	}
	t.Logf("6000 K: Q %s(%s), σ fit %s", row[1], row[2], row[3])
}

// TestStaleThermoLeftOut: thermo files whose provenance names another
// constants record than the folder's constants.json (the fit was run again
// into the folder) are not combined with the new constants: the report
// leaves their section out and says why; Stale lists the same; files that
// match are used.
func TestStaleThermoLeftOut(t *testing.T) {
	dir := fitFolder(t)
	writeThermo(t, filepath.Join(dir, "thermo.csv"), thermoGrid(50), false, nil)
	cons, err := os.ReadFile(filepath.Join(dir, constants.ConstantsFile))
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(cons)
	for _, c := range []struct {
		name  string
		from  string
		stale bool
	}{
		{"matching", hex.EncodeToString(sum[:]), false},
		{"another record", strings.Repeat("ab", 32), true},
	} {
		t.Run(c.name, func(t *testing.T) {
			tj := fmt.Sprintf(`{"provenance": {"inputs": [{"path": "constants.json", "sha256": %q}]}}`, c.from)
			if err := os.WriteFile(filepath.Join(dir, constants.ThermoJSONFile), []byte(tj), 0o644); err != nil {
				t.Fatal(err)
			}
			stale, err := report.Stale(dir)
			if err != nil {
				t.Fatal(err)
			}
			md := string(build(t, dir, report.Options{Formats: []string{"md"}})[constants.ReportMarkdownFile])
			hasThermo := strings.Contains(md, "Partition function and thermodynamic functions")
			if c.stale != (len(stale) == 1) || hasThermo == c.stale || c.stale != strings.Contains(md, "the thermo stage is stale") {
				t.Errorf("stale %q, thermo section %v", stale, hasThermo)
			}
		})
	}
}
