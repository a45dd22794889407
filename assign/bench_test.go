package assign_test

import (
	"errors"
	"math/rand/v2"
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

// hardStartSpec is the CO scenario of the tests made harder for the band
// lock: 1200 K, with the 2-0 overtone, and (in BenchmarkLockSets) starting
// constants twice as far off as randomPerturb draws them.
func hardStartSpec(seed uint64) synth.Spec {
	s := coScenario(seed + 100)
	s.Bands = [][2]int{{1, 0}, {2, 1}, {2, 0}}
	s.Temperature = 1200
	return s
}

// BenchmarkLockSets measures the band lock where it matters, for the tuning
// numbers of lock.go: the CO scenario of TestSyntheticCOSeveralSeeds over 24
// seeds, and the hard-start set (hardStartSpec) over 24 seeds. It reports the
// share of real lines assigned, the share of assignments that are wrong, and
// the runs in which no band could be locked.
func BenchmarkLockSets(b *testing.B) {
	type run struct {
		spec  synth.Spec
		start string
		bands []linelist.Band
	}
	sets := map[string][]run{}
	for seed := uint64(1); seed <= 24; seed++ {
		rng := rand.New(rand.NewPCG(seed, 99))
		sets["co"] = append(sets["co"], run{coScenario(seed), startTOML("12C16O", eqCO, randomPerturb(rng, eqCO[3]), "13C16O"), coBands})
		rng = rand.New(rand.NewPCG(seed, 7))
		p := randomPerturb(rng, eqCO[3])
		p.dwe, p.rbe, p.rae = 2*p.dwe, 2*p.rbe, 2*p.rae
		sets["hard"] = append(sets["hard"], run{hardStartSpec(seed), startTOML("12C16O", eqCO, p, "13C16O"), []linelist.Band{{VUp: 1, VLo: 0}, {VUp: 2, VLo: 1}, {VUp: 2, VLo: 0}}})
	}
	for _, name := range []string{"co", "hard"} {
		b.Run(name, func(b *testing.B) {
			var total score
			failed := 0
			for i := 0; i < b.N; i++ {
				total, failed = score{}, 0
				for _, r := range sets[name] {
					peaks, err := synth.Generate(r.spec)
					if err != nil {
						b.Fatal(err)
					}
					pl, truth := peakList(b, peaks, "cm-1")
					st, err := assign.ReadStart(strings.NewReader(r.start), "start.toml")
					if err != nil {
						b.Fatal(err)
					}
					res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: r.bands, Spectrum: assign.Infrared, Temperature: r.spec.Temperature}, assign.Settings{})
					var le *assign.LockError
					if errors.As(err, &le) {
						failed++
						continue
					}
					if err != nil {
						b.Fatal(err)
					}
					s := evaluate(res, truth)
					total.real += s.real
					total.assigned += s.assigned
					total.wrong += s.wrong
					total.total += s.total
				}
			}
			b.ReportMetric(100*total.assignedFrac(), "%assigned")
			b.ReportMetric(100*total.wrongFrac(), "%wrong")
			b.ReportMetric(float64(failed), "unlocked-runs")
		})
	}
}
