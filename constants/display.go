package constants

import (
	"math"
	"strconv"
	"strings"

	"bandwright/fit/linelist"
)

// Shown is a constant as the outputs show it: value and 1σ in Unit.
type Shown struct {
	Value, Sigma float64
	Unit         string // "cm-1", "MHz", "kHz", "Hz", "GHz", or a unit that is not an energy ("angstrom")
}

// frequencyLadder lists the frequency units a constant may be shown in, largest
// first, with their size in MHz.
var frequencyLadder = []struct {
	name string
	mhz  float64
}{{"GHz", 1e3}, {"MHz", 1}, {"kHz", 1e-3}, {"Hz", 1e-6}}

// ShowEnergy converts an energy constant (value ± sigma in cm⁻¹) for display
// in unit u. In cm⁻¹ it is shown as it is. In MHz or GHz each constant gets
// its own prefix, as microwave spectroscopists quote them (common practice:
// B in MHz, D in kHz, H in Hz): the largest unit from u down to Hz in which
// |value| ≥ 1 (|σ| when the value is 0; u itself for 0 ± 0), Hz for anything
// smaller. The rule
// depends on the magnitude only, so the same constant of two fits is shown in
// the same unit.
func ShowEnergy(value, sigma float64, u linelist.Unit) Shown {
	if !u.IsFrequency() {
		return Shown{Value: value, Sigma: sigma, Unit: linelist.Wavenumber.String()}
	}
	mhz := linelist.MHz.FromWavenumber(1)
	v, s := value*mhz, sigma*mhz
	size := math.Abs(v)
	if size == 0 {
		size = math.Abs(s)
	}
	start := 1 // MHz
	if u == linelist.GHz {
		start = 0
	}
	step := frequencyLadder[len(frequencyLadder)-1]
	if size == 0 {
		step = frequencyLadder[start]
	}
	for _, st := range frequencyLadder[start:] {
		if size >= st.mhz {
			step = st
			break
		}
	}
	return Shown{Value: v / step.mhz, Sigma: s / step.mhz, Unit: step.name}
}

// FrequencyFactor returns the size of a frequency unit name ("GHz", "MHz",
// "kHz", "Hz") in cm⁻¹ per unit, and whether the name is one: a value v
// shown in that unit is v·factor cm⁻¹.
func FrequencyFactor(unit string) (float64, bool) {
	for _, st := range frequencyLadder {
		if unit == st.name {
			return st.mhz / linelist.MHz.FromWavenumber(1), true
		}
	}
	return 0, false
}

// ShowDerived converts a derived constant for display in unit u: a constant in
// cm⁻¹ as ShowEnergy does, one in cm⁻¹ times another unit ("cm-1 u^0.5", the
// mass-reduced U_kl) in u's largest unit, and every other unit (Å, u,
// dimensionless) as it is.
func ShowDerived(d Derived, u linelist.Unit) Shown {
	cm := linelist.Wavenumber.String()
	switch {
	case d.Unit == cm:
		return ShowEnergy(d.Value, d.Sigma, u)
	case strings.HasPrefix(d.Unit, cm+" ") && u.IsFrequency():
		f := u.FromWavenumber(1)
		return Shown{Value: d.Value * f, Sigma: d.Sigma * f, Unit: u.String() + d.Unit[len(cm):]}
	}
	return Shown{Value: d.Value, Sigma: d.Sigma, Unit: d.Unit}
}

// ShownIn returns the unit the outputs of rec show constants and residuals
// in: its display_unit, cm⁻¹ when it has none (records written before the
// unit could be chosen).
func (rec *Record) ShownIn() linelist.Unit {
	if u, err := linelist.ParseUnit(rec.DisplayUnit); err == nil {
		return u
	}
	return linelist.DefaultUnit
}

// ParamText returns model parameter p of rec as every output shows it:
// value(σ) in rec's display unit (ShowEnergy: MHz, kHz, Hz with --unit MHz),
// with every digit its sequential rounding kept when the fit rounded it
// (FormatRounded), and the unit. A calibration factor is dimensionless.
func (rec *Record) ParamText(p Param) (text, unit string) {
	if p.Name == kappa {
		return FormatParen(p.Value, p.Sigma), "1"
	}
	sh := ShowEnergy(p.Value, p.Sigma, rec.ShownIn())
	if step, ok := rec.roundStep(p.ID()); ok {
		per := 1.0 // cm⁻¹ per shown unit
		if f, isFreq := FrequencyFactor(sh.Unit); isFreq {
			per = f
		}
		return FormatRounded(sh.Value, sh.Sigma, step.Unit/per), sh.Unit
	}
	return FormatParen(sh.Value, sh.Sigma), sh.Unit
}

// roundStep returns the rounding step of the parameter with the given ID.
func (rec *Record) roundStep(id string) (RoundStep, bool) {
	if rec.Rounding == nil {
		return RoundStep{}, false
	}
	for _, st := range rec.Rounding.Steps {
		if st.Param == id {
			return st, true
		}
	}
	return RoundStep{}, false
}

// DerivedText returns derived constant d of rec as value(σ) and unit in rec's
// display unit (ShowDerived).
func (rec *Record) DerivedText(d Derived) (text, unit string) {
	sh := ShowDerived(d, rec.ShownIn())
	return FormatParen(sh.Value, sh.Sigma), sh.Unit
}

// TruncationLegend explains the series truncation beside the derived
// constants, in fit.md and in the report alike.
const TruncationLegend = "σ is the statistical uncertainty from the fit's covariance. The series truncation is the first-order shift of a constant by the terms the fitted series leave out — the next term of each series (vibration, B_v, D_v, rotation; for term values those of G(v) and B_v) at the size the series itself suggests, c_K²/|c_(K−1)| of its last two terms, each carried through the fit and combined in quadrature: an order of magnitude of how far a constant of a truncated model may lie from the equilibrium constant its name stands for. Where it exceeds σ, σ alone does not cover the truth; fit more levels or the next term."

// DerivedTruncationText returns the series truncation of derived constant d
// of rec (Derived.Truncation) in the unit DerivedText shows d in, to two
// significant digits (an order of magnitude); "" when it was not estimated.
func (rec *Record) DerivedTruncationText(d Derived) string {
	if d.Truncation == 0 {
		return ""
	}
	sh := ShowDerived(Derived{Value: d.Value, Sigma: d.Truncation, Unit: d.Unit}, rec.ShownIn())
	return strconv.FormatFloat(sh.Sigma, 'g', 2, 64)
}

// RMS returns the rms of o−c of the used lines in rec's display unit.
func (rec *Record) RMS() float64 { return rec.ShownIn().FromWavenumber(rec.Stats.RMSCm) }
