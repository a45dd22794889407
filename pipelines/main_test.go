package pipelines

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"testing"
)

// TestMain lets the tests and benchmarks use this test binary as the worker
// process of a nightly run (BW_PIPELINES_WORKER=1, see testWorker).
func TestMain(m *testing.M) {
	if os.Getenv("BW_PIPELINES_WORKER") == "1" {
		mem, _ := strconv.ParseInt(os.Getenv("BW_MEMORY"), 10, 64)
		procs, _ := strconv.Atoi(os.Getenv("BW_PROCS"))
		a := WorkerArgs{Pipeline: os.Getenv("BW_PIPELINE"), SHA256: os.Getenv("BW_PIPELINE_SHA256"), Memory: mem, Procs: procs}
		if err := ServeNightlyWorker(context.Background(), a, os.Stdin, os.Stdout); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// testWorker is a NightlyOptions.WorkerCommand: this test binary as the
// worker process.
func testWorker(a WorkerArgs) *exec.Cmd {
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), "BW_PIPELINES_WORKER=1", "BW_PIPELINE="+a.Pipeline,
		"BW_PIPELINE_SHA256="+a.SHA256, "BW_MEMORY="+strconv.FormatInt(a.Memory, 10), "BW_PROCS="+strconv.Itoa(a.Procs))
	return cmd
}
