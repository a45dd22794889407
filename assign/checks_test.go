package assign_test

import (
	"math/rand/v2"
	"strings"
	"testing"

	"bandwright/assign"
	"bandwright/assign/synth"
	"bandwright/fit/linelist"
)

var coBands = []linelist.Band{{VUp: 1, VLo: 0}, {VUp: 2, VLo: 1}}

// The final internal fit returns the constants the lines were made from:
// B_0 = Be − αe/2 and B_1 = Be − 3αe/2 of 12C16O (Huber & Herzberg 1979, from
// memory), within 4σ; and blended peaks are reported as blends.
func TestConstantsBackAndBlends(t *testing.T) {
	spec := coScenario(1)
	rng := rand.New(rand.NewPCG(1, 99))
	res, s, truth := runScenario(t, spec, startTOML("12C16O", eqCO, randomPerturb(rng, eqCO[3]), "13C16O"), coBands, assign.Infrared, assign.Settings{})
	if s.wrong != 0 {
		t.Fatalf("%d wrong", s.wrong)
	}
	want := map[string]float64{"B_v0[12C16O]": eqCO[3] - eqCO[4]/2, "B_v1[12C16O]": eqCO[3] - 1.5*eqCO[4]}
	for _, p := range res.Fit.Params {
		if w, ok := want[p.ID()]; ok {
			if !near(p.Value, w, 4*p.Sigma) || p.Sigma > 1e-5 {
				t.Errorf("%s = %v ± %v, want %v", p.ID(), p.Value, p.Sigma, w)
			}
			delete(want, p.ID())
		}
	}
	if len(want) > 0 {
		t.Errorf("parameters missing: %v", want)
	}
	named := 0
	for _, a := range res.Lines {
		tr := truth[a.Peak.Index-1]
		if len(tr) < 2 || len(a.Blend) == 0 {
			continue
		}
		for _, l := range tr {
			for _, b := range a.Blend {
				if b.Label() == synth.Label(l) {
					named++
				}
			}
		}
		if a.Confidence >= 1 {
			t.Errorf("blend %s has confidence %v", a.Label(), a.Confidence)
		}
	}
	if named == 0 {
		t.Error("no merged peak was reported as a blend of its two lines")
	}
}

// A line moved far from its place (40 σ) but kept within a generous
// tolerance breaks its combination differences and is dropped with the
// reason; a band that is not in the spectrum is not locked and says why.
func TestCombinationDifferencesAndUnlockedBand(t *testing.T) {
	spec := coScenario(1)
	peaks, err := synth.Generate(spec)
	if err != nil {
		t.Fatal(err)
	}
	moved := -1
	for i, p := range peaks {
		if len(p.Truth) == 1 && synth.Label(p.Truth[0]) == "12C16O 1-0 R(10)" {
			peaks[i].Position += 40 * p.Unc
			moved = i
		}
	}
	if moved < 0 {
		t.Fatal("R(10) not in the peak list")
	}
	pl, _ := peakList(t, peaks, "cm-1")
	rng := rand.New(rand.NewPCG(1, 99))
	st, err := assign.ReadStart(strings.NewReader(startTOML("12C16O", eqCO, randomPerturb(rng, eqCO[3]), "13C16O")), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	bands := append([]linelist.Band{{VUp: 3, VLo: 2}}, coBands...)
	res, err := assign.Assign(assign.Problem{Peaks: pl, Start: st, Bands: bands, Spectrum: assign.Infrared, Temperature: 700},
		assign.Settings{Tolerance: 0.05, Sigmas: 100})
	if err != nil {
		t.Fatal(err)
	}
	found := false
	for _, u := range res.Unassigned {
		if u.Peak.Index == moved+1 {
			found = true
			if u.Dropped == nil || u.Dropped.Label() != "12C16O 1-0 R(10)" || !strings.Contains(u.Reason, "combination differences") {
				t.Errorf("moved peak: dropped %v, reason %q", u.Dropped, u.Reason)
			}
		}
	}
	if !found {
		t.Error("the moved peak is still assigned")
	}
	for _, b := range res.Bands {
		if b.VUp == 3 {
			if b.Locked || b.Lines != 0 || !strings.Contains(b.Lock.Reason, "offset") {
				t.Errorf("%s: locked %v, %d lines, reason %q", b.Label(), b.Locked, b.Lines, b.Lock.Reason)
			}
		}
	}
	joined := strings.Join(res.Warnings, "\n")
	if !strings.Contains(joined, "band 12C16O 3-2 not locked") {
		t.Errorf("warnings: %s", joined)
	}
}
