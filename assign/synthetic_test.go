package assign_test

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/assign/synth"
	"bandwright/fit/linelist"
)

// coScenario is the several-seed check of the issue: 12C16O 1-0 and its hot
// band 2-1 and 13C16O 1-0 (natural abundance) in a cell at 700 K, from the
// Huber & Herzberg constants with Dunham mass scaling; noise, 5 % of the lines
// missing, spurious peaks 10 % of the lines, starting constants off by a
// fraction of a line spacing.
func coScenario(seed uint64) synth.Spec {
	return synth.Spec{
		Reference: "12C16O", Terms: synth.CO,
		Species:     []synth.Species{{Label: "12C16O", Abundance: 0.98654}, {Label: "13C16O", Abundance: 0.01084}},
		Bands:       [][2]int{{1, 0}, {2, 1}},
		Spectrum:    "ir",
		Temperature: 700,
		Threshold:   2e-4, Unc: 2e-4, UncMax: 4e-3,
		IntensityNoise: 0.1,
		Missing:        0.05, Spurious: 0.10,
		Resolution: 0.004,
		Seed:       seed,
	}
}

func TestSyntheticCOSeveralSeeds(t *testing.T) {
	seeds := []uint64{1, 2, 3, 4, 5, 6}
	if testing.Short() {
		seeds = seeds[:2]
	}
	for _, seed := range seeds {
		spec := coScenario(seed)
		peaks, err := synth.Generate(spec)
		if err != nil {
			t.Fatal(err)
		}
		pl, truth := peakList(t, peaks, "cm-1")
		rng := rand.New(rand.NewPCG(seed, 99))
		st, err := assign.ReadStart(strings.NewReader(startTOML("12C16O", eqCO, randomPerturb(rng, eqCO[3]), "13C16O")), "start.toml")
		if err != nil {
			t.Fatal(err)
		}
		res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: []linelist.Band{{VUp: 1, VLo: 0}, {VUp: 2, VLo: 1}}, Spectrum: assign.Infrared, Temperature: 700}, assign.Settings{})
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		s := evaluate(res, truth)
		t.Logf("seed %d: %d peaks, %d real; assigned %.2f %% of real, wrong %.2f %% (%d of %d); iterations %d", seed, len(peaks), s.real,
			100*s.assignedFrac(), 100*s.wrongFrac(), s.wrong, s.total, res.Iterations)
		for _, b := range res.Bands {
			t.Logf("  %s: locked %v offset %+.3f δB %+.2g score %.2f alt %.2f margin %.2f chance %.2f±%.2f need %.2f; %d lines %v rms %.2g", b.Label(), b.Locked, b.Lock.Offset, b.Lock.DeltaB, b.Lock.Score, b.Lock.AltScore, b.Lock.Margin, b.Lock.ChanceScore, b.Lock.ChanceSigma, b.Lock.NeededScore, b.Lines, b.Branches, b.RMS)
		}
		for _, w := range s.wrongList {
			t.Logf("  wrong: %s", w)
		}
		checkBlendWarnings(t, res)
		// Issue 4 acceptance: ≥ 97 % of the real lines assigned, ≤ 1 % wrong.
		if s.assignedFrac() < 0.97 || s.wrongFrac() > 0.01 {
			t.Errorf("seed %d: assigned %.2f %% (want ≥ 97 %%), wrong %.2f %% (want ≤ 1 %%)", seed, 100*s.assignedFrac(), 100*s.wrongFrac())
		}
	}
}

// checkBlendWarnings: every peak that fits two transitions (a line with
// others in its Blend) is named in a warning with both transitions, up to ten.
func checkBlendWarnings(t *testing.T, res *assign.Result) {
	t.Helper()
	n := 0
	for _, a := range res.Lines {
		if len(a.Blend) == 0 {
			continue
		}
		n++
		if n > 10 {
			continue
		}
		want := fmt.Sprintf("peak %d (", a.Peak.Index)
		found := false
		for _, w := range res.Warnings {
			found = found || strings.HasPrefix(w, want) && strings.Contains(w, "assigned to "+a.Label()) && strings.Contains(w, a.Blend[0].Label())
		}
		if !found {
			t.Errorf("no warning for peak %d, assigned to %s and blended with %s: %q", a.Peak.Index, a.Label(), a.Blend[0].Label(), res.Warnings)
		}
	}
	t.Logf("%d blended peaks", n)
}
