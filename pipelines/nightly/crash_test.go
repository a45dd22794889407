//go:build unix

package nightly_test

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"bandwright/pipelines/nightly"
)

// The crash tests re-execute the test binary as a child that runs nightly on
// an archive (TestMain sees BW_NIGHTLY_CHILD=1), kill it, and check what the
// next run makes of the archive.
func TestMain(m *testing.M) {
	if os.Getenv("BW_NIGHTLY_CHILD") == "1" {
		os.Exit(childMain())
	}
	if os.Getenv("BW_NIGHTLY_WORKER") == "1" {
		os.Exit(workerMain())
	}
	os.Exit(m.Run())
}

// childMain runs nightly with the options in the environment:
// BW_INBOX, BW_ARCHIVE, BW_WORKERS, BW_SLEEP_MS (each job sleeps first),
// BW_MARKERS (a folder where each job drops a file named after its input
// when it starts), BW_CRASH=point:k (SIGKILL itself the k-th time the commit
// step "point" is reached), BW_KILL_ON=text (a job whose input's name holds
// text kills its process), BW_ISOLATE=1 (jobs in worker processes: this test
// binary again, see workerMain).
func childMain() int {
	workers, _ := strconv.Atoi(os.Getenv("BW_WORKERS"))
	if c := os.Getenv("BW_CRASH"); c != "" {
		point, ks, _ := strings.Cut(c, ":")
		k, _ := strconv.Atoi(ks)
		var n atomic.Int64
		nightly.SetHook(func(p, name string) {
			if p == point && n.Add(1) == int64(k) {
				syscall.Kill(os.Getpid(), syscall.SIGKILL)
				select {}
			}
		})
	}
	ctx, stop := nightly.NotifyContext(context.Background(), os.Stderr)
	defer stop()
	o := nightly.Options{Inbox: os.Getenv("BW_INBOX"), Archive: os.Getenv("BW_ARCHIVE"),
		Workers: workers, Job: testJob, Version: "test", Progress: os.Stderr}
	if os.Getenv("BW_ISOLATE") == "1" {
		o.Isolate = workerProcesses()
	}
	rep, err := nightly.Run(ctx, o)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	fmt.Printf("interrupted=%v succeeded=%d pending=%d\n", rep.Interrupted, rep.Succeeded, rep.Pending)
	return rep.ExitCode()
}

// testJob is the job of the child runs and worker processes: fitJob, after
// the markers, sleep, kill (BW_KILL_ON) and memory hog (BW_HOG_ON=text: a job
// whose input's name holds text allocates memory until it dies) the
// environment asks for.
func testJob(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
	if markers := os.Getenv("BW_MARKERS"); markers != "" {
		os.WriteFile(filepath.Join(markers, in.SHA256), []byte(in.Name), 0o644)
	}
	sleep, _ := strconv.Atoi(os.Getenv("BW_SLEEP_MS"))
	time.Sleep(time.Duration(sleep) * time.Millisecond)
	if k := os.Getenv("BW_KILL_ON"); k != "" && strings.Contains(in.Name, k) {
		syscall.Kill(os.Getpid(), syscall.SIGKILL)
		select {}
	}
	if k := os.Getenv("BW_HOG_ON"); k != "" && strings.Contains(in.Name, k) {
		for {
			b := make([]byte, 64<<20)
			for i := range b {
				b[i] = byte(i)
			}
			hogSink = append(hogSink, b)
		}
	}
	return fitJob(ctx, in, work)
}

// hogSink holds what a memory hog allocates, so that nothing is freed.
var hogSink [][]byte

// workerMain is a worker process of Isolation: its memory is limited to
// BW_MEMORY bytes (if set), and it serves testJob.
func workerMain() int {
	limit, _ := strconv.ParseInt(os.Getenv("BW_MEMORY"), 10, 64)
	if err := nightly.LimitMemory(limit); err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	if err := nightly.ServeJobs(context.Background(), os.Stdin, os.Stdout, testJob); err != nil {
		fmt.Fprintln(os.Stderr, err)
		return 1
	}
	return 0
}

// workerProcesses is the Isolation of the tests: this test binary as the
// worker (workerMain), with the environment of this process.
func workerProcesses() *nightly.Isolation {
	return &nightly.Isolation{Command: func() *exec.Cmd {
		cmd := exec.Command(os.Args[0], "-test.run=^$")
		cmd.Env = append(os.Environ(), "BW_NIGHTLY_CHILD=", "BW_NIGHTLY_WORKER=1")
		return cmd
	}}
}

func child(e env, workers, sleepMS int, extra ...string) *exec.Cmd {
	cmd := exec.Command(os.Args[0], "-test.run=^$")
	cmd.Env = append(os.Environ(), "BW_NIGHTLY_CHILD=1", "BW_INBOX="+e.inbox, "BW_ARCHIVE="+e.archive,
		"BW_WORKERS="+strconv.Itoa(workers), "BW_SLEEP_MS="+strconv.Itoa(sleepMS))
	cmd.Env = append(cmd.Env, extra...)
	return cmd
}

func killedBySIGKILL(err error) bool {
	var ee *exec.ExitError
	if !errors.As(err, &ee) {
		return false
	}
	ws, ok := ee.Sys().(syscall.WaitStatus)
	return ok && ws.Signaled() && ws.Signal() == syscall.SIGKILL
}

// TestCrashAtEachStep kills the run at every step of the commit of its second
// file; the next run must leave each file with exactly one ok row and no
// results folder without its row.
func TestCrashAtEachStep(t *testing.T) {
	for _, point := range []string{"snapshot", "job", "manifest", "rename", "ledger", "history"} {
		t.Run(point, func(t *testing.T) {
			e := newEnv(t)
			want := fill(t, e.inbox, 4, 20)
			write(t, filepath.Join(e.inbox, "bad.csv"), badLineList())
			var stderr bytes.Buffer
			cmd := child(e, 1, 0, "BW_CRASH="+point+":2")
			cmd.Stderr = &stderr
			err := cmd.Run()
			if !killedBySIGKILL(err) {
				t.Fatalf("child not killed at %s: %v\n%s", point, err, stderr.String())
			}
			rep := run(t, e.opts(fitJob))
			checkArchive(t, e.archive, want)
			if point == "rename" && rep.Recovered != 1 {
				t.Errorf("a complete result renamed into place before the crash was not recovered: %s", counts(rep))
			}
			if rep2 := run(t, e.opts(fitJob)); rep2.Processed != 0 || rep2.Recovered != 0 {
				t.Errorf("third run did work: %s", counts(rep2))
			}
			checkArchive(t, e.archive, want)
		})
	}
}

// TestCrashThenInboxEmptied: the file being committed when the run was killed
// is gone from the inbox by the next run; its half-built work area must still
// be removed, and a complete result still recorded.
func TestCrashThenInboxEmptied(t *testing.T) {
	for _, point := range []string{"job", "manifest", "rename"} {
		t.Run(point, func(t *testing.T) {
			e := newEnv(t)
			fill(t, e.inbox, 3, 20)
			cmd := child(e, 1, 0, "BW_CRASH="+point+":2")
			if err := cmd.Run(); !killedBySIGKILL(err) {
				t.Fatalf("child not killed at %s: %v", point, err)
			}
			ents, _ := os.ReadDir(e.inbox)
			for _, f := range ents {
				os.Remove(filepath.Join(e.inbox, f.Name()))
			}
			rep := run(t, e.opts(fitJob))
			done := map[string]bool{}
			for sha := range okCount(readLedger(t, e.archive)) {
				done[sha] = true
			}
			wantDone, wantRecovered := 1, 0
			if point == "rename" {
				wantDone, wantRecovered = 2, 1
			}
			if len(done) != wantDone || rep.Recovered != wantRecovered {
				t.Errorf("%d contents done, %s", len(done), counts(rep))
			}
			checkArchive(t, e.archive, done)
		})
	}
}

// TestKillAtRandomMoments kills runs with SIGKILL after various delays, then
// lets one finish. The runs isolate their jobs in worker processes, which die
// with them: the kill of a run is never counted against the files it was
// doing.
func TestKillAtRandomMoments(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 10, 20)
	for i, d := range []int{15, 40, 70, 100, 130, 160, 200, 250} {
		cmd := child(e, 2, 25, "BW_ISOLATE=1")
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(d) * time.Millisecond)
		cmd.Process.Signal(syscall.SIGKILL)
		cmd.Wait()
		_ = i
	}
	run(t, e.opts(fitJob))
	checkArchive(t, e.archive, want)
}

// TestSIGTERMIsGraceful: after SIGTERM the files in progress finish and are
// recorded, no new one starts, the exit code is 0, and a later run does the
// rest.
func TestSIGTERMIsGraceful(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 8, 20)
	markers := t.TempDir()
	var stdout, stderr bytes.Buffer
	cmd := child(e, 2, 300, "BW_MARKERS="+markers)
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	deadline := time.Now().Add(20 * time.Second)
	for {
		ents, _ := os.ReadDir(markers)
		if len(ents) > 0 {
			break
		}
		if time.Now().After(deadline) {
			cmd.Process.Kill()
			t.Fatal("no job started")
		}
		time.Sleep(5 * time.Millisecond)
	}
	time.Sleep(20 * time.Millisecond)
	cmd.Process.Signal(syscall.SIGTERM)
	if err := cmd.Wait(); err != nil {
		t.Fatalf("child: %v\n%s", err, stderr.String())
	}
	if !strings.Contains(stdout.String(), "interrupted=true") || !strings.Contains(stderr.String(), "finishing the files in progress") {
		t.Errorf("stdout %q\nstderr %s", stdout.String(), stderr.String())
	}
	ents, _ := os.ReadDir(markers)
	started := map[string]bool{}
	for _, m := range ents {
		started[m.Name()] = true
	}
	if len(started) == 0 || len(started) >= 8 {
		t.Fatalf("%d files started before the stop", len(started))
	}
	// Every file started was finished and recorded; nothing else.
	checkArchive(t, e.archive, started)
	// The next run does the rest.
	rep := run(t, e.opts(fitJob))
	if rep.Succeeded != 8-len(started) {
		t.Errorf("next run: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)
}

// TestJobKillingTheProcess: without isolation, a job that kills the run's
// process (as an exhausted memory does) is done again once, and when the
// process dies on it a second time the next run records it as failed with the
// reason and goes on with the others: no file stops every run forever.
func TestJobKillingTheProcess(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 30, 20)
	killer := lineList(4242, 1, 20)
	write(t, filepath.Join(e.inbox, "0-killer.csv"), killer)
	for i := range 2 {
		var stderr bytes.Buffer
		cmd := child(e, 1, 0, "BW_KILL_ON=killer")
		cmd.Stderr = &stderr
		if err := cmd.Run(); !killedBySIGKILL(err) {
			t.Fatalf("run %d: not killed: %v\n%s", i+1, err, stderr.String())
		}
	}
	rep := run(t, e.opts(fitJob))
	if rep.Failed != 1 || rep.Succeeded != 30 || rep.ExitCode() != 3 {
		t.Fatalf("third run: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)
	var failed []ledgerRow
	for _, r := range readLedger(t, e.archive) {
		if r.Status == "failed" {
			failed = append(failed, r)
		}
	}
	if len(failed) != 1 || failed[0].SHA != shaOf(killer) || !strings.Contains(failed[0].Message, nightly.DiedMessage) {
		t.Errorf("failed rows: %+v", failed)
	}
	if rep := run(t, e.opts(fitJob)); rep.Processed != 0 || rep.FailedBefore != 1 {
		t.Errorf("fourth run: %s", counts(rep))
	}
}

// TestIsolatedJobOutOfMemory: with isolation, a job that exhausts the memory
// of its worker process (limited to 512 MiB) is recorded as failed with the
// reason in the same run, its worker is replaced, and the other 30 files are
// done.
func TestIsolatedJobOutOfMemory(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 30, 20)
	hog := lineList(4243, 1, 20)
	write(t, filepath.Join(e.inbox, "0-hog.csv"), hog)
	t.Setenv("BW_HOG_ON", "hog")
	t.Setenv("BW_MEMORY", strconv.Itoa(512<<20))
	o := e.opts(fitJob)
	o.Workers = 1
	o.Isolate = workerProcesses()
	rep := run(t, o)
	if rep.Failed != 1 || rep.Succeeded != 30 || rep.ExitCode() != 3 {
		for _, f := range rep.Files {
			if f.Status != nightly.StatusOK {
				t.Log(f.Input, f.Message)
			}
		}
		t.Fatalf("%s", counts(rep))
	}
	checkArchive(t, e.archive, want)
	for _, f := range rep.Files {
		if f.SHA256 == shaOf(hog) && (f.Status != nightly.StatusFailed || !strings.Contains(f.Message, nightly.DiedMessage) || !strings.Contains(f.Message, "out of memory")) {
			t.Errorf("the memory hog: %+v", f)
		}
	}
	if rep := run(t, o); rep.Processed != 0 || rep.FailedBefore != 1 {
		t.Errorf("second run: %s", counts(rep))
	}
}
