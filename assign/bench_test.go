package assign_test

import (
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/assign/synth"
	"bandwright/fit/linelist"
)

// benchSpec is the speed target of issue 4: 20 000 peaks, 4 bands (1-0, 2-1,
// 3-2 and the overtone 2-0) of 3 isotopologues of CO (12C16O, 13C16O and
// 12C18O, isotopically enriched) in a 1500 K gas, most peaks spurious.
func benchSpec(seed uint64) synth.Spec {
	return synth.Spec{
		Reference: "12C16O", Terms: synth.CO,
		Species:     []synth.Species{{Label: "12C16O", Abundance: 0.6}, {Label: "13C16O", Abundance: 0.25}, {Label: "12C18O", Abundance: 0.15}},
		Bands:       [][2]int{{1, 0}, {2, 1}, {3, 2}, {2, 0}},
		Spectrum:    "ir",
		Temperature: 1500,
		Threshold:   2e-5, Unc: 5e-5, UncMax: 4e-3,
		IntensityNoise: 0.1, Missing: 0.05, Spurious: 11.2, SpuriousMax: 0.01,
		Resolution: 0.002,
		Seed:       seed,
	}
}

func BenchmarkAssign20000Peaks(b *testing.B) {
	peaks, err := synth.Generate(benchSpec(1))
	if err != nil {
		b.Fatal(err)
	}
	pl, truth := peakList(b, peaks, "cm-1")
	start := startTOML("12C16O", eqCO, perturb{dwe: 1.5, dwexe: 0.05, rbe: 0.001, rae: 0.02, rde: 0.03}, "13C16O", "12C18O")
	st, err := assign.ReadStart(strings.NewReader(start), "start.toml")
	if err != nil {
		b.Fatal(err)
	}
	p := assign.Problem{Peaks: pl, Start: st, Bands: []linelist.Band{{VUp: 1, VLo: 0}, {VUp: 2, VLo: 1}, {VUp: 3, VLo: 2}, {VUp: 2, VLo: 0}}, Spectrum: assign.Infrared, Temperature: 1500}
	var res *assign.Result
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err = assign.Assign(p, assign.Settings{})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	s := evaluate(res, truth)
	b.ReportMetric(float64(len(peaks)), "peaks")
	b.ReportMetric(100*s.assignedFrac(), "%assigned")
	b.ReportMetric(100*s.wrongFrac(), "%wrong")
}
