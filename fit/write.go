package fit

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
	"bandwright/fit/model"
	"bandwright/internal/csvcell"
	"bandwright/internal/mdtext"
)

// WriteResiduals writes residuals.csv: every input line with its observed and
// calculated position, uncertainty and o−c in the fit's display unit
// (Settings.Unit; a line given in that unit is written exactly as read),
// (o−c)/unc, whether it was
// used, its file and row, and its pass-through columns; a pass-through column
// whose name repeats one of these gets "input_" in front (lines.csv of assign
// carries its own o_minus_c, from assign's internal fit). The CSV follows RFC
// 4180 as encoding/csv writes it (a field is quoted when it holds a comma, a
// quote, a line break or starts with white space); text cells go through
// csvcell.Neutralise. Rows are formatted into one reused buffer.
func WriteResiduals(w io.Writer, p Problem, r *Result, extra []string) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	head := []string{"file", "row", "species", "v_up", "J_up", "v_lo", "J_lo", "branch", "unit", "obs", "unc", "calc", "o_minus_c", "o_minus_c_over_unc", "status", "note", "comment"}
	open := linelist.HasOpenShell(p.Lines)
	if open {
		head = append(head[:7], append(linelist.OpenColumns(), head[7:]...)...)
	}
	n := csvcell.Neutralise
	var b []byte
	for k, h := range head {
		b = appendSep(b, k)
		b = csvcell.Append(b, h)
	}
	for _, h := range passThroughNames(extra, head) {
		b = appendSep(b, 1)
		b = csvcell.Append(b, n(h))
	}
	b = append(b, '\n')
	if _, err := bw.Write(b); err != nil {
		return err
	}
	for i := range p.Lines {
		l := &p.Lines[i]
		lr := &r.Lines[i]
		status := "used"
		if !lr.Used {
			status = "rejected"
		}
		branch := l.Branch
		switch {
		case branch == "" && l.Open == nil:
			branch = linelist.BranchLetter(l.DeltaJ())
		case branch == "":
			branch = linelist.LineBranch(l).String()
		}
		b = csvcell.Append(b[:0], n(l.File))
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(l.Row), 10)
		b = append(b, ',')
		b = csvcell.Append(b, l.Species)
		b = strconv.AppendInt(append(b, ','), int64(l.VUp), 10)
		b = linelist.AppendJ(append(b, ','), l.J2Up())
		b = strconv.AppendInt(append(b, ','), int64(l.VLo), 10)
		b = linelist.AppendJ(append(b, ','), l.J2Lo())
		if open {
			for _, c := range linelist.OpenCells(l.Open) {
				b = append(b, ',')
				b = csvcell.Append(b, c)
			}
		}
		b = append(b, ',')
		b = csvcell.Append(b, branch)
		b = append(b, ',')
		b = append(b, r.Unit.String()...)
		conv := func(x float64) float64 { return x }
		if l.Unit != r.Unit {
			conv = func(x float64) float64 { return r.Unit.FromWavenumber(l.Unit.ToWavenumber(x)) }
		}
		b = append(b, ',')
		b = strconv.AppendFloat(b, conv(l.Position), 'g', -1, 64)
		b = append(b, ',')
		b = strconv.AppendFloat(b, conv(l.Unc), 'g', -1, 64)
		b = append(b, ',')
		b = strconv.AppendFloat(b, conv(lr.Calc), 'g', 12, 64)
		b = append(b, ',')
		b = strconv.AppendFloat(b, conv(lr.OmC), 'g', 6, 64)
		b = append(b, ',')
		b = strconv.AppendFloat(b, lr.Norm, 'f', 3, 64)
		b = append(b, ',')
		b = append(b, status...)
		b = append(b, ',')
		b = csvcell.Append(b, n(lr.Reason))
		b = append(b, ',')
		b = csvcell.Append(b, n(l.Comment))
		for k := range extra {
			v := ""
			if k < len(l.Extra) {
				v = l.Extra[k]
			}
			b = append(b, ',')
			b = csvcell.Append(b, n(v))
		}
		b = append(b, '\n')
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// passThroughNames returns the names under which the pass-through columns
// extra are written after the columns taken: a name that repeats a taken or an
// earlier name (ignoring case and surrounding blanks) gets "input_" in front
// until it is unique.
func passThroughNames(extra, taken []string) []string {
	used := make(map[string]bool, len(taken)+len(extra))
	for _, t := range taken {
		used[strings.ToLower(strings.TrimSpace(t))] = true
	}
	out := make([]string, len(extra))
	for i, n := range extra {
		for used[strings.ToLower(strings.TrimSpace(n))] {
			n = "input_" + strings.TrimSpace(n)
		}
		used[strings.ToLower(strings.TrimSpace(n))] = true
		out[i] = n
	}
	return out
}

func appendSep(b []byte, k int) []byte {
	if k > 0 {
		return append(b, ',')
	}
	return b
}

// WriteSummary writes fit.md: the constants in parenthetical notation in the
// fit's display unit (Settings.Unit; constants.ShowEnergy chooses MHz, kHz or
// Hz per constant), the statistics, the derived constants, the warnings and
// the largest residuals. rec is the record of r (nil: made here).
func WriteSummary(w io.Writer, p Problem, r *Result, rec *constants.Record) error {
	if rec == nil {
		rec = NewRecord(r)
	}
	var b strings.Builder
	fmt.Fprintf(&b, "# bandwright fit — %s model\n\n", r.Model.Kind())
	fmt.Fprintf(&b, "Species: %s", strings.Join(r.Model.Species(), ", "))
	if r.Model.Kind() == "dunham" {
		fmt.Fprintf(&b, " (reference: %s)", r.Model.Species()[0])
	}
	b.WriteString("\n\n")
	writeStates(&b, r)
	b.WriteString(unitSentence(r.Unit) + " Uncertainties are 1σ in parentheses on the last digits: 1.922529(3) means 1.922529 ± 0.000003. ")
	b.WriteString("σ are " + constants.CovarianceConvention + ".\n\n")
	summaryStats(&b, r, rec)
	summaryConstants(&b, r, rec)
	b.WriteString("\n## Warnings\n\n")
	if len(r.Warnings) == 0 {
		b.WriteString("None.\n")
	}
	for _, s := range r.Warnings {
		fmt.Fprintf(&b, "- %s\n", mdtext.Escape(s))
	}
	summaryResiduals(&b, p, r)
	if len(rec.Provenance.Inputs) > 0 {
		b.WriteString("\n## Inputs\n\n")
		for _, in := range rec.Provenance.Inputs {
			fmt.Fprintf(&b, "- %s sha256 %s\n", mdtext.Escape(in.Path), in.SHA256)
		}
		fmt.Fprintf(&b, "\nbandwright %s, %s\n", rec.Provenance.Version, rec.Provenance.Created)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// unitSentence states the unit of the outputs.
func unitSentence(u linelist.Unit) string {
	if u.IsFrequency() {
		return fmt.Sprintf("Units: %s for positions and residuals; each constant in the largest of %s, kHz, Hz in which it is at least 1 (its unit is beside it); 1 cm⁻¹ = 29 979.2458 MHz. The constants record keeps cm⁻¹.", u, u)
	}
	return "Units: cm⁻¹."
}

// summaryStats writes the statistics table of fit.md.
func summaryStats(b *strings.Builder, r *Result, rec *constants.Record) {
	b.WriteString("## Statistics\n\n| quantity | value |\n|---|---|\n")
	st := r.Stats
	fmt.Fprintf(b, "| lines given | %d |\n| lines used | %d |\n| lines rejected | %d |\n| parameters fitted | %d |\n| degrees of freedom | %d |\n", st.Lines, st.Used, st.Rejected, st.Params, st.DOF)
	sText := fmt.Sprintf("%.4g", st.Sigma)
	if math.IsNaN(st.Sigma) {
		sText = "undefined (no degrees of freedom)"
	}
	fmt.Fprintf(b, "| dimensionless standard deviation s | %s |\n| rms (%s) | %.4g |\n", sText, r.Unit.Pretty(), rec.RMS())
	if st.LinesMHz > 0 && st.LinesMHz < st.Used && !r.Unit.IsFrequency() {
		fmt.Fprintf(b, "| rms of MHz and GHz lines (MHz) | %.4g |\n", st.RMSMHz)
	}
	fmt.Fprintf(b, "| condition number (scaled) | %.3g |\n| status | %s |\n", st.Condition, r.Status)
	writeConvergence(b, r.Convergence)
	b.WriteString("\n")
}

// summaryConstants writes the constants and derived constants of fit.md, as
// the record shows them (constants.Record.ParamText: display unit, and the
// digits sequential rounding kept).
func summaryConstants(b *strings.Builder, r *Result, rec *constants.Record) {
	b.WriteString("## Constants\n\n| parameter | species | value | unit | note |\n|---|---|---|---|---|\n")
	for _, q := range rec.Parameters {
		sp, note := q.Species, ""
		switch {
		case q.Element != "":
			sp = q.Element
		case q.Name == "kappa" && q.Fixed:
			continue // the reference file
		case q.Name == "kappa":
			sp, note = q.File, "calibration factor κ"
		case q.Unconnected:
			note = "held at 0: no line connects this level to the lowest"
		case q.Fixed:
			note = "fixed"
		}
		text, unit := rec.ParamText(q)
		fmt.Fprintf(b, "| %s | %s | %s | %s | %s |\n", mdtext.Escape(q.ID()), mdtext.Escape(sp), text, unit, note)
	}
	if r.Rounding != nil {
		fmt.Fprintf(b, "\nValues rounded by sequential rounding and refitting (Le Roy 1998; rounding units from Watson's parameter sensitivity, 1977), written with every digit the rounding kept; χ² %.6g before, %.6g after rounding. σ are those of the unrounded fit.\n", r.Rounding.Chi2Before, r.Rounding.Chi2After)
	}
	if len(rec.Derived) > 0 {
		b.WriteString("\n## Derived constants\n\n" + mdtext.Escape(constants.TruncationLegend) + "\n\n| constant | species | value | series truncation | unit | note |\n|---|---|---|---|---|---|\n")
		for _, d := range rec.Derived {
			text, unit := rec.DerivedText(d)
			fmt.Fprintf(b, "| %s | %s | %s | %s | %s | %s |\n", mdtext.Escape(d.Name), mdtext.Escape(d.Species), text, rec.DerivedTruncationText(d), unit, mdtext.Escape(d.Note))
		}
	}
}

// summaryResiduals writes the largest residuals of fit.md, o−c in the
// display unit.
func summaryResiduals(b *strings.Builder, p Problem, r *Result) {
	b.WriteString("\n## Largest residuals\n\n| file:row | species | transition | o−c | (o−c)/unc | status |\n|---|---|---|---|---|---|\n")
	for _, i := range largestResiduals(r.Lines, 15) {
		l, lr := p.Lines[i], r.Lines[i]
		st := "used"
		if !lr.Used {
			st = "rejected"
		}
		omc := r.Unit.FromWavenumber(l.Unit.ToWavenumber(lr.OmC))
		fmt.Fprintf(b, "| %s:%d | %s | %s | %.4g %s | %.2f | %s |\n", mdtext.Escape(l.File), l.Row, l.Species, mdtext.Escape(linelist.LineLabel(&l)), omc, r.Unit, lr.Norm, st)
	}
}

// largestResiduals returns the indices of the k lines with the largest
// |o−c|/unc, largest first, earlier lines first among equals (a partial
// selection: one pass over the lines, not a sort of all of them).
func largestResiduals(ls []LineResult, k int) []int {
	if k <= 0 {
		return nil
	}
	top := make([]int, 0, k+1)
	for i := range ls {
		a := math.Abs(ls[i].Norm)
		if len(top) == k && !(a > math.Abs(ls[top[k-1]].Norm)) {
			continue
		}
		j := len(top)
		for j > 0 && math.Abs(ls[top[j-1]].Norm) < a {
			j--
		}
		top = append(top, 0)
		copy(top[j+1:], top[j:])
		top[j] = i
		if len(top) > k {
			top = top[:k]
		}
	}
	return top
}

// writeStates names the electronic states of a model that has more than a ¹Σ⁺
// ground state.
func writeStates(b *strings.Builder, r *Result) {
	rs := constants.RecordStates(r.Model)
	if len(rs) == 0 {
		return
	}
	var terms []string
	for _, s := range r.Model.(model.LevelModel).States() {
		terms = append(terms, mdtext.Escape(s.Term()))
	}
	fmt.Fprintf(b, "Electronic states: %s (the first is the ground state; parameters of the others carry their label, A:B_v0). Fine structure and Λ-doubling: the effective Hamiltonians of the model package documentation.\n\n", strings.Join(terms, ", "))
}

// writeConvergence adds the iterations of a nonlinear fit to the statistics.
func writeConvergence(b *strings.Builder, c *constants.Convergence) {
	if c == nil {
		return
	}
	fmt.Fprintf(b, "| iterations (%s, QR solves) | %d |\n| starting points | %d |\n| final step (largest \\|Δp\\|/σ) | %.2g |\n| converged | %t |\n", c.Method, c.Iterations, c.Starts, c.FinalStep, c.Converged)
}
