package assign_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/assign/synth"
	"bandwright/fit/linelist"
)

// peakList turns synthetic peaks into a peak list as ReadPeaks would give it,
// and returns the truth of each peak.
func peakList(t testing.TB, peaks []synth.Peak, unit string) (*assign.PeakList, [][]synth.Line) {
	t.Helper()
	var b strings.Builder
	if err := synth.WriteCSV(&b, peaks, unit, false); err != nil {
		t.Fatal(err)
	}
	u := linelist.Wavenumber
	if unit == "MHz" {
		u = linelist.MHz
	}
	pl, err := assign.ReadPeaks(strings.NewReader(b.String()), "synthetic.csv", u)
	if err != nil {
		t.Fatal(err)
	}
	truth := make([][]synth.Line, len(peaks))
	for i, p := range peaks {
		truth[i] = p.Truth
	}
	return pl, truth
}

// startTOML writes a start file for the reference constants perturbed as
// given (absolute changes of ωe, ωexe and relative changes of Be, αe, De),
// naming the other isotopologues to be mass-scaled.
type perturb struct{ dwe, dwexe, rbe, rae, rde float64 }

func startTOML(ref string, eq [6]float64, p perturb, others ...string) string {
	var b strings.Builder
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', 10, 64) }
	fmt.Fprintf(&b, "# synthetic start (perturbed Huber & Herzberg constants)\n[[species]]\nname = %q\n", ref)
	fmt.Fprintf(&b, "omega_e = %s\nomega_e_x_e = %s\nomega_e_y_e = %s\nB_e = %s\nalpha_e = %s\nD_e = %s\n",
		f(eq[0]+p.dwe), f(eq[1]+p.dwexe), f(eq[2]), f(eq[3]*(1+p.rbe)), f(eq[4]*(1+p.rae)), f(eq[5]*(1+p.rde)))
	for _, o := range others {
		fmt.Fprintf(&b, "\n[[species]]\nname = %q\n", o)
	}
	return b.String()
}

// Huber & Herzberg (1979) equilibrium constants, as widely quoted; from
// memory (docs/references.md): ωe, ωexe, ωeye, Be, αe, De in cm⁻¹.
var (
	eqCO  = [6]float64{2169.81358, 13.28831, 0.010511, 1.93128087, 0.01750441, 6.12147e-6}
	eqHCl = [6]float64{2990.946, 52.8186, 0.2243, 10.59341, 0.30718, 5.3194e-4}
	eqN2  = [6]float64{2358.57, 14.324, -0.00226, 1.99824, 0.017318, 5.76e-6}
)

// score compares an assignment with the truth: the share of real peaks
// (peaks holding at least one true line) assigned, and the share of
// assignments that are wrong (transition not among the peak's true lines,
// or a spurious peak assigned).
type score struct {
	real, assigned, wrong, total int
	wrongList                    []string
}

func (s score) assignedFrac() float64 { return float64(s.assigned) / float64(s.real) }
func (s score) wrongFrac() float64 {
	if s.total == 0 {
		return 0
	}
	return float64(s.wrong) / float64(s.total)
}

func evaluate(res *assign.Result, truth [][]synth.Line) score {
	var s score
	for _, tr := range truth {
		if len(tr) > 0 {
			s.real++
		}
	}
	for _, a := range res.Lines {
		s.total++
		tr := truth[a.Peak.Index-1]
		ok := false
		for _, l := range tr {
			if l.Species == a.Species && l.VUp == a.VUp && l.JUp == a.JUp && l.VLo == a.VLo && l.JLo == a.JLo {
				ok = true
			}
		}
		if len(tr) > 0 {
			s.assigned++
		}
		if !ok {
			s.wrong++
			want := "spurious"
			if len(tr) > 0 {
				want = synth.Label(tr[0])
			}
			s.wrongList = append(s.wrongList, fmt.Sprintf("%s at %s (truly %s, conf %.2f)", a.Label(), a.Peak.Text, want, a.Confidence))
		}
	}
	return s
}

// randomPerturb draws starting-constant errors: the band origin off by 0.3 to
// 0.6 line spacings (either sign), ωexe by up to 1 %, Be by up to 0.2 %,
// αe by up to 3 %, De by up to 5 %.
func randomPerturb(rng *rand.Rand, be float64) perturb {
	sign := func() float64 {
		if rng.IntN(2) == 0 {
			return -1
		}
		return 1
	}
	u := func(a, b float64) float64 { return a + (b-a)*rng.Float64() }
	return perturb{
		dwe:   sign() * u(0.3, 0.6) * 2 * be,
		dwexe: sign() * u(0, 0.01) * 13.3,
		rbe:   sign() * u(0, 0.002),
		rae:   sign() * u(0, 0.03),
		rde:   sign() * u(0, 0.05),
	}
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

func fmtF(x float64) string { return strconv.FormatFloat(x, 'f', 4, 64) }
