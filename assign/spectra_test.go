package assign_test

import (
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/assign/synth"
	"bandwright/fit/linelist"
)

func runScenario(t *testing.T, spec synth.Spec, start string, bands []linelist.Band, spectrum assign.Spectrum, set assign.Settings) (*assign.Result, score, [][]synth.Line) {
	t.Helper()
	peaks, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	pl, truth := peakList(t, peaks, spec.Unit)
	st, err := assign.ReadStart(strings.NewReader(start), "start.toml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: bands, Spectrum: spectrum, Temperature: spec.Temperature}, set)
	if err != nil {
		t.Fatal(err)
	}
	s := evaluate(res, truth)
	t.Logf("%d peaks, %d real: assigned %.2f %%, wrong %.2f %% (%d of %d)", len(peaks), s.real, 100*s.assignedFrac(), 100*s.wrongFrac(), s.wrong, s.total)
	for _, w := range s.wrongList {
		t.Logf("  wrong: %s", w)
	}
	return res, s, truth
}

// Raman spectrum of 14N2 at 296 K: the vibrational band 1-0 with O, Q and S
// branches and the pure rotational S branch, nuclear-spin weights 2:1
// (Huber & Herzberg 1979 constants, from memory).
func TestRamanN2(t *testing.T) {
	for _, seed := range []uint64{3, 4, 5} {
		spec := synth.Spec{Reference: "14N14N", Terms: synth.N2, Species: []synth.Species{{Label: "14N14N", Abundance: 1}},
			Bands: [][2]int{{1, 0}, {0, 0}}, Spectrum: "raman", Temperature: 296, Threshold: 1e-3, Unc: 2e-3, UncMax: 1e-2,
			IntensityNoise: 0.1, Missing: 0.05, Spurious: 0.10, Resolution: 0.01, Seed: seed}
		start := startTOML("14N14N", eqN2, perturb{dwe: 0.6, dwexe: 0.05, rbe: 0.001, rae: 0.02, rde: 0.03})
		res, s, _ := runScenario(t, spec, start, []linelist.Band{{VUp: 1, VLo: 0}, {VUp: 0, VLo: 0}}, assign.Raman, assign.Settings{})
		if s.assignedFrac() < 0.97 || s.wrongFrac() > 0.01 {
			t.Errorf("seed %d: assigned %.2f %%, wrong %.2f %%", seed, 100*s.assignedFrac(), 100*s.wrongFrac())
		}
		br := map[string]bool{}
		for _, a := range res.Lines {
			br[a.Branch()] = true
		}
		if !br["O"] || !br["Q"] || !br["S"] {
			t.Errorf("seed %d: branches %v, want O, Q and S", seed, br)
		}
	}
}

// Far-infrared pure rotation of 1H35Cl and 1H37Cl in cm-1 at 296 K, the
// isotopologues resolved by their mass-scaled B (Huber & Herzberg 1979, from
// memory, with Dunham mass scaling).
func TestRotationHCl(t *testing.T) {
	for _, seed := range []uint64{2, 8} {
		spec := synth.Spec{Reference: "1H35Cl", Terms: synth.HCl,
			Species: []synth.Species{{Label: "1H35Cl", Abundance: 0.7576}, {Label: "1H37Cl", Abundance: 0.2424}},
			Bands:   [][2]int{{0, 0}}, Spectrum: "rotation", Temperature: 296, Threshold: 1e-3, Unc: 5e-4, UncMax: 5e-3,
			IntensityNoise: 0.1, Missing: 0.05, Spurious: 0.10, Resolution: 0.002, Seed: seed}
		start := startTOML("1H35Cl", eqHCl, perturb{rbe: 0.0008, rae: 0.02, rde: 0.03}, "1H37Cl")
		_, s, _ := runScenario(t, spec, start, []linelist.Band{{VUp: 0, VLo: 0}}, assign.Rotation, assign.Settings{})
		if s.assignedFrac() < 0.97 || s.wrongFrac() > 0.01 {
			t.Errorf("seed %d: assigned %.2f %%, wrong %.2f %%", seed, 100*s.assignedFrac(), 100*s.wrongFrac())
		}
	}
}

// Pure rotation of 12C16O in MHz (millimetre and submillimetre wave, J″ up
// to about 10), with no intensities and no uncertainties in the peak list:
// the lines' unc is then the fit's scatter. The start file gives either the
// equilibrium constants or only B_0 in MHz, 0.1 % off (what a microwave
// spectroscopist knows before the lines are measured): pure rotation in v = 0
// needs no more.
func TestRotationCOMHz(t *testing.T) {
	for _, tc := range []struct{ name, start string }{
		{"equilibrium constants", startTOML("12C16O", eqCO, perturb{rbe: 3e-4, rde: 0.05})},
		// B_0 = B_e − α_e/2 ≈ 57 636 MHz for 12C16O (from the constants above).
		{"B_0 alone, in MHz", "unit = \"MHz\"\n[[species]]\nname = \"12C16O\"\nB_0 = 57580\n"},
		{"B_0 and D_0, in GHz", "unit = \"GHz\"\n[[species]]\nname = \"12C16O\"\nB_0 = 57.69\nD_0 = 0.000183\n"},
	} {
		t.Run(tc.name, func(t *testing.T) { rotationCOMHz(t, tc.start) })
	}
}

func rotationCOMHz(t *testing.T, start string) {
	spec := synth.Spec{Reference: "12C16O", Terms: synth.CO, Species: []synth.Species{{Label: "12C16O", Abundance: 1}},
		Bands: [][2]int{{0, 0}}, Spectrum: "rotation", Temperature: 296, Unit: "MHz", Range: [2]float64{3, 42},
		Threshold: 1e-3, Unc: 2e-6, UncMax: 1e-5, Missing: 0, Spurious: 0.3, Seed: 11}
	peaks, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("position,unit\n")
	for _, p := range peaks {
		b.WriteString(strings.TrimRight(strings.TrimRight(formatF(p.Position), "0"), ".") + ",MHz\n")
	}
	pl, err := assign.ReadPeaks(strings.NewReader(b.String()), "co-mm.csv", 0)
	if err != nil {
		t.Fatal(err)
	}
	st, err := assign.ReadStart(strings.NewReader(start), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: []linelist.Band{{VUp: 0, VLo: 0}}, Spectrum: assign.Rotation, Temperature: 296}, assign.Settings{})
	if err != nil {
		t.Fatal(err)
	}
	truth := make([][]synth.Line, len(peaks))
	for i, p := range peaks {
		truth[i] = p.Truth
	}
	s := evaluate(res, truth)
	t.Logf("%d peaks, %d real: assigned %d, wrong %d", len(peaks), s.real, s.assigned, s.wrong)
	if s.assigned != s.real || s.wrong != 0 {
		t.Errorf("assigned %d of %d, wrong %d", s.assigned, s.real, s.wrong)
	}
	if !res.UncEstimated {
		t.Error("uncertainties should be estimated from the scatter")
	}
	for _, a := range res.Lines {
		// R(0) of 12C16O, the J = 1 ← 0 rotational line measured near
		// 115 271.2 MHz by millimetre-wave spectroscopy (from memory).
		if a.JLo == 0 && !near(a.Peak.Position, 115271.2, 0.5) {
			t.Errorf("R(0) at %v MHz", a.Peak.Position)
		}
		if a.Unc <= 0 || a.Unc > 1 {
			t.Errorf("estimated unc %v MHz", a.Unc)
		}
	}
}

func formatF(x float64) string { return strings.TrimSpace(strings.Replace(fmtF(x), " ", "", -1)) }
