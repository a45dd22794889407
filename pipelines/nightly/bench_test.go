package nightly_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"testing"
	"time"

	"bandwright/pipelines/nightly"
)

// BenchmarkNightly runs a whole nightly batch — scan, snapshot, the real
// term-values fit of each file (pipelines.Fit + constants.json, residuals.csv,
// fit.md), manifest, rename, ledger and history with fsync, summaries — over
// an inbox of n files of 150 lines each with 2 workers, into a fresh archive
// each iteration. Target (issue 5): ≥ 600 files a minute for n = 200, memory
// flat in n (compare B/file for n = 50 and 200).
func BenchmarkNightly(b *testing.B) {
	for _, n := range []int{50, 200} {
		b.Run(fmt.Sprintf("files=%d", n), func(b *testing.B) {
			inbox := filepath.Join(b.TempDir(), "inbox")
			for i := range n {
				write(b, filepath.Join(inbox, fmt.Sprintf("co-%03d.csv", i)), lineList(uint64(i+1), 1, 150))
			}
			root := b.TempDir()
			var before, after runtime.MemStats
			var elapsed time.Duration
			b.ReportAllocs()
			b.ResetTimer()
			runtime.ReadMemStats(&before)
			for i := 0; i < b.N; i++ {
				o := nightly.Options{Inbox: inbox, Archive: filepath.Join(root, strconv.Itoa(i)), Workers: 2, Job: fitJob, Version: "bench"}
				t0 := time.Now()
				rep, err := nightly.Run(context.Background(), o)
				elapsed += time.Since(t0)
				if err != nil || rep.Succeeded != n {
					b.Fatalf("run: %v %s", err, counts(rep))
				}
				b.StopTimer()
				os.RemoveAll(o.Archive)
				b.StartTimer()
			}
			runtime.ReadMemStats(&after)
			files := float64(n * b.N)
			b.ReportMetric(files/elapsed.Minutes(), "files/min")
			b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/files, "B/file")
		})
	}
}

// BenchmarkNightlyEngine is BenchmarkNightly with a job that only copies the
// input into its work folder: the engine's own cost per file (hashing,
// snapshot, fsyncs, manifest, rename, ledger).
func BenchmarkNightlyEngine(b *testing.B) {
	const n = 200
	inbox := filepath.Join(b.TempDir(), "inbox")
	for i := range n {
		write(b, filepath.Join(inbox, fmt.Sprintf("co-%03d.csv", i)), lineList(uint64(i+1), 1, 150))
	}
	copyJob := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		data, err := os.ReadFile(in.Path)
		if err != nil {
			return nil, err
		}
		return &nightly.JobResult{Constants: []nightly.Constant{{Species: "12C16O", Name: "size", Value: float64(len(data)), Sigma: 1, Unit: "B"}}},
			os.WriteFile(filepath.Join(work, "copy.csv"), data, 0o644)
	}
	root := b.TempDir()
	var elapsed time.Duration
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		o := nightly.Options{Inbox: inbox, Archive: filepath.Join(root, strconv.Itoa(i)), Workers: 2, Job: copyJob, Version: "bench"}
		t0 := time.Now()
		rep, err := nightly.Run(context.Background(), o)
		elapsed += time.Since(t0)
		if err != nil || rep.Succeeded != n {
			b.Fatalf("run: %v", err)
		}
		b.StopTimer()
		os.RemoveAll(o.Archive)
		b.StartTimer()
	}
	b.ReportMetric(float64(n*b.N)/elapsed.Minutes(), "files/min")
}
