package nightly

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path"
	"path/filepath"
	"runtime/debug"
	"strings"
	"sync"
	"time"
	"unicode/utf8"
)

// hook is called at the steps of a file's commit (tests use it to crash the
// process at chosen moments); a no-op in production.
var hook = func(point, name string) {}

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

// recover cleans up after crashed runs: half-built results are removed,
// complete results without their ok row are adopted, ok rows without their
// history rows get them.
func (r *runner) recover() error {
	r.sweepWork()
	if err := r.adoptOrphans(); err != nil {
		return err
	}
	return r.backfill()
}

// sweepWork removes the snapshots and results under construction left by a
// crashed run. An entry whose content is claimed by a live run is left alone.
func (r *runner) sweepWork() {
	dir := filepath.Join(r.a.dir, workDir)
	entries, err := os.ReadDir(dir)
	if err != nil {
		r.note("nightly: cannot list %s: %v", dir, err)
		return
	}
	for _, e := range entries {
		if e.Name() == claimsDir {
			continue
		}
		if strings.HasPrefix(e.Name(), "."+SummaryName("")) {
			// A summary being written when a run died: summaries are
			// written under the ledger lock, so holding it means stale.
			p := filepath.Join(dir, e.Name())
			r.a.locked(func() error { return os.Remove(p) })
			continue
		}
		sha, _, ok := strings.Cut(e.Name(), "-")
		if !ok || !isSHA256(sha) {
			r.note("nightly: %s is not one of bandwright's; left alone", filepath.Join(dir, e.Name()))
			continue
		}
		c, ok := r.a.tryClaim(sha)
		if !ok {
			continue
		}
		if err := os.RemoveAll(filepath.Join(dir, e.Name())); err != nil {
			r.note("nightly: cannot remove the half-built %s: %v", filepath.Join(dir, e.Name()), err)
		}
		c.Unlock()
	}
}

// adoptOrphans records the complete results folders that a crashed run
// renamed into place but did not record in the ledger.
func (r *runner) adoptOrphans() error {
	dir := filepath.Join(r.a.dir, ResultsDir)
	entries, err := os.ReadDir(dir)
	if err != nil {
		return fmt.Errorf("nightly: cannot list %s: %w", dir, err)
	}
	for _, e := range entries {
		out := ResultsDir + "/" + e.Name()
		if _, ok := r.a.ledger.okOut[out]; ok || !e.IsDir() {
			continue
		}
		p := filepath.Join(dir, e.Name())
		m, err := ReadManifest(p)
		if err != nil || !isSHA256(m.Input.SHA256) {
			r.note("nightly: %s has no valid %s and no ledger row; it was not made by this program and is left alone", p, ManifestFile)
			continue
		}
		c, ok := r.a.tryClaim(m.Input.SHA256)
		if !ok {
			continue // its run is alive and will record it
		}
		err = r.adopt(out, p, m)
		c.Unlock()
		if err != nil {
			return err
		}
	}
	return nil
}

func (r *runner) adopt(out, p string, m *Manifest) error {
	sha := m.Input.SHA256
	sound := m.Outcome == StatusOK && VerifyFolder(p, m) == nil
	started, err1 := time.Parse(time.RFC3339, m.Started)
	finished, err2 := time.Parse(time.RFC3339, m.Finished)
	sound = sound && err1 == nil && err2 == nil
	discard, recorded := false, false
	var drift []Drift
	err := r.a.locked(func() error {
		if err := r.a.refresh(); err != nil {
			return err
		}
		if _, ok := r.a.ledger.okOut[out]; ok {
			return nil // recorded meanwhile
		}
		if r.a.state(sha).ok > 0 || !sound {
			discard = true
			return nil
		}
		var err error
		drift, err = r.a.record(m.Input.Name, sha, started, finished, out, m.Constants, r.o.DriftSigma)
		recorded = err == nil
		return err
	})
	if err != nil {
		return err
	}
	if discard {
		r.note("nightly: removed %s: an incomplete or duplicate result of a crashed run", p)
		return r.discard(p, sha)
	}
	if recorded {
		fo := FileOutcome{Input: m.Input.Name, SHA256: sha, Status: StatusOK, Output: out, Started: started, Finished: finished,
			Constants: m.Constants, Drift: drift, Message: "recovered: completed by a run that was stopped before recording it"}
		r.mu.Lock()
		r.rep.Recovered++
		r.rep.Files = append(r.rep.Files, fo)
		r.markDate(finished)
		r.mu.Unlock()
		r.note("nightly: recovered %s -> %s (completed by a run that stopped before recording it)", m.Input.Name, out)
		r.noteDrift(fo)
	}
	return nil
}

// discard removes a results folder: first renamed out of results/ (one
// atomic step), then deleted. The caller holds the claim of sha.
func (r *runner) discard(p, sha string) error {
	tmp, err := os.MkdirTemp(filepath.Join(r.a.dir, workDir), sha+"-discard-")
	if err != nil {
		return fmt.Errorf("nightly: %w", err)
	}
	if err := os.Rename(p, filepath.Join(tmp, "old")); err != nil {
		os.RemoveAll(tmp)
		return fmt.Errorf("nightly: cannot remove %s: %w", p, err)
	}
	syncPath(filepath.Dir(p))
	return os.RemoveAll(tmp)
}

// backfill writes the history rows of ok results whose run stopped between
// the ledger row and the history rows.
func (r *runner) backfill() error {
	return r.a.locked(func() error {
		if err := r.a.refresh(); err != nil {
			return err
		}
		for sha, st := range r.a.ledger.bySHA {
			if st.ok == 0 || r.a.history.shas[sha] {
				continue
			}
			m, err := ReadManifest(filepath.Join(r.a.dir, filepath.FromSlash(st.output)))
			if err != nil || len(m.Constants) == 0 || m.Input.SHA256 != sha {
				continue
			}
			if _, err := r.a.addHistory(st.input, sha, st.finished, m.Constants, r.o.DriftSigma); err != nil {
				return err
			}
		}
		return nil
	})
}

// select_ scans the inbox and returns the files to process.
func (r *runner) select_() ([]task, error) {
	files, ign := scanInbox(r.inbox)
	rep := r.rep
	rep.Ignored = ign
	for _, g := range ign {
		r.note("nightly: ignored %s: %s", g.Name, g.Reason)
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
			for t := range ch {
				if dctx.Err() != nil {
					r.mu.Lock()
					r.rep.Pending++
					r.mu.Unlock()
					continue
				}
				r.done(r.one(dctx, t), len(todo))
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
				fo.Input, d.Name, fmtF(d.Value), d.Unit, d.Z, fmtF(d.Mean), d.N)
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

// one processes one file: claim, snapshot, job, check, manifest, rename,
// ledger row, history rows.
func (r *runner) one(ctx context.Context, t task) FileOutcome {
	a := r.a
	fo := FileOutcome{Input: t.name, SHA256: t.sha}
	skip := func(msg string) FileOutcome {
		fo.Status, fo.Message, fo.Finished = StatusSkipped, msg, r.o.Now()
		return fo
	}
	claim, err := a.claim(ctx, t.sha)
	if err != nil {
		return FileOutcome{} // stopped while waiting: not started (pending)
	}
	defer claim.Unlock()
	var st shaState
	if err := a.locked(func() error {
		_, err := a.led.refresh()
		st = a.state(t.sha)
		return err
	}); err != nil {
		r.fatal(err)
		return skip("not started: " + err.Error())
	}
	if st.ok > 0 {
		return skip("already done by another run (" + st.output + ")")
	}
	if st.failed > t.failed && !r.o.RetryFailed {
		return skip("failed in another run meanwhile; run with --retry-failed to try it again")
	}
	fo.Started = r.o.Now()

	// The private work area: in/ holds the snapshot, out/ the job's outputs.
	stage, err := os.MkdirTemp(filepath.Join(a.dir, workDir), t.sha+"-")
	if err != nil {
		r.fatal(fmt.Errorf("nightly: the archive cannot be written: %w", err))
		return skip("not started: " + err.Error())
	}
	defer os.RemoveAll(stage)
	r.removeStale(t.sha, stage)
	inDir, outDir := filepath.Join(stage, "in"), filepath.Join(stage, "out")
	for _, d := range []string{inDir, outDir} {
		if err := os.Mkdir(d, 0o755); err != nil {
			r.fatal(fmt.Errorf("nightly: the archive cannot be written: %w", err))
			return skip("not started: " + err.Error())
		}
	}
	snap := filepath.Join(inDir, path.Base(t.name))
	got, err := snapshot(t.real, snap)
	if err != nil {
		return skip("could not be copied into the archive's work area (" + errText(err) + "); it will be tried again next run")
	}
	if got != t.sha {
		return skip("changed since the inbox was scanned; it will be tried again next run")
	}
	hook("snapshot", t.name)

	res, jerr := r.runJob(Input{Path: snap, Name: t.name, SHA256: t.sha}, outDir)
	hook("job", t.name)

	// The inbox file must not have changed while it was processed.
	after, _, herr := hashInput(t.real)
	if herr != nil && !errors.Is(herr, fs.ErrNotExist) || herr == nil && after != t.sha {
		return skip("changed while it was being processed (SHA-256 before and after differ); no result was kept, it will be tried again next run")
	}

	fo.Finished = r.o.Now()
	if jerr == nil {
		jerr = r.seal(t, res, fo.Started, fo.Finished, outDir)
	}
	if jerr != nil {
		msg := message(jerr, snap, t.name, stage)
		row := ledgerRowFor(t.name, t.sha, StatusFailed, fo.Started, fo.Finished, "", msg)
		if err := a.locked(func() error { return a.led.append([][]string{row}) }); err != nil {
			r.fatal(err)
			return skip("not recorded: " + err.Error())
		}
		fo.Status, fo.Message = StatusFailed, msg
		return fo
	}
	hook("manifest", t.name)

	out, err := r.place(t, outDir, stage)
	if err != nil {
		return skip("its results could not be put in place (" + err.Error() + "); it will be tried again next run")
	}
	hook("rename", t.name)
	var drift []Drift
	if err := a.locked(func() error {
		var err error
		drift, err = a.record(t.name, t.sha, fo.Started, fo.Finished, out, res.Constants, r.o.DriftSigma)
		return err
	}); err != nil {
		r.fatal(err)
		return skip("not recorded: " + err.Error())
	}
	hook("history", t.name)
	fo.Status, fo.Output, fo.Constants, fo.Drift = StatusOK, out, res.Constants, drift
	if len(res.Notes) > 0 {
		fo.Message = oneLine(strings.Join(res.Notes, "; "))
	}
	return fo
}

// removeStale removes work areas of sha left by a crashed run (the claim is
// held, so none of them is in use).
func (r *runner) removeStale(sha, keep string) {
	old, _ := filepath.Glob(filepath.Join(r.a.dir, workDir, sha+"-*"))
	for _, p := range old {
		if p != keep {
			os.RemoveAll(p)
		}
	}
}

// runJob calls the job, turning a panic into an error.
func (r *runner) runJob(in Input, out string) (res *JobResult, err error) {
	defer func() {
		if p := recover(); p != nil {
			r.note("nightly: the pipeline panicked on %s: %v\n%s", in.Name, p, debug.Stack())
			res, err = nil, fmt.Errorf("nightly: internal error in the pipeline (%v); please report it with this input file", p)
		}
	}()
	res, err = r.o.Job(context.WithoutCancel(r.ctx), in, out)
	if err == nil && res == nil {
		res = &JobResult{}
	}
	return res, err
}

// seal hashes and syncs the job's outputs and writes the manifest.
func (r *runner) seal(t task, res *JobResult, started, finished time.Time, outDir string) error {
	files, err := hashTree(outDir, true)
	if err != nil {
		return fmt.Errorf("nightly: %w", err)
	}
	var notes []string
	res.Constants, notes = finite(res.Constants)
	res.Notes = append(res.Notes, notes...)
	in := FileHash{Name: t.name, SHA256: t.sha, Size: t.size}
	m := &Manifest{
		Schema: ManifestSchema, Program: "bandwright", Version: r.o.Version, PipelineSHA256: r.o.PipelineHash,
		Shard: fmt.Sprintf("%d/%d", r.o.Shard, r.o.Shards), Input: in, Inputs: append([]FileHash{in}, res.Inputs...),
		Started: started.Format(time.RFC3339), Finished: finished.Format(time.RFC3339), Outcome: StatusOK,
		Files: files, Constants: res.Constants, Notes: res.Notes,
	}
	if m.Constants == nil {
		m.Constants = []Constant{}
	}
	if m.Notes == nil {
		m.Notes = []string{}
	}
	if err := writeManifest(outDir, m); err != nil {
		return fmt.Errorf("nightly: %w", err)
	}
	return nil
}

// finite keeps the constants with a finite value and σ ≥ 0 (JSON and the
// drift test need numbers) and says which were dropped.
func finite(cs []Constant) ([]Constant, []string) {
	var out []Constant
	var notes []string
	for _, c := range cs {
		if math.IsNaN(c.Value) || math.IsInf(c.Value, 0) || math.IsNaN(c.Sigma) || math.IsInf(c.Sigma, 0) || c.Sigma < 0 {
			notes = append(notes, fmt.Sprintf("constant %s dropped from the history: value %g, σ %g", c.Name, c.Value, c.Sigma))
			continue
		}
		out = append(out, c)
	}
	return out, notes
}

// place renames the finished work folder to results/<stem>-<sha8> (longer
// hash prefixes if another content already owns that name) and returns its
// archive-relative name. A folder of the same content left by a crashed run
// (no ok row; we hold the claim) is replaced.
func (r *runner) place(t task, outDir, stage string) (string, error) {
	stem := folderStem(t.name)
	results := filepath.Join(r.a.dir, ResultsDir)
	for _, n := range []int{8, 16, 64} {
		name := stem + "-" + t.sha[:n]
		final := filepath.Join(results, name)
		out := ResultsDir + "/" + name
		if _, err := os.Lstat(final); err == nil {
			var owned bool
			if err := r.a.locked(func() error {
				_, err := r.a.led.refresh()
				_, owned = r.a.ledger.okOut[out]
				return err
			}); err != nil {
				return "", err
			}
			if owned {
				continue
			}
			m, err := ReadManifest(final)
			if err == nil && m.Input.SHA256 != t.sha {
				continue // another content's unrecorded result: adopted by a later run
			}
			if err := r.discard(final, t.sha); err != nil {
				return "", err
			}
		}
		if err := os.Rename(outDir, final); err != nil {
			return "", err
		}
		syncPath(results)
		return out, nil
	}
	return "", fmt.Errorf("no free name for the results of %s", t.name)
}

// message turns a job's error into the ledger's one-line message, naming the
// inbox file instead of the snapshot.
func message(err error, snap, name, stage string) string {
	s := err.Error()
	s = strings.ReplaceAll(s, snap, name)
	s = strings.ReplaceAll(s, stage, "(work folder)")
	s = oneLine(s)
	if s == "" {
		s = "the pipeline failed without saying why"
	}
	return s
}

// oneLine joins the lines of s with " | " and shortens it to 1000 characters.
func oneLine(s string) string {
	s = strings.ReplaceAll(s, "\r\n", "\n")
	var parts []string
	for _, p := range strings.FieldsFunc(s, func(r rune) bool { return r == '\n' || r == '\r' }) {
		if p = strings.TrimSpace(p); p != "" {
			parts = append(parts, p)
		}
	}
	s = strings.Join(parts, " | ")
	if utf8.RuneCountInString(s) > 1000 {
		rs := []rune(s)
		s = string(rs[:999]) + "…"
	}
	return s
}
