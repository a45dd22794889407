package pipelines_test

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"bandwright/internal/browser"
	"bandwright/pipelines"
)

// TestReportsInBrowser renders each kind of report — the report of a run
// (the demo), a nightly summary and the report of a nightly result — in a
// headless Chromium at a desktop width (1280 px) and a phone's (400 px), and
// checks what a reader would see: the page never scrolls sideways (the
// document is no wider than the viewport), every table has a header row, the
// text of the figures is at least 9 px high, and printed to PDF (A4, from the
// page's own stylesheet) it has pages and nothing reaches beyond the
// printable width. Set BANDWRIGHT_SCREENSHOTS to a folder to keep a
// screenshot of each page and each PDF there to look at.
//
// Skipped where no Chromium is installed (CI installs Debian's chromium).
func TestReportsInBrowser(t *testing.T) {
	path := browser.Find()
	if path == "" {
		t.Skip("no Chromium on this machine (apt-get install chromium): the reports are not checked in a browser")
	}
	if testing.Short() {
		t.Skip("-short: no browser")
	}
	pages := reportPages(t)
	b, err := browser.Start(path, t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	keep := os.Getenv("BANDWRIGHT_SCREENSHOTS")
	for _, pg := range pages {
		for _, width := range []int{1280, 400} {
			t.Run(fmt.Sprintf("%s/%d", pg.name, width), func(t *testing.T) {
				checkScreen(t, b, pg.file, width)
				if keep != "" {
					png, err := b.Screenshot()
					if err != nil {
						t.Fatal(err)
					}
					os.WriteFile(filepath.Join(keep, fmt.Sprintf("%s-%d.png", pg.name, width)), png, 0o644)
				}
			})
		}
		t.Run(pg.name+"/print", func(t *testing.T) {
			pdf := checkPrint(t, b, pg.file)
			if keep != "" {
				os.WriteFile(filepath.Join(keep, pg.name+".pdf"), pdf, 0o644)
			}
		})
	}
}

type reportPage struct{ name, file string }

// reportPages makes one page of each kind: the demo's report, and a nightly
// archive of three line lists (the demo's lines, the third with a scale
// drift of 3×10⁻⁶) with its summary and the report of the drifted result.
func reportPages(t *testing.T) []reportPage {
	root := t.TempDir()
	demo := filepath.Join(root, "demo")
	if _, err := pipelines.RunDemo(demo); err != nil {
		t.Fatal(err)
	}
	lines, err := os.ReadFile(filepath.Join(demo, "results", "lines.csv"))
	if err != nil {
		t.Fatal(err)
	}
	inbox, archive := filepath.Join(root, "inbox"), filepath.Join(root, "archive")
	pipe := filepath.Join(root, "pipe.toml")
	os.MkdirAll(inbox, 0o755)
	os.WriteFile(pipe, []byte("name = \"CO cell, nightly\"\ninput = \"lines\"\n[fit]\nmodel = \"dunham\"\nterms = [\"Y10\", \"Y01\", \"Y20\", \"Y11\", \"Y02\", \"Y30\"]\n[thermo]\nrange = \"200:3000:200\"\n"), 0o644)
	for k, scale := range []float64{0, 1e-9, 3e-6} {
		os.WriteFile(filepath.Join(inbox, fmt.Sprintf("co-cell-%d.csv", k+1)), scaled(t, lines, scale, k), 0o644)
		if _, err := pipelines.RunNightly(context.Background(), pipelines.NightlyOptions{Inbox: inbox, Archive: archive, Pipeline: pipe, Workers: 1}); err != nil {
			t.Fatal(err)
		}
	}
	sums, _ := filepath.Glob(filepath.Join(archive, "summary-*.html"))
	res, _ := filepath.Glob(filepath.Join(archive, "results", "co-cell-3-*", "report.html"))
	if len(sums) != 1 || len(res) != 1 {
		t.Fatalf("nightly archive: summaries %q, result reports %q", sums, res)
	}
	return []reportPage{{"run-report", filepath.Join(demo, "results", "report.html")}, {"nightly-summary", sums[0]}, {"nightly-result", res[0]}}
}

// scaled returns the line list with its positions multiplied by 1 + scale
// and moved by a few parts in 10⁹ (differently for each k, so that the files
// differ).
func scaled(t *testing.T, lines []byte, scale float64, k int) []byte {
	rows := strings.Split(strings.TrimSpace(string(lines)), "\n")
	head := strings.Split(rows[0], ",")
	pos := -1
	for j, h := range head {
		if h == "position" {
			pos = j
		}
	}
	if pos < 0 {
		t.Fatal("lines.csv has no position column")
	}
	var b bytes.Buffer
	b.WriteString(rows[0] + "\n")
	for i, r := range rows[1:] {
		c := strings.Split(r, ",")
		var v float64
		fmt.Sscan(c[pos], &v)
		v *= 1 + scale + 1e-9*math.Sin(float64(i*(k+1)))
		c[pos] = fmt.Sprintf("%.6f", v)
		b.WriteString(strings.Join(c, ",") + "\n")
	}
	return b.Bytes()
}

// screenMeasure is what checkScreen measures in the page.
const screenMeasure = `(() => {
  const de = document.documentElement;
  const tables = [...document.querySelectorAll('table')];
  const noHead = tables.filter(t => !t.tHead || !t.tHead.querySelector('th')).map(t => (t.getAttribute('aria-labelledby') || t.outerHTML.slice(0, 80)));
  let minFont = 1e9, where = '';
  for (const svg of document.querySelectorAll('svg')) {
    const vb = svg.viewBox && svg.viewBox.baseVal;
    if (!vb || !vb.width) continue;
    const scale = svg.getBoundingClientRect().width / vb.width;
    for (const tx of svg.querySelectorAll('text')) {
      const px = parseFloat(getComputedStyle(tx).fontSize) * scale;
      if (px < minFont) { minFont = px; where = tx.textContent; }
    }
  }
  return {docWidth: de.scrollWidth, viewport: de.clientWidth, tables: tables.length, noHead: noHead, minFont: minFont, minFontText: where};
})()`

func checkScreen(t *testing.T, b *browser.Browser, file string, width int) {
	if err := b.Open("file://"+file, width, 900); err != nil {
		t.Fatal(err)
	}
	var m struct {
		DocWidth, Viewport, Tables int
		NoHead                     []string
		MinFont                    float64
		MinFontText                string
	}
	if err := b.Eval(screenMeasure, &m); err != nil {
		t.Fatal(err)
	}
	t.Logf("document %d px wide in a %d px viewport; %d tables; smallest figure text %.1f px (%q)", m.DocWidth, m.Viewport, m.Tables, m.MinFont, m.MinFontText)
	if m.DocWidth > m.Viewport {
		t.Errorf("the page scrolls sideways: document %d px wide, viewport %d px", m.DocWidth, m.Viewport)
	}
	if m.Tables == 0 {
		t.Error("no table")
	}
	if len(m.NoHead) > 0 {
		t.Errorf("tables without a header row: %q", m.NoHead)
	}
	if m.MinFont < 9 && m.MinFont < 1e9 {
		t.Errorf("figure text %.1f px high (%q): below 9 px", m.MinFont, m.MinFontText)
	}
}

// printMeasure finds, with the print stylesheet applied and the page as wide
// as the printable width of A4 (210 mm less the margins of the stylesheet's
// @page rule, 12 mm each side: 186 mm = 703 CSS px), the elements whose box
// reaches beyond it: their text would be cut at the edge of the paper.
const printMeasure = `(() => {
  const W = document.documentElement.clientWidth;
  const over = [];
  for (const el of document.body.querySelectorAll('*')) {
    if (el.closest('svg') && el.tagName.toLowerCase() !== 'svg') continue;
    const r = el.getBoundingClientRect();
    if (r.width > 0 && r.right > W + 0.5) over.push(el.tagName.toLowerCase() + ' ' + (el.textContent || '').slice(0, 40) + ' → ' + Math.round(r.right));
  }
  return {width: W, docWidth: document.documentElement.scrollWidth, over: over.slice(0, 8), n: over.length};
})()`

// printableWidth is the width of A4 inside the stylesheet's margins in CSS px.
const printableWidth = 703

func checkPrint(t *testing.T, b *browser.Browser, file string) []byte {
	if err := b.Open("file://"+file, printableWidth, 1000); err != nil {
		t.Fatal(err)
	}
	if err := b.Media("print"); err != nil {
		t.Fatal(err)
	}
	var m struct {
		Width, DocWidth, N int
		Over               []string
	}
	if err := b.Eval(printMeasure, &m); err != nil {
		t.Fatal(err)
	}
	if m.N > 0 || m.DocWidth > m.Width {
		t.Errorf("printed, %d elements reach beyond the printable width %d px (document %d px): %q", m.N, m.Width, m.DocWidth, m.Over)
	}
	if err := b.Media(""); err != nil {
		t.Fatal(err)
	}
	pdf, err := b.PDF()
	if err != nil {
		t.Fatal(err)
	}
	pages := len(regexp.MustCompile(`/Type\s*/Page\b[^s]`).FindAll(pdf, -1))
	a4 := regexp.MustCompile(`/MediaBox\s*\[\s*0 0 59[45](\.\d+)? 84[12](\.\d+)?\s*\]`).Match(pdf)
	t.Logf("PDF: %d pages, %d bytes, A4 %v", pages, len(pdf), a4)
	if pages < 1 || pages > 40 {
		t.Errorf("PDF of %d pages", pages)
	}
	if !a4 {
		t.Error("the PDF pages are not A4")
	}
	return pdf
}
