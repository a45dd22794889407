package thermo

import (
	"math"

	"bandwright/fit/model"
)

// beyond returns the part of the term y^n that a fit over y ≤ ym cannot have
// absorbed into the lower terms: P_n(y; ym) = y^n − ym^n − n·ym^(n−1)(y − ym)
// for y > ym (zero, with zero slope, at the edge of the data), and y − ym for
// n = 1; 0 for y ≤ ym.
func beyond(y, ym float64, n int) float64 {
	if y <= ym {
		return 0
	}
	if n == 1 {
		return y - ym
	}
	fn := float64(n)
	return math.Pow(y, fn) - math.Pow(ym, fn) - fn*math.Pow(ym, fn-1)*(y-ym)
}

// direction is one first-order perturbation of the level energies: δE of
// level k of each manifold (nil: none there).
type direction struct {
	c   Contribution
	phi func(m *manifold, k int) float64
}

// addDirections adds the budget's first-order perturbations as columns
// p … p+pm−1 of the gradient array g (δE_i − δE_zero, like the parameter
// derivatives):
//
//   - rotational_levels: the next centrifugal-distortion term beyond the
//     highest J observed in each v, c·P_n(x; x_max), n one above the highest
//     power the record has, c = a_L²/|a_(L−1)| (H ≈ D²/B; after B alone the
//     Kratzer value D = 4B³/ω_e²);
//   - vibrational_levels: the next term of G(v) beyond the highest observed
//     v, c·P_n(v+½; v_max+½), where the record determines the anharmonicity
//     or the electronic-states file gives ω_e x_e;
//   - rotation_vibration: the next term of B_v beyond the highest observed v,
//     c·P_n(v+½; v_max+½)·x (after B_e alone the Pekeris α_e), where the
//     record determines B_v at two or more levels;
//   - fine_structure_constants: the next term of each fine-structure
//     constant's v-expansion of a Dunham record beyond the highest observed
//     v, one direction per constant (fineSeriesDirections).
//
// The sizes are orders of magnitude: the series continued geometrically
// (common practice; see model.NextTerm). Directions of one contribution are
// combined in quadrature (modelRow).
func (sys *System) addDirections() {
	bu := sys.budget
	dirs := []direction{sys.rotationalDirection(), sys.vibrationalDirection(), sys.rotVibDirection()}
	dirs = append(dirs, sys.fineSeriesDirections()...)
	n := len(sys.e)
	for _, d := range dirs {
		if d.phi == nil {
			continue
		}
		col := make([]float64, n)
		any := false
		zs := sys.zero.state
		zm := sys.manifolds[sys.stateMan[zs]]
		z := d.phi(zm, sys.zero.idx)
		for i := range col {
			m := sys.manifolds[sys.stateMan[sys.st[i]]]
			col[i] = d.phi(m, int(sys.lv[i])) - z
			any = any || col[i] != 0
		}
		if !any {
			continue
		}
		sys.g = append(sys.g, col...)
		sys.pm++
		bu.dirContrib = append(bu.dirContrib, bu.addContribution(d.c))
	}
}

// rotationalDirection is the next distortion term beyond the observed J.
func (sys *System) rotationalDirection() direction {
	type key struct {
		m *manifold
		v int
	}
	sizes := map[key][2]float64{} // c, n
	size := func(m *manifold, v int) (float64, int) {
		if s, ok := sizes[key{m, v}]; ok {
			return s[0], int(s[1])
		}
		c, n := 0.0, 0
		if f := m.src.forms(v); len(f) >= 2 {
			a := make([]float64, len(f))
			for l := range f {
				a[l] = f[l].eval(m.src.c.Values)
			}
			var ok bool
			if c, n, ok = model.NextTerm(a, 1); !ok {
				if w := m.src.vib.omega; w > 0 && a[1] > 0 {
					c, n = 4*a[1]*a[1]*a[1]/(w*w), 2
				}
			}
		}
		sizes[key{m, v}] = [2]float64{c, float64(n)}
		return c, n
	}
	return direction{
		c: Contribution{Name: ContribRotational,
			What:         "rotational levels beyond the highest J observed in each vibrational level, and the truncation of the centrifugal-distortion series",
			Alternatives: []string{"the next distortion term at its expected size beyond the observed J"},
			Method:       methodFirstOrder,
			Rule:         "next term c·x^n with c = a_L²/|a_(L−1)| of the record's last two terms (H ≈ D²/B after D; D = 4B³/ω_e² after B alone, the Kratzer relation), applied as c·[x^n − x_m^n − n x_m^(n−1)(x − x_m)] above x_m = J_max(J_max+1), the part a fit up to J_max cannot absorb (common practice: order of magnitude)"},
		phi: func(m *manifold, k int) float64 {
			v, J := int(m.v[k]), int(m.J[k])
			jm := m.j2Observed(v)
			if int(m.j2[k]) <= jm {
				return 0
			}
			c, n := size(m, v)
			if n == 0 {
				return 0
			}
			// x = J(J+1), or N(N+1) for a fine-structure level; the edge of
			// the data at the same quantum number of the highest J observed.
			x, xm := float64(J)*float64(J+1), 0.0
			if jm >= 0 {
				nm := float64(jm+int(m.J[k])*2-int(m.j2[k])) / 2
				xm = math.Max(0, nm*(nm+1))
			}
			return c * beyond(x, xm, n)
		},
	}
}

// vibrationalDirection is the next term of G(v) beyond the observed v, where
// the record determines the anharmonicity or the electronic-states file gives
// ω_e x_e (G(v) then stops at (v+½)² as well).
func (sys *System) vibrationalDirection() direction {
	applies := false
	for _, m := range sys.manifolds {
		_, _, ok := model.NextTerm(m.src.vib.g, 1)
		applies = applies || (knownAnharmonicity(m.src.vib) && ok)
	}
	if !applies {
		return direction{}
	}
	return direction{
		c: Contribution{Name: ContribVibrational,
			What:         "vibrational levels beyond the highest observed v (truncation of G(v))",
			Alternatives: []string{"the next term of G(v) at its expected size beyond the observed v"},
			Method:       methodFirstOrder,
			Rule:         "next term c·(v+½)^n with c = g_K²/|g_(K−1)| of the last two terms of G(v) (ω_e y_e ≈ (ω_e x_e)²/ω_e after ω_e x_e), applied as c·P_n(v+½; v_max+½) beyond the highest observed v (common practice: order of magnitude)"},
		phi: func(m *manifold, k int) float64 {
			v := int(m.v[k])
			vib := m.src.vib
			if !knownAnharmonicity(vib) || v <= m.vObsOr(vib) {
				return 0
			}
			c, n, ok := model.NextTerm(vib.g, 1)
			if !ok {
				return 0
			}
			return c * beyond(float64(v)+0.5, float64(m.vObsOr(vib))+0.5, n)
		},
	}
}

// knownAnharmonicity reports whether ω_e x_e of vib is known (from the record
// or the electronic-states file), not taken from the prior.
func knownAnharmonicity(vib vibStructure) bool { return vib.anharmonic || vib.givenAnharmonic }

// rotVibDirection is the next term of B_v beyond the observed v, where the
// record determines B_v (two or more levels, or a Dunham model).
func (sys *System) rotVibDirection() direction {
	size := func(vib vibStructure) (float64, int) {
		if c, n, ok := model.NextTerm(vib.b, 0); ok {
			return c, n
		}
		if len(vib.b) > 0 {
			return pekerisAlpha(vib.omega, vib.omegaX, vib.b[0]), 1
		}
		return 0, 0
	}
	applies := false
	for _, m := range sys.manifolds {
		if c, _ := size(m.src.vib); c != 0 && m.src.vib.determined && len(m.src.recV) != 1 {
			applies = true
		}
	}
	if !applies {
		return direction{}
	}
	return direction{
		c: Contribution{Name: ContribRotationVibration,
			What:         "B_v of the vibrational levels beyond the highest observed v",
			Alternatives: []string{"the next term of B_v at its expected size beyond the observed v"},
			Method:       methodFirstOrder,
			Rule:         "next term c·(v+½)^n x with c = b_K²/|b_(K−1)| of the last two terms of B_v (γ_e ≈ α_e²/B_e after α_e; after B_e alone the Pekeris α_e), applied as c·P_n(v+½; v_max+½)·x beyond the highest observed v (common practice: order of magnitude)"},
		phi: func(m *manifold, k int) float64 {
			v, J := int(m.v[k]), int(m.J[k])
			vib := m.src.vib
			if !vib.determined || len(m.src.recV) == 1 || v <= m.vObsOr(vib) {
				return 0
			}
			c, n := size(vib)
			return c * beyond(float64(v)+0.5, float64(m.vObsOr(vib))+0.5, n) * float64(J) * float64(J+1)
		},
	}
}

// vObsOr returns the highest observed v of the manifold, or the highest level
// of its record when the data list none.
func (m *manifold) vObsOr(vib vibStructure) int {
	if m.vObs >= 0 {
		return m.vObs
	}
	return vib.vObsMax
}
