package fit

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"bandwright/fit/linelist"
)

// WriteResiduals writes residuals.csv: every input line with its observed and
// calculated position (in the line's own unit), o−c, (o−c)/unc, whether it was
// used, its file and row, and its pass-through columns.
func WriteResiduals(w io.Writer, p Problem, r *Result, extra []string) error {
	cw := csv.NewWriter(w)
	head := []string{"file", "row", "species", "v_up", "J_up", "v_lo", "J_lo", "branch", "unit", "obs", "unc", "calc", "o_c", "o_c_over_unc", "status", "note", "comment"}
	head = append(head, extra...)
	if err := cw.Write(head); err != nil {
		return err
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 12, 64) }
	n := linelist.NeutraliseCell
	rec := make([]string, len(head))
	for i, l := range p.Lines {
		lr := r.Lines[i]
		status := "used"
		if !lr.Used {
			status = "rejected"
		}
		branch := l.Branch
		if branch == "" {
			branch = linelist.BranchLetter(l.DeltaJ())
		}
		rec = rec[:0]
		rec = append(rec, n(l.File), strconv.Itoa(l.Row), l.Species,
			strconv.Itoa(l.VUp), strconv.Itoa(l.JUp), strconv.Itoa(l.VLo), strconv.Itoa(l.JLo),
			branch, l.Unit.String(),
			strconv.FormatFloat(l.Position, 'g', -1, 64), strconv.FormatFloat(l.Unc, 'g', -1, 64),
			f(lr.Calc), strconv.FormatFloat(lr.OmC, 'g', 6, 64), strconv.FormatFloat(lr.Norm, 'f', 3, 64),
			status, n(lr.Reason), n(l.Comment))
		for k := range extra {
			v := ""
			if k < len(l.Extra) {
				v = l.Extra[k]
			}
			rec = append(rec, n(v))
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// WriteSummary writes fit.md: the constants in parenthetical notation, the
// statistics, the warnings and the largest residuals.
func WriteSummary(w io.Writer, p Problem, r *Result, rec *Record) error {
	var b strings.Builder
	fmt.Fprintf(&b, "# bandwright fit — %s model\n\n", r.Model.Kind())
	fmt.Fprintf(&b, "Species: %s", strings.Join(r.Model.Species(), ", "))
	if r.Model.Kind() == "dunham" {
		fmt.Fprintf(&b, " (reference: %s)", r.Model.Species()[0])
	}
	b.WriteString("\n\n")
	b.WriteString("Units: cm⁻¹. Uncertainties are 1σ in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003. ")
	b.WriteString("σ are " + CovarianceConvention + ".\n\n")
	b.WriteString("## Statistics\n\n| quantity | value |\n|---|---|\n")
	st := r.Stats
	fmt.Fprintf(&b, "| lines given | %d |\n| lines used | %d |\n| lines rejected | %d |\n| parameters fitted | %d |\n| degrees of freedom | %d |\n", st.Lines, st.Used, st.Rejected, st.Params, st.DOF)
	fmt.Fprintf(&b, "| dimensionless standard deviation s | %.4g |\n| rms (cm⁻¹) | %.4g |\n", st.Sigma, st.RMSCm)
	if st.LinesMHz > 0 {
		fmt.Fprintf(&b, "| rms of MHz lines (MHz) | %.4g |\n", st.RMSMHz)
	}
	fmt.Fprintf(&b, "| condition number (scaled) | %.3g |\n| status | %s |\n\n", st.Condition, r.Status)
	b.WriteString("## Constants\n\n| parameter | species | value | note |\n|---|---|---|---|\n")
	for _, q := range r.Params {
		sp := q.Species
		if q.Element != "" {
			sp = q.Element
		}
		note := ""
		if q.Fixed {
			note = "fixed"
		}
		name := q.Name
		if q.V >= 0 {
			name = fmt.Sprintf("%s (v=%d)", q.Name, q.V)
		}
		fmt.Fprintf(&b, "| %s | %s | %s | %s |\n", name, mdEscape(sp), FormatParen(q.Value, q.Sigma), note)
	}
	for _, c := range r.Calib {
		if !c.Fixed {
			fmt.Fprintf(&b, "| κ | %s | %s | calibration factor |\n", mdEscape(c.File), FormatParen(c.Kappa, c.Sigma))
		}
	}
	if r.Rounding != nil {
		fmt.Fprintf(&b, "\nValues rounded by sequential rounding (Watson 1977); χ² %.6g before, %.6g after rounding. σ are those of the unrounded fit.\n", r.Rounding.Chi2Before, r.Rounding.Chi2After)
	}
	if len(r.Derived) > 0 {
		b.WriteString("\n## Derived constants\n\n| constant | species | value | unit | note |\n|---|---|---|---|---|\n")
		for _, d := range r.Derived {
			fmt.Fprintf(&b, "| %s | %s | %s | %s | %s |\n", d.Name, mdEscape(d.Species), FormatParen(d.Value, d.Sigma), d.Unit, mdEscape(d.Note))
		}
	}
	b.WriteString("\n## Warnings\n\n")
	if len(r.Warnings) == 0 {
		b.WriteString("None.\n")
	}
	for _, s := range r.Warnings {
		fmt.Fprintf(&b, "- %s\n", mdEscape(s))
	}
	b.WriteString("\n## Largest residuals\n\n| file:row | species | transition | o−c | (o−c)/unc | status |\n|---|---|---|---|---|---|\n")
	idx := make([]int, len(p.Lines))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, c int) bool { return math.Abs(r.Lines[idx[a]].Norm) > math.Abs(r.Lines[idx[c]].Norm) })
	for _, i := range idx[:min(len(idx), 15)] {
		l, lr := p.Lines[i], r.Lines[i]
		st := "used"
		if !lr.Used {
			st = "rejected"
		}
		fmt.Fprintf(&b, "| %s:%d | %s | %d–%d %s(%d) | %.4g %s | %.2f | %s |\n", mdEscape(l.File), l.Row, l.Species, l.VUp, l.VLo, linelist.BranchLetter(l.DeltaJ()), l.JLo, lr.OmC, l.Unit, lr.Norm, st)
	}
	if rec != nil && len(rec.Provenance.Inputs) > 0 {
		b.WriteString("\n## Inputs\n\n")
		for _, in := range rec.Provenance.Inputs {
			fmt.Fprintf(&b, "- `%s` sha256 %s\n", strings.ReplaceAll(in.Path, "`", "'"), in.SHA256)
		}
		fmt.Fprintf(&b, "\nbandwright %s, %s\n", rec.Provenance.Version, rec.Provenance.Created)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// mdEscape escapes text for a Markdown table cell: pipes, markup characters
// and HTML are neutralised.
func mdEscape(s string) string {
	r := strings.NewReplacer("|", `\|`, "<", "&lt;", ">", "&gt;", "&", "&amp;", "*", `\*`, "_", `\_`, "`", "\\`", "[", `\[`, "]", `\]`, "\n", " ", "\r", " ")
	return r.Replace(s)
}
