package thermo

import (
	"fmt"
	"strconv"
	"strings"
)

// StateLevels summarises the levels of one electronic state in the sum.
type StateLevels struct {
	State        string     `json:"state"`
	Term         string     `json:"term"`
	TermEnergy   float64    `json:"term_energy_cm-1"`
	Degeneracy   float64    `json:"electronic_degeneracy"`
	SpinWeights  [2]float64 `json:"nuclear_spin_weights_even_odd"`
	Source       string     `json:"levels_from"`
	Levels       int        `json:"levels"`
	VMin         int        `json:"v_min"`
	VMax         int        `json:"v_max"`
	JMax         int        `json:"J_max"`
	JMaxV0       int        `json:"J_max_lowest_v"`
	EMax         float64    `json:"highest_level_cm-1"`
	VTruncation  string     `json:"v_truncation"`
	JTruncation  string     `json:"J_truncation"`
	MissingV     string     `json:"missing_v,omitempty"`
	MissingNote  string     `json:"missing_estimate,omitempty"`
	Extrapolated int        `json:"levels_outside_fitted_data"`
}

// ZeroPoint states the energy zero of the sum.
type ZeroPoint struct {
	// Level is the lowest level: the energy zero of Q and of H°(0).
	State string `json:"state"`
	V     int    `json:"v"`
	J     int    `json:"J"`
	// ZPE is E(v=0, J=0) of the ground state above the potential minimum (Dunham
	// models only) with its 1σ, cm⁻¹; nil for a term-values model, whose zero is the
	// lowest vibrational level of the record.
	ZPE      *float64 `json:"zero_point_energy_cm-1,omitempty"`
	ZPESigma *float64 `json:"zero_point_energy_sigma_cm-1,omitempty"`
	// LevelAboveV0J0 is the energy of the zero level above (v=0, J=0) of the
	// ground state, cm⁻¹ (non-zero when J=0 has no nuclear-spin weight, as in 16O2).
	LevelAboveV0J0 float64 `json:"zero_level_above_v0_J0_cm-1"`
	Note           string  `json:"note"`
}

func termSymbol(s State) string {
	letters := []string{"Σ", "Π", "Δ", "Φ", "Γ", "H", "I", "K", "L", "M", "N"}
	l := "Λ=" + strconv.Itoa(s.Lambda)
	if s.Lambda < len(letters) {
		l = letters[s.Lambda]
	}
	return fmt.Sprintf("%s %d%s%s", s.Label, s.Multiplicity, l, s.Symmetry.String())
}

// compressInts writes sorted integers as ranges: "0–2, 5, 7–40".
func compressInts(xs []int) string {
	if len(xs) == 0 {
		return ""
	}
	var parts []string
	start, prev := xs[0], xs[0]
	flush := func() {
		if start == prev {
			parts = append(parts, strconv.Itoa(start))
		} else {
			parts = append(parts, fmt.Sprintf("%d–%d", start, prev))
		}
	}
	for _, x := range xs[1:] {
		if x == prev+1 {
			prev = x
			continue
		}
		flush()
		start, prev = x, x
	}
	flush()
	return strings.Join(parts, ", ")
}
