package assign_test

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/unit/constant"

	"bandwright/assign"
	"bandwright/fit/species"
	"bandwright/units"
)

// Hönl–London sum rule: the line strengths out of one lower level add up to
// 2J+1 over the branches of the spectrum (common practice); for Raman this is
// the Placzek–Teller rule b_O + b_Q + b_S = 1.
func TestHonlLondonSums(t *testing.T) {
	for J := 0; J < 40; J++ {
		ir := assign.HonlLondon(assign.Infrared, J, 1) + assign.HonlLondon(assign.Infrared, J, -1)
		ra := assign.HonlLondon(assign.Raman, J, 2) + assign.HonlLondon(assign.Raman, J, 0) + assign.HonlLondon(assign.Raman, J, -2)
		if !scalar.EqualWithinAbsOrRel(ir, float64(2*J+1), 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(ra, float64(2*J+1), 1e-12, 1e-12) {
			t.Errorf("J=%d: infrared %v, Raman %v, want %d", J, ir, ra, 2*J+1)
		}
	}
}

// Nuclear-spin weights of homonuclear molecules in a ¹Σg⁺ state (common
// practice): 14N2 (bosons, I = 1) even J 6, odd J 3; 1H2 (fermions, I = ½)
// even J 1 (para), odd J 3 (ortho).
func TestSpinWeights(t *testing.T) {
	n2, _ := species.Parse("14N2")
	h2, _ := species.Parse("1H2")
	co, _ := species.Parse("12C16O")
	for _, c := range []struct {
		iso  species.Isotopologue
		J    int
		want float64
	}{{n2, 0, 6}, {n2, 1, 3}, {n2, 2, 6}, {h2, 0, 1}, {h2, 1, 3}, {co, 0, 1}, {co, 1, 1}} {
		if got := assign.SpinWeight(c.iso, c.J); got != c.want {
			t.Errorf("%s J=%d: %v, want %v", c.iso.Label, c.J, got, c.want)
		}
	}
}

// The partition function of CO at 296 K against the Mulholland expansion of
// the rotational partition function (docs/references.md) times the harmonic
// vibrational factor 1/(1 − exp(−c₂ωe/T)): the level sum includes the
// vibrational anharmonicity and centrifugal distortion, so agreement to 1e-3
// relative is expected. And the strongest R line sits near
// J = √(kT/2hcB) − ½ (common practice).
func TestPartitionFunctionAndIntensityMaximum(t *testing.T) {
	st, err := assign.ReadStart(strings.NewReader(startTOML("12C16O", eqCO, perturb{})), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	T := 296.0
	im, err := assign.NewIntensityModel(assign.Infrared, T, st.Species[0])
	if err != nil {
		t.Fatal(err)
	}
	c2 := float64(constant.Planck) * float64(constant.LightSpeedInVacuum) * 100 / float64(constant.Boltzmann)
	if !scalar.EqualWithinAbsOrRel(units.SecondRadiation, c2, 0, 1e-15) || math.Abs(c2-1.438776877) > 1e-9 {
		t.Errorf("c2 = %v (CODATA 2018: 1.438776877 cm K, from memory)", units.SecondRadiation)
	}
	B0 := eqCO[3] - eqCO[4]/2
	u := c2 * B0 / T
	mulholland := (1 / u) * (1 + u/3 + u*u/15 + 4*u*u*u/315)
	g0 := eqCO[0] - eqCO[1] + 0.75*eqCO[2]
	qv := 1 / (1 - math.Exp(-c2*(g0)/T))
	if !scalar.EqualWithinAbsOrRel(im.Q, mulholland*qv, 0, 1e-3) {
		t.Errorf("Q = %v, Mulholland × vibration %v", im.Q, mulholland*qv)
	}
	best, bestJ := 0.0, 0
	for J := 0; J < 60; J++ {
		tr := assign.Transition{Species: "12C16O", VUp: 1, JUp: J + 1, VLo: 0, JLo: J}
		if I := im.RelativeIntensity(tr, 2143+3.8*float64(J+1)); I > best {
			best, bestJ = I, J
		}
	}
	if want := math.Sqrt(1/(2*u)) - 0.5; math.Abs(float64(bestJ)-want) > 1 {
		t.Errorf("strongest R(J) at J=%d, expected near %.1f", bestJ, want)
	}
	// The hot band 2-1 against 1-0 at the same J: Boltzmann factor of v=1 and
	// the harmonic factor 2 (common practice).
	r10 := im.RelativeIntensity(assign.Transition{Species: "12C16O", VUp: 1, JUp: 6, VLo: 0, JLo: 5}, 2165)
	r21 := im.RelativeIntensity(assign.Transition{Species: "12C16O", VUp: 2, JUp: 6, VLo: 1, JLo: 5}, 2165)
	e1 := im.LowerEnergy(1, 5) - im.LowerEnergy(0, 5)
	if want := 2 * math.Exp(-c2*e1/T); !scalar.EqualWithinAbsOrRel(r21/r10, want, 0, 1e-12) {
		t.Errorf("2-1/1-0 = %v, want %v", r21/r10, want)
	}
}
