package assign

import (
	"fmt"
	"math"
)

// farWindows is the distance, in windows, beyond which a leftover peak is
// said to have no line predicted near it (rather than to have just missed
// one).
const farWindows = 3

// leftoverReason says why peak k (sorted index), left unassigned and never
// assigned and dropped, did not get the line whose prediction p is nearest:
// outside that prediction's window, or inside it but the line went to
// another peak, or the peak's intensity does not fit the line, or the line
// lies beyond where its branch was followed. It returns "" when the peak is
// farther than a line spacing from p (no line claims it).
func (r *run) leftoverReason(k int, p Prediction) string {
	b, br := r.bandOf(p.Transition)
	if b == nil || br == nil {
		return ""
	}
	d := r.pos[k] - p.Position
	if math.Abs(d) > 2*b.bbar {
		return ""
	}
	gate, scale := r.finalTolerance(p.Sigma, k)
	est := ""
	if r.uncEst {
		est = "; the peaks give no unc, so every peak has the scatter of the fit, and lines noisier than most fall outside: give each peak its unc"
	}
	if math.Abs(d) > farWindows*gate {
		return fmt.Sprintf("no line is predicted near it: the nearest, %s, is %+.4g cm-1 away, %.0f times its window", p.Transition.Label(), d, math.Abs(d)/gate)
	}
	if math.Abs(d) > gate {
		return fmt.Sprintf("not matched: %+.4g cm-1 from the prediction of %s, outside its window of ±%.3g cm-1 (%g × %.3g cm-1, the peak's and the prediction's σ)%s",
			d, p.Transition.Label(), gate, r.s.sigmas(), scale, est)
	}
	if reason, ok := r.bans[banKey{p.Transition, k}]; ok {
		return "not matched to " + p.Transition.Label() + ": " + reason
	}
	if k2, ok := r.assigned[p.Transition]; ok {
		return fmt.Sprintf("inside the window of %s (%+.4g cm-1), but that line is assigned to the peak at %.6f cm-1 (%+.4g cm-1), which the one-to-one matching preferred",
			p.Transition.Label(), d, r.pos[k2], r.pos[k2]-p.Position)
	}
	dev := r.intensityDevOf(b, br, p.Transition, k)
	if math.Abs(dev) > maxIntensityDev {
		return fmt.Sprintf("inside the window of %s (%+.4g cm-1), but its intensity is %.1f σ from the line's predicted intensity (the limit is %d σ)", p.Transition.Label(), d, dev, maxIntensityDev)
	}
	z, K := d/scale, r.s.sigmas()
	if cost, leave := z*z+dev*dev, K*K+4; cost > leave {
		return fmt.Sprintf("inside the window of %s, but position (%.1f σ) and intensity (%.1f σ from the predicted) together cost %.1f, more than leaving the line without a peak (%.0f): the peak does not look like that line", p.Transition.Label(), z, dev, cost, leave)
	}
	if hi := max(br.jhi, b.jcore); p.Transition.JLo > hi+2+hi/4 || (br.jhi >= 0 && p.Transition.JLo > br.jhi && r.gapEnded(b, br)) {
		return fmt.Sprintf("inside the window of %s (%+.4g cm-1), but the branch was followed only to J″ = %d: the lines beyond were missing or too uncertain", p.Transition.Label(), d, hi)
	}
	return fmt.Sprintf("near the final prediction of %s (%+.4g cm-1, %.1f σ), but the last matching, made on the prediction of the fit before, left it out: it lay at the edge of the window then", p.Transition.Label(), d, math.Abs(d)/scale)
}

// intensityDevOf is intensityDev for a transition t of branch br of band b.
func (r *run) intensityDevOf(b *band, br *branch, t Transition, k int) float64 {
	lnP := math.Inf(-1)
	if br.inten[t.JLo] > 0 {
		lnP = math.Log(br.inten[t.JLo])
	}
	p := pred{t: t, b: b, br: br, lnP: lnP}
	dev := r.intensityDev(&p, k)
	if math.IsNaN(dev) {
		return 0
	}
	return dev
}

// gapEnded reports whether the branch br of band b has predicted lines
// beyond its highest assigned J″ (the gap rule ended it there).
func (r *run) gapEnded(b *band, br *branch) bool {
	return br.jhi < br.jmax && br.jhi >= b.jcore
}

// finalTolerance is tolerance for the final state of the run: when the peaks
// gave no unc, the final fit has set every unc to the fit's scatter, which
// already holds the scale sFit of the last matching.
func (r *run) finalTolerance(sig float64, k int) (gate, scale float64) {
	if !r.uncEst {
		return r.tolerance(sig, k)
	}
	scale = math.Hypot(r.unc[k], sig)
	if r.s.Tolerance > 0 {
		return r.s.Tolerance, scale
	}
	return r.s.sigmas() * scale, scale
}
