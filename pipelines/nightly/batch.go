package nightly

import (
	"context"
	"fmt"
	"strings"
	"sync"
	"time"
)

// task is a file to process, with the number of failed rows its content had
// when the run started.
type task struct {
	found
	failed int
}

// load opens the ledger and history (creating them) and reads them.
func (r *runner) load() error {
	return r.a.locked(r.a.open)
}

// select_ scans the inbox and returns the files to process.
func (r *runner) select_() ([]task, error) {
	files, ign := scanInbox(r.inbox, r.o.Include)
	rep := r.rep
	rep.Ignored = ign
	for _, g := range ign {
		r.note("nightly: ignored %s: %s", shown(g.Name), g.Reason)
	}
	seen := map[string]bool{}
	var todo []task
	for _, f := range files {
		rep.Found++
		if seen[f.sha] {
			rep.Duplicates++
			continue
		}
		seen[f.sha] = true
		if ShardOf(f.sha, r.o.Shards) != r.o.Shard {
			rep.OtherShards++
			continue
		}
		st := r.a.state(f.sha)
		switch {
		case st.ok > 0:
			rep.AlreadyDone++
		case st.failed > 0 && !r.o.RetryFailed:
			rep.FailedBefore++
		default:
			todo = append(todo, task{found: f, failed: st.failed})
		}
	}
	return todo, nil
}

// process runs the tasks on the worker pool.
func (r *runner) process(todo []task) {
	o := r.o
	var b strings.Builder
	fmt.Fprintf(&b, "nightly: %d files in the inbox", r.rep.Found)
	var parts []string
	if r.rep.Duplicates > 0 {
		parts = append(parts, fmt.Sprintf("%d duplicates", r.rep.Duplicates))
	}
	if r.rep.AlreadyDone > 0 {
		parts = append(parts, fmt.Sprintf("%d already done", r.rep.AlreadyDone))
	}
	if r.rep.FailedBefore > 0 {
		parts = append(parts, fmt.Sprintf("%d failed before (not retried without --retry-failed)", r.rep.FailedBefore))
	}
	if o.Shards > 1 {
		parts = append(parts, fmt.Sprintf("%d in other shards than %d/%d", r.rep.OtherShards, o.Shard, o.Shards))
	}
	if len(parts) > 0 {
		fmt.Fprintf(&b, " (%s)", strings.Join(parts, ", "))
	}
	workers := min(o.Workers, max(1, len(todo)))
	fmt.Fprintf(&b, "; %d to process with %d workers", len(todo), workers)
	r.prog.start(len(todo), b.String())

	dctx, stop := context.WithCancel(r.ctx)
	defer stop()
	r.stopAll = stop
	ch := make(chan task)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			jr := &jobRunner{r: r}
			defer jr.close()
			for t := range ch {
				if dctx.Err() != nil {
					r.mu.Lock()
					r.rep.Pending++
					r.mu.Unlock()
					continue
				}
				r.done(r.one(dctx, t, jr), len(todo))
			}
		}()
	}
	sent := 0
loop:
	for _, t := range todo {
		if dctx.Err() != nil {
			break
		}
		select {
		case ch <- t:
			sent++
		case <-dctx.Done():
			break loop
		}
	}
	close(ch)
	wg.Wait()
	r.rep.Pending += len(todo) - sent
	r.rep.Interrupted = r.ctx.Err() != nil && r.rep.Pending > 0
}

func (r *runner) done(fo FileOutcome, total int) {
	r.mu.Lock()
	rep := r.rep
	if fo.Status == "" {
		rep.Pending++
		r.mu.Unlock()
		return
	}
	rep.Files = append(rep.Files, fo)
	switch fo.Status {
	case StatusOK:
		rep.Succeeded++
		rep.Processed++
		r.markDate(fo.Finished)
	case StatusFailed:
		rep.Failed++
		rep.Processed++
		r.markDate(fo.Finished)
	default:
		rep.Skipped++
	}
	n := rep.Processed + rep.Skipped
	r.mu.Unlock()
	r.prog.done(fo, n, total)
	r.noteDrift(fo)
}

func (r *runner) noteDrift(fo FileOutcome) {
	for _, d := range fo.Drift {
		if d.Flagged {
			r.note("nightly: DRIFT %s: %s = %s %s is %.1f combined σ from the weighted mean %s of %d earlier results",
				shown(fo.Input), d.Name, fmtF(d.Value), d.Unit, d.Z, fmtF(d.Mean), d.N)
		}
	}
}

// markDate remembers the summary date of a row finished at t (r.mu held).
func (r *runner) markDate(t time.Time) {
	if r.dates == nil {
		r.dates = map[string]bool{}
	}
	r.dates[r.dateOf(t)] = true
}

func (r *runner) dateOf(t time.Time) string {
	return t.In(r.loc).Format(time.DateOnly)
}

// fatal stops the run after an error in the archive's own records.
func (r *runner) fatal(err error) {
	r.mu.Lock()
	if r.err == nil {
		r.err = err
	}
	r.mu.Unlock()
	if r.stopAll != nil {
		r.stopAll()
	}
}
