// Package report builds bandwright's lab-notebook reports from the files of
// an output folder: report.html, a single self-contained page (inline SVG
// plots, no network access, a print stylesheet), and report.md, the same
// tables in Markdown with each plot in its own report-*.svg file beside it.
//
// The report reads what the stages left in the folder: constants.json is
// required (the fit stage); residuals.csv, thermo.csv (thermo stage) and
// assign.md, lines.csv, unassigned.csv (assign stage) add their sections when
// present, and a missing stage is named in one line of the summary.
//
// # Layout
//
// A title block with a strip of the three stages (present or not), a
// contents line, then numbered sections:
//
//  1. At a glance — species, model, fit status, statistics, bands, levels
//     reached, warnings, stages not in the folder.
//  2. Constants — fitted and fixed parameters in parenthetical notation
//     (constants.FormatParen), the rounding when done, derived constants.
//  3. Residuals by band — (o−c)/unc against J″ per band with guides at ±3,
//     rejected lines marked (off scale: an arrow with the value); the
//     largest residuals; rejected and annotated lines.
//  4. Lines against position — the Fortrat diagram, and (o−c)/unc against
//     position by input file, per unit.
//  5. Parameter correlations — heat map, strongly correlated pairs, matrix.
//  6. Partition function and thermodynamic functions — excerpt of thermo.csv,
//     Q(T) and Cp°(T) with ±2σ bands, closed form against level sum,
//     relative uncertainty against T.
//  7. Line assignment — assigned lines by band, unassigned peaks, assign.md
//     (rendered as HTML by renderMarkdown).
//  8. Conventions. 9. Cautions. 10. Provenance — inputs and their SHA-256,
//     options, the files of the folder with their SHA-256, versions.
//
// Sections 3–4, 6 and 7 appear only when their files do. Every number is
// finite or a dash; a plot that cannot be drawn (a band with one line) is
// replaced by a sentence saying why. All text from files (comments, file
// names, notes) is escaped: by html/template in HTML, by backslash escapes and
// entities in Markdown.
package report

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"bandwright/constants"
	"bandwright/pipelines/outdir"
)

// Options choose what a report holds. The zero value builds both formats.
type Options struct {
	// Formats lists "html" and/or "md"; empty means both.
	Formats []string
	// Title replaces the default title ("bandwright report — species").
	Title string
	// Input names what the report is about in its running title (the input
	// file of a nightly result, say); "" names the line lists the fit read.
	Input string
	// Flag is a line shown under the title (the drift test of a nightly
	// result); "" shows none. Alert marks it as one that must not be missed.
	Flag  string
	Alert bool
	// Now gives the build time printed in the report; nil means time.Now.
	Now func() time.Time
	// Version is the program version printed in the provenance section.
	Version string
	// Notes are extra provenance lines from the caller (a pipeline file, the
	// choices made automatically), printed as given.
	Notes []string
}

func (o Options) formats() (html, md bool, err error) {
	if len(o.Formats) == 0 {
		return true, true, nil
	}
	for _, f := range o.Formats {
		switch strings.ToLower(strings.TrimSpace(f)) {
		case "html":
			html = true
		case "md", "markdown":
			md = true
		default:
			return false, false, fmt.Errorf("report: format %q: use html and/or md", f)
		}
	}
	return html, md, nil
}

// Stale returns one sentence per stage of the folder dir whose files were
// made from other inputs than its constants.json (their provenance hashes
// differ); the report marks them and leaves stale thermo files out.
func Stale(dir string) ([]string, error) {
	f, err := readFolder(dir)
	if err != nil {
		return nil, err
	}
	return f.stale, nil
}

// Build reads the stage outputs in dir and returns the files of the report,
// name → content: report.html and/or report.md, and with Markdown the
// report-*.svg figures it references. Nothing is written. A folder without
// constants.json is an error.
func Build(dir string, o Options) (map[string][]byte, error) {
	wantHTML, wantMD, err := o.formats()
	if err != nil {
		return nil, err
	}
	if o.Now == nil {
		o.Now = time.Now
	}
	now := o.Now()
	o.Now = func() time.Time { return now } // one instant for the whole report
	f, err := readFolder(dir)
	if err != nil {
		return nil, err
	}
	doc := buildDocument(f, o)
	out := map[string][]byte{}
	if wantHTML {
		var b bytes.Buffer
		if err := writeHTML(&b, doc); err != nil {
			return nil, fmt.Errorf("report: %s: %w", constants.ReportHTMLFile, err)
		}
		out[constants.ReportHTMLFile] = b.Bytes()
	}
	if wantMD {
		var b bytes.Buffer
		if err := writeMarkdown(&b, doc); err != nil {
			return nil, fmt.Errorf("report: %s: %w", constants.ReportMarkdownFile, err)
		}
		out[constants.ReportMarkdownFile] = b.Bytes()
		for _, fig := range doc.figures {
			if fig.SVG != nil {
				out[fig.Name] = svgFile(fig.SVG)
			}
		}
	}
	return out, nil
}

// Rebuild builds the report of dir and writes its files into dir: each file
// is written in full to a temporary folder beside dir and renamed into place
// only when all are complete, so a failure leaves the old report as it was.
// When report.md is written, figures of an older report (report-*.svg files
// written by bandwright) that the new one no longer has are removed
// afterwards. Other files are not touched. It returns the names written, sorted.
func Rebuild(dir string, o Options) ([]string, error) {
	files, err := Build(dir, o)
	if err != nil {
		return nil, err
	}
	names := make([]string, 0, len(files))
	for n := range files {
		names = append(names, n)
	}
	sort.Strings(names)
	d, err := outdir.Begin(dir)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	defer d.Abort()
	for _, n := range names {
		content := files[n]
		if err := d.Write(n, func(w io.Writer) error { _, err := w.Write(content); return err }); err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
	}
	if err := d.Commit(); err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	// With Markdown written, figures of an older report that the new one no
	// longer references are stale; without it, an older report.md still
	// points at them.
	if _, ok := files[constants.ReportMarkdownFile]; ok {
		if err := removeStaleFigures(dir, files); err != nil {
			return names, err
		}
	}
	return names, nil
}

// removeStaleFigures deletes report-*.svg files in dir that carry the marker
// of a bandwright report figure and are not part of the current report.
func removeStaleFigures(dir string, current map[string][]byte) error {
	old, err := filepath.Glob(filepath.Join(dir, "report-*.svg"))
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	var errs []error
	for _, p := range old {
		if _, ok := current[filepath.Base(p)]; ok {
			continue
		}
		head := make([]byte, 256)
		fh, err := os.Open(p)
		if err != nil {
			continue
		}
		n, _ := io.ReadFull(fh, head)
		fh.Close()
		if !bytes.Contains(head[:n], []byte(svgMarker)) {
			continue
		}
		if err := os.Remove(p); err != nil {
			errs = append(errs, err)
		}
	}
	if len(errs) > 0 {
		return fmt.Errorf("report: removing figures of the older report: %w", errors.Join(errs...))
	}
	return nil
}
