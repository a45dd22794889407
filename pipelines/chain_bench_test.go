package pipelines

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// BenchmarkNightlyFullChain: 200 inbox files of ~150 lines each (CO 1-0 and
// 2-1, J″ ≤ 37), 2 workers, the whole chain per file (Dunham fit, thermo at
// the default temperatures, HTML and Markdown reports with plots), ledger,
// history and summary. Target (issue 5): at least 600 files a minute. The
// chains run in the run's process (in-process) or in one worker process per
// worker of the pool (worker-processes, as `bandwright nightly` runs them).
func BenchmarkNightlyFullChain(b *testing.B) {
	b.Run("in-process", func(b *testing.B) { benchmarkNightly(b, nil) })
	b.Run("worker-processes", func(b *testing.B) { benchmarkNightly(b, testWorker) })
}

func benchmarkNightly(b *testing.B, worker func(WorkerArgs) *exec.Cmd) {
	dir := b.TempDir()
	inbox := filepath.Join(dir, "inbox")
	os.MkdirAll(inbox, 0o755)
	const files = 200
	for i := 0; i < files; i++ {
		writeLines(b, filepath.Join(inbox, fmt.Sprintf("co-%03d.csv", i)), [][2]int{{1, 0}, {2, 1}}, 37, uint64(1000+i), "")
	}
	pf := filepath.Join(dir, "pipe.toml")
	os.WriteFile(pf, []byte("[fit]\nmodel = \"dunham\"\nterms = [\"Y10\", \"Y20\", \"Y01\", \"Y11\", \"Y02\"]\n"), 0o644)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		archive := filepath.Join(dir, fmt.Sprintf("archive-%d", i))
		rep, err := RunNightly(context.Background(), NightlyOptions{Inbox: inbox, Archive: archive, Pipeline: pf, Workers: 2,
			WorkerCommand: worker, JobMemory: 2 << 30})
		if err != nil || rep.Succeeded != files {
			b.Fatalf("succeeded %d of %d: %v", rep.Succeeded, files, err)
		}
	}
	b.StopTimer()
	perRun := b.Elapsed().Minutes() / float64(b.N)
	b.ReportMetric(files/perRun, "files/min")
}
