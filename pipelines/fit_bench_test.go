//go:build unix

package pipelines

import (
	"math"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"
)

// benchSpec is the benchmark data set: five CO isotopologues, Y_kl of 12C16O
// from Huber & Herzberg (1979, from memory) mass-scaled to the others, P and R
// lines up to J″ = 100 of the bands with Δv = 1…4 from v″ = 0…24 (100 bands,
// 200 lines each): 100 000 lines per repeat. The energies of these high levels
// come from the truncated expansion with the invented higher-order terms
// below; that is a property of the test data, not of CO.
var benchSpec = genSpec{
	// Higher-order terms so that all 15 fitted terms are significant:
	// invented test values of plausible size, not CO's constants.
	extra: map[[2]int]float64{
		{4, 0}: 1e-6, {5, 0}: -2e-8, {2, 1}: 5e-8, {3, 1}: -1e-9,
		{1, 2}: -5e-10, {2, 2}: 1e-12, {0, 3}: 5e-12, {1, 3}: -1e-14, {0, 4}: 2e-17,
	},
	species: []string{"12C16O", "13C16O", "12C18O", "13C18O", "12C17O"},
	bands:   benchBands(),
	jmax:    100, repeats: 1, unc: 1e-3, seed: 2,
}

func benchBands() [][2]int {
	var out [][2]int
	for dv := 1; dv <= 4; dv++ {
		for v := 0; v <= 24; v++ {
			out = append(out, [2]int{v + dv, v})
		}
	}
	return out
}

// benchTerms are 15 Dunham terms the benchmark data determine.
var benchTerms = []string{"Y10", "Y20", "Y30", "Y40", "Y50", "Y01", "Y11", "Y21", "Y31", "Y02", "Y12", "Y22", "Y03", "Y13", "Y04"}

// benchmarkRunFit writes the line list once and then, per op, runs the whole
// fit stage (read, fit with rejection at 3 s, derived constants, and writing
// constants.json, residuals.csv and fit.md). Besides ns/op it reports the
// lines per op, the process CPU time per op (user + system, getrusage; on a
// shared machine it is steadier than the wall time, and on an idle one it is
// at least the wall time less what the collector does on the other core),
// and the heap reserved from the operating system at the end (HeapSys, MB),
// an upper bound of the peak heap.
func benchmarkRunFit(b *testing.B, repeats int) {
	dir := b.TempDir()
	in := filepath.Join(dir, "lines.csv")
	g := benchSpec
	g.repeats = repeats
	n := writeLineList(b, in, g)
	opts := FitOptions{Inputs: []string{in}, Model: "dunham", Terms: benchTerms, Reject: 3, Out: filepath.Join(dir, "out")}
	runtime.GC()
	b.ReportAllocs()
	cpu0 := cpuTime()
	ops := 0
	for b.Loop() {
		ops++
		oc, err := RunFit(opts)
		if err != nil {
			b.Fatal(err)
		}
		st := oc.Result.Stats
		// The repeats of the million-line list reuse the noise stream, so a
		// few printed positions coincide: duplicate-line warnings (capped) are
		// expected there and nothing else is.
		var other []string
		for _, w := range oc.Result.Warnings {
			if !strings.Contains(w, "duplicate line") {
				other = append(other, w)
			}
		}
		if st.Lines != n || st.Used < n*97/100 || math.Abs(st.Sigma-1) > 0.1 || len(other) > 0 || len(oc.Result.Warnings) > 60 {
			b.Fatalf("fit of %d lines: %d used, s = %g, %d warnings, unexpected %q", n, st.Used, st.Sigma, len(oc.Result.Warnings), other)
		}
	}
	b.ReportMetric((cpuTime()-cpu0).Seconds()/float64(ops), "cpu-s/op")
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	b.ReportMetric(float64(n), "lines/op")
	b.ReportMetric(float64(ms.HeapSys)/1e6, "heapsys-MB")
}

// BenchmarkRunFit100k: target under 0.5 s per op.
func BenchmarkRunFit100k(b *testing.B) { benchmarkRunFit(b, 1) }

// BenchmarkRunFit1M: ten times the lines (each measured ten times); target
// under 600 MB peak memory and about ten times the time of 100k.
func BenchmarkRunFit1M(b *testing.B) { benchmarkRunFit(b, 10) }

// cpuTime returns the user + system CPU time of the process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
