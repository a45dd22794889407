package nightly

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"
)

// The started claim. Before a job runs, its work area receives started.json
// (the input's name and hash, the time, the process and whether the job runs
// in a worker process). The work area goes when the file is finished, so a
// started.json that a later run finds, with the content's claim free (the
// lock of a dead process is released by the kernel), means the run's process
// died while the job ran.
//
// With Isolation the run's process does not run jobs, so its death is never a
// file's doing (a kill, a power cut): the file is simply done again. Without
// it, the job may have killed the process (exhausted its memory, say), and
// running it again would kill every following run the same way: after
// maxDeaths such deaths the file is recorded as failed with DiedMessage, and
// the run goes on with the others. A death's count is kept in
// .work/claims/<sha256>.died until the file gets its row.

// maxDeaths is the number of runs that may die while a file's job runs in
// their own process before the file is recorded as failed: the first death
// may be a kill from outside (an operator, a power cut), the second in a row
// is taken to be the file's doing.
const maxDeaths = 2

const startedFile = "started.json"

type startedClaim struct {
	Input    string `json:"input"`
	SHA256   string `json:"sha256"`
	Started  string `json:"started"`
	PID      int    `json:"pid"`
	Isolated bool   `json:"isolated"`
}

// markStarted writes the started claim of t into its work area.
func (r *runner) markStarted(stage string, t task, at time.Time) error {
	b, _ := json.Marshal(startedClaim{Input: t.name, SHA256: t.sha, Started: at.Format(time.RFC3339), PID: os.Getpid(), Isolated: r.o.Isolate != nil})
	return os.WriteFile(filepath.Join(stage, startedFile), b, 0o644)
}

// diedWhile handles the started claim left in the work area stage of a dead
// run (the caller holds the claim of its content): a death in the run's own
// process is counted, and the file is recorded as failed when the count
// reaches maxDeaths.
func (r *runner) diedWhile(stage string) error {
	b, err := os.ReadFile(filepath.Join(stage, startedFile))
	if err != nil {
		return nil // the job had not started
	}
	var c startedClaim
	if json.Unmarshal(b, &c) != nil || !isSHA256(c.SHA256) || c.Isolated {
		return nil
	}
	died := r.deathsFile(c.SHA256)
	n, _ := strconv.Atoi(strings.TrimSpace(readString(died)))
	n++
	if n < maxDeaths {
		r.note("nightly: the run's process died while processing %s; it will be tried again (a file that does that %d times in a row is recorded as failed)", shown(c.Input), maxDeaths)
		return os.WriteFile(died, []byte(strconv.Itoa(n)+"\n"), 0o644)
	}
	started, err := time.Parse(time.RFC3339, c.Started)
	if err != nil {
		started = r.o.Now()
	}
	msg := fmt.Sprintf("%s, in %d runs in a row; it is not tried again until it changes or --retry-failed is given", DiedMessage, n)
	row := ledgerRowFor(c.Input, c.SHA256, StatusFailed, started, r.o.Now(), "", msg)
	var recorded bool
	err = r.a.locked(func() error {
		if err := r.a.refresh(); err != nil {
			return err
		}
		if st := r.a.state(c.SHA256); st.ok > 0 {
			return nil // done meanwhile by another run
		}
		recorded = true
		return r.a.led.append([][]string{row})
	})
	if err != nil {
		return err
	}
	if recorded {
		fo := FileOutcome{Input: c.Input, SHA256: c.SHA256, Status: StatusFailed, Started: started, Finished: r.o.Now(), Message: msg}
		r.mu.Lock()
		r.rep.Files = append(r.rep.Files, fo)
		r.rep.Failed++
		r.rep.Processed++
		r.markDate(fo.Finished)
		r.mu.Unlock()
		r.note("nightly: FAILED  %s: %s", shown(c.Input), msg)
	}
	os.Remove(died)
	return nil
}

func (r *runner) deathsFile(sha string) string {
	return filepath.Join(r.a.claims, sha+".died")
}

// forgetDeaths removes the count of deaths of a file that got its row.
func (r *runner) forgetDeaths(sha string) {
	os.Remove(r.deathsFile(sha))
}

func readString(p string) string {
	b, _ := os.ReadFile(p)
	return string(b)
}
