package assign

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/internal/csvcell"
	"bandwright/internal/mdtext"
)

// assignColumns are the assignment's own columns of lines.csv, after the
// line-list columns (linelist.Columns) that `bandwright fit` reads.
var assignColumns = []string{"peak_index", "confidence", "blend", "o_minus_c", "cd_checks", "cd_passed", "intensity", "intensity_predicted"}

// passThrough returns the names under which the peak list's own columns are
// written: a name that repeats one of ours gets "peak_" in front (a
// "comment" column is merged into ours instead).
func passThrough(extra []string, taken []string) (names []string, commentAt int) {
	commentAt = -1
	used := map[string]bool{}
	for _, n := range taken {
		used[strings.ToLower(n)] = true
	}
	for i, n := range extra {
		if strings.EqualFold(strings.TrimSpace(n), "comment") {
			commentAt = i
			names = append(names, "")
			continue
		}
		name := n
		for used[strings.ToLower(name)] {
			name = "peak_" + name
		}
		used[strings.ToLower(name)] = true
		names = append(names, name)
	}
	return names, commentAt
}

// WriteLines writes lines.csv: one row per assigned line, in the line-list
// format that `bandwright fit` reads (species, v_up, J_up, v_lo, J_lo,
// position, unc, unit, branch, comment), position repeated exactly as written
// in the peak list, followed by peak_index (the peak's place in the peak
// list), confidence (0–1), blend ("yes" when other predicted lines claim the
// peak; the comment names them), o_minus_c (final internal fit, in the line's
// unit), cd_checks and cd_passed (combination differences), the peak's
// intensity and the predicted relative intensity, then the peak list's own
// columns.
func WriteLines(w io.Writer, res *Result) error {
	var extra []string
	if res.Problem.Peaks != nil {
		extra = res.Problem.Peaks.Extra
	}
	names, commentAt := passThrough(extra, append(linelist.Columns(), assignColumns...))
	cols := append([]string(nil), assignColumns...)
	for _, n := range names {
		if n != "" {
			cols = append(cols, n)
		}
	}
	lines := make([]linelist.Line, len(res.Lines))
	uncText := make([]string, len(res.Lines))
	for k, a := range res.Lines {
		p := a.Peak
		var notes []string
		if commentAt >= 0 && commentAt < len(p.Extra) && strings.TrimSpace(p.Extra[commentAt]) != "" {
			notes = append(notes, strings.TrimSpace(p.Extra[commentAt]))
		}
		blend := "no"
		if len(a.Blend) > 0 {
			blend = "yes"
			var ls []string
			for _, t := range a.Blend {
				ls = append(ls, t.Label())
			}
			notes = append(notes, "blend with "+strings.Join(ls, ", "))
		}
		if p.Unc != 0 && a.UncSource == "peak list" {
			uncText[k] = p.UncText
		}
		vals := []string{strconv.Itoa(p.Index), strconv.FormatFloat(a.Confidence, 'f', 3, 64), blend,
			strconv.FormatFloat(a.ObsMinusCalc, 'g', 4, 64), strconv.Itoa(a.CDChecked), strconv.Itoa(a.CDPassed),
			p.IntensityText, strconv.FormatFloat(a.Intensity, 'g', 4, 64)}
		for i, n := range names {
			if n == "" {
				continue
			}
			v := ""
			if i < len(p.Extra) {
				v = p.Extra[i]
			}
			vals = append(vals, v)
		}
		lines[k] = linelist.Line{Species: a.Species, VUp: a.VUp, JUp: a.JUp, VLo: a.VLo, JLo: a.JLo,
			Position: p.Position, Unc: a.Unc, Unit: p.Unit, Branch: a.Branch(), Comment: strings.Join(notes, "; "), Extra: vals}
	}
	return linelist.WriteText(w, lines, cols, func(k int) (string, string) {
		return res.Lines[k].Peak.Text, uncText[k]
	})
}

var leftoverColumns = []string{"peak_index", "position", "unc", "unit", "intensity", "nearest", "nearest_position", "distance", "dropped", "reason"}

// WriteUnassigned writes unassigned.csv: every peak left without an
// assignment, in peak-list order, with the nearest predicted line of a
// locked band, its position and the distance observed − predicted (both in
// the peak's unit), and for a line dropped by a check the transition and the
// reason; then the peak list's own columns.
func WriteUnassigned(w io.Writer, res *Result) error {
	var extra []string
	if res.Problem.Peaks != nil {
		extra = res.Problem.Peaks.Extra
	}
	names, _ := passThrough(extra, leftoverColumns)
	cw := csv.NewWriter(w)
	head := append([]string(nil), leftoverColumns...)
	for i, n := range names {
		if n == "" {
			n = extra[i]
		}
		head = append(head, csvcell.Neutralise(n))
	}
	cw.Write(head)
	for _, u := range res.Unassigned {
		p := u.Peak
		near, npos, dist := "", "", ""
		if u.Nearest != nil {
			near = u.Nearest.Label()
			npos = strconv.FormatFloat(p.Unit.FromWavenumber(u.Nearest.Position), 'f', 6, 64)
			dist = strconv.FormatFloat(u.Distance, 'g', 4, 64)
		}
		dropped := ""
		if u.Dropped != nil {
			dropped = u.Dropped.Label()
		}
		rec := []string{strconv.Itoa(p.Index), p.Text, p.UncText, p.Unit.String(), p.IntensityText, near, npos, dist, dropped, csvcell.Neutralise(u.Reason)}
		for i := range names {
			v := ""
			if i < len(p.Extra) {
				v = p.Extra[i]
			}
			rec = append(rec, csvcell.Neutralise(v))
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// ReportInfo is what the report says about where the inputs came from.
type ReportInfo struct {
	Peaks, Start string // file names
	Version      string
}

// WriteReport writes assign.md: the inputs and settings, then per band the
// lock (offset, B correction, score and the best alternative), the number of
// lines and their J range per branch, the rms of the final fit, the
// combination-difference results and the lines dropped with their reasons;
// the bands that could not be locked with the best offset found and its
// score; the peaks left over; and the conventions.
func WriteReport(w io.Writer, res *Result, info ReportInfo) error {
	var b strings.Builder
	p := res.Problem
	fmt.Fprintf(&b, "# Assignment\n\n")
	fmt.Fprintf(&b, "- peak list: %s (%d peaks)\n", mdtext.Escape(info.Peaks), len(p.Peaks.Peaks))
	fmt.Fprintf(&b, "- starting constants: %s\n", mdtext.Escape(info.Start))
	var sps []string
	for _, s := range p.Start.Species {
		x := fmt.Sprintf("%s (abundance %.4g", s.Label, s.Abundance)
		if s.ScaledFrom != "" {
			x += ", mass-scaled from " + s.ScaledFrom
		}
		sps = append(sps, x+")")
	}
	fmt.Fprintf(&b, "- species: %s\n", strings.Join(sps, ", "))
	var bs []string
	for _, x := range p.Bands {
		bs = append(bs, x.String())
	}
	fmt.Fprintf(&b, "- bands: %s; spectrum: %s; temperature: %g K\n", strings.Join(bs, ", "), p.Spectrum, p.Temperature)
	if res.Settings.Tolerance > 0 {
		fmt.Fprintf(&b, "- tolerance: %.6g cm-1 (given)\n", res.Settings.Tolerance)
	} else {
		fmt.Fprintf(&b, "- tolerance: %g·√(u² + σ²) per peak and prediction (u: the peak's 1σ, scaled by the fit's robust standard deviation when above 1; σ: the prediction's)\n", res.Settings.sigmas())
	}
	if res.UncEstimated {
		fmt.Fprintf(&b, "- the peak list gives no uncertainties: every line's unc is the rms of the internal fit's residuals\n")
	}
	if info.Version != "" {
		fmt.Fprintf(&b, "- bandwright %s\n", info.Version)
	}
	real := 0
	for _, u := range res.Unassigned {
		if u.Dropped != nil {
			real++
		}
	}
	fmt.Fprintf(&b, "\n**%d lines assigned** of %d peaks; %d peaks left over (%d of them dropped by a check). ",
		len(res.Lines), len(p.Peaks.Peaks), len(res.Unassigned), real)
	if res.Fit != nil {
		st := res.Fit.Stats
		fmt.Fprintf(&b, "Internal fit: %d lines, %d parameters, dimensionless standard deviation %.3g, rms %.3g cm-1.\n", st.Used, st.Params, st.Sigma, st.RMSCm)
	}
	b.WriteString("\n## Bands\n\n")
	b.WriteString("| band | lock offset (cm-1) | ΔB (cm-1) | score | alternative | lines | J″ ranges | rms (cm-1) | rms/unc | comb. diff. lower/upper (failed) | across bands (failed) | dropped |\n")
	b.WriteString("|---|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, x := range res.Bands {
		if !x.Locked {
			continue
		}
		var br []string
		keys := make([]string, 0, len(x.Branches))
		for k := range x.Branches {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			r := x.Branches[k]
			br = append(br, fmt.Sprintf("%s %d–%d", k, r[0], r[1]))
		}
		fmt.Fprintf(&b, "| %s | %+.4f | %+.2g | %.2f | %+.4f (%.2f) | %d | %s | %.2g | %.2f | %d/%d (%d/%d) | %d (%d) | %d |\n",
			x.Label(), x.Lock.Offset, x.Lock.DeltaB, x.Lock.Score, x.Lock.AltOffset, x.Lock.AltScore, x.Lines, strings.Join(br, ", "),
			x.RMS, x.RMSNorm, x.CD.Lower, x.CD.Upper, x.CD.LowerFailed, x.CD.UpperFailed, x.CD.Cross, x.CD.CrossFailed, len(x.Dropped))
	}
	b.WriteString("\nThe lock moves the band's predicted lines by offset + ΔB·[J′(J′+1) − J″(J″+1)]; the score (0–1) is the share of its strong low-J lines found, weighted by position and intensity agreement; the alternative is the best pattern that puts them on other peaks (a wrong-J pattern). Combination differences are differences of two lines sharing a level (lower: sharing the upper level, R(J−1) − P(J+1); upper: sharing the lower level, R(J) − P(J)), checked against the fit and against other bands measuring the same level difference.\n")

	var failed []BandResult
	for _, x := range res.Bands {
		if !x.Locked {
			failed = append(failed, x)
		}
	}
	if len(failed) > 0 {
		b.WriteString("\n## Bands not locked\n\n")
		for _, x := range failed {
			fmt.Fprintf(&b, "- **%s**: %s (predicted strongest line %.3g relative to the strongest of all bands)\n", x.Label(), mdtext.Escape(x.Lock.Reason), x.MaxPredict/maxPredict(res))
		}
	}
	var drops []Leftover
	for _, x := range res.Bands {
		drops = append(drops, x.Dropped...)
	}
	if len(drops) > 0 {
		b.WriteString("\n## Lines dropped by the checks\n\n")
		b.WriteString("| peak | position | dropped | reason |\n|---|---|---|---|\n")
		for _, d := range drops {
			fmt.Fprintf(&b, "| %d | %s %s | %s | %s |\n", d.Peak.Index, d.Peak.Text, d.Peak.Unit, d.Dropped.Label(), mdtext.Escape(d.Reason))
		}
	}
	if len(res.Warnings) > 0 {
		b.WriteString("\n## Warnings\n\n")
		for _, w := range res.Warnings {
			fmt.Fprintf(&b, "- %s\n", mdtext.Escape(w))
		}
	}
	if res.Fit != nil {
		b.WriteString("\n## Internal fit (term-values model)\n\n| parameter | value (cm-1) |\n|---|---|\n")
		for _, q := range res.Fit.Params {
			v := constants.FormatParen(q.Value, q.Sigma)
			if q.Fixed {
				v = strconv.FormatFloat(q.Value, 'g', 6, 64) + " (held)"
			}
			fmt.Fprintf(&b, "| %s | %s |\n", q.ID(), v)
		}
	}
	b.WriteString("\n## Conventions\n\n")
	b.WriteString("Positions in cm-1 unless a line's unit says MHz (1 cm-1 = 29 979.2458 MHz). Uncertainties are 1σ; `1.922529(3)` means 1.922529 ± 0.000003. ")
	b.WriteString("Predicted intensities: Boltzmann population of the lower level at the stated temperature, nuclear-spin weight, Hönl–London (infrared, rotation) or Placzek–Teller (Raman) factor, abundance, harmonic-oscillator vibrational factor, and ν(1 − e^(−c₂ν/T)) for absorption; each band's scale and a linear trend with lower-state energy are fitted to the observed intensities. ")
	b.WriteString("The internal fit is a term-values model per isotopologue (T_v, B_v, D_v, H_v, L_v as the J range allows; terms not floated are held at the starting constants), with covariance " + constants.CovarianceConvention + ". ")
	b.WriteString("confidence (0–1) in lines.csv ranks assignments: lock margin × how clearly the peak beats other candidates × combination-difference checks × share of a blended peak; it is not a calibrated probability.\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func maxPredict(res *Result) float64 {
	m := 0.0
	for _, x := range res.Bands {
		m = math.Max(m, x.MaxPredict)
	}
	if m == 0 {
		return 1
	}
	return m
}
