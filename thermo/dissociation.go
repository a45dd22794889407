package thermo

import (
	"fmt"
	"math"
)

// The linear Birge–Sponer extrapolation D0(LBS) = ω_e²/(4ω_e x_e) − G(0),
// G(0) = ω_e/2 − ω_e x_e/4, overestimates the dissociation energy of most
// molecules (common practice). Over the ground states of H2, HF, HCl, CO, N2,
// O2, Cl2 and I2 (ω_e, ω_e x_e and D0 from Huber & Herzberg 1979, from memory)
// the ratio D0/D0(LBS) is 0.96, 1.04, 0.87, 1.02, 0.82, 0.80, 0.69 and 0.67:
// mean 0.86, standard deviation 0.14. Without a given D0 the sum takes
// D0 = 0.86·D0(LBS) with σ = 0.14·D0(LBS).
const (
	birgeSponerRatio  = 0.86
	birgeSponerSpread = 0.14
)

// Dissociation is the limit of the level sum: every level of a state lies at
// most D0 + its products energy above the lowest level.
type Dissociation struct {
	// D0 above the lowest level and its 1σ, cm⁻¹; D0 is +Inf (written as
	// null) when nothing bounds the sum.
	D0    float64 `json:"D0_cm-1"`
	Sigma float64 `json:"D0_sigma_cm-1"`
	// Given: D0 comes from the electronic-states file.
	Given bool `json:"given"`
	// BirgeSponer is D0(LBS) when D0 was estimated, cm⁻¹.
	BirgeSponer float64 `json:"birge_sponer_D0_cm-1,omitempty"`
	Note        string  `json:"note"`
}

// alternatives returns the D0 of the budget's alternatives: D0 ± σ (none when
// σ is 0 or D0 is unbounded).
func (d Dissociation) alternatives() []float64 {
	if !(d.Sigma > 0) || math.IsInf(d.D0, 1) {
		return nil
	}
	return []float64{d.D0 - d.Sigma, d.D0 + d.Sigma}
}

// reason names the limit in the truncation notes.
func (d Dissociation) reason() string {
	if math.IsInf(d.D0, 1) {
		return "no dissociation limit"
	}
	if d.Given {
		return fmt.Sprintf("dissociation energy D0 = %.6g cm-1", d.D0)
	}
	return fmt.Sprintf("estimated dissociation energy D0 = %.6g cm-1 (Birge–Sponer)", d.D0)
}

// settleDissociation fixes the dissociation limit of the sum: D0 of the
// problem (with its σ) when given, else the corrected Birge–Sponer estimate
// from the ground state's vibrational structure (ω_e x_e from the record, or
// x_e of the prior where the record does not give it), else no limit (a
// record without vibrational structure, whose temperatures are limited by
// the vibrational threshold instead). d0Max is the highest limit of the
// alternatives, up to which the levels are enumerated.
func (b *levelSum) settleDissociation() {
	sys := b.sys
	p := b.p
	var d Dissociation
	vib := sys.sources[0].vib
	switch {
	case p.DissociationEnergy > 0:
		d = Dissociation{D0: p.DissociationEnergy, Sigma: p.DissociationSigma, Given: true,
			Note: "D0 from the electronic-states file"}
		if p.DissociationSigma == 0 {
			d.Note += " (no σ given: taken as exact)"
		}
	case vib.determined && vib.omega > 0:
		d = birgeSponerLimit(vib)
	default:
		d = Dissociation{D0: math.Inf(1), Note: "no dissociation limit: the record does not determine the vibrational structure"}
	}
	sys.dissociation = d
	b.d0, b.d0Max = d.D0, d.D0
	if !b.opts.alternative {
		for _, a := range d.alternatives() {
			b.d0Max = math.Max(b.d0Max, a)
		}
	}
}

// birgeSponerLimit estimates D0 from ω_e and ω_e x_e (see birgeSponerRatio);
// where ω_e x_e is not positive (G(v) never turns over) x_e is taken at the
// centre of its prior, so that the sum is still bounded.
func birgeSponerLimit(vib vibStructure) Dissociation {
	w, wx := vib.omega, vib.omegaX
	how := fmt.Sprintf("ω_e x_e = %.4g cm-1 from the record", wx)
	if !(wx > 0) {
		wx = xePriorCentre * w
		how = fmt.Sprintf("x_e = %.3g of the prior (the record's G(v) never turns over)", xePriorCentre)
	} else if vib.givenAnharmonic {
		how = fmt.Sprintf("ω_e x_e = %.4g cm-1 from the electronic-states file", wx)
	} else if !vib.anharmonic {
		how = fmt.Sprintf("ω_e x_e = %.4g cm-1 from x_e of the prior", wx)
	}
	lbs := w*w/(4*wx) - (w/2 - wx/4)
	return Dissociation{D0: birgeSponerRatio * lbs, Sigma: birgeSponerSpread * lbs, BirgeSponer: lbs,
		Note: fmt.Sprintf("no D0 given: estimated as D0 = %.2f × D0(LBS) = %.6g cm-1 with σ = %.2f × D0(LBS) = %.4g cm-1, D0(LBS) = ω_e²/(4ω_e x_e) − G(0) = %.6g cm-1 the linear Birge–Sponer value (ω_e = %.6g cm-1, %s); the factors are the ratio D0/D0(LBS) over the ground states of H2, HF, HCl, CO, N2, O2, Cl2 and I2 (Huber & Herzberg 1979, from memory); give dissociation_energy in an electronic-states file to replace it",
			birgeSponerRatio, birgeSponerRatio*lbs, birgeSponerSpread, birgeSponerSpread*lbs, lbs, w, how)}
}
