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
	"syscall"
	"time"
	"unicode/utf8"
)

// hook is called at the steps of a file's commit (tests use it to crash the
// process at chosen moments); a no-op in production.
var hook = func(point, name string) {}

// one processes one file: claim, snapshot, job, check, manifest, rename,
// ledger row, history rows.
func (r *runner) one(ctx context.Context, t task, jr *jobRunner) FileOutcome {
	a := r.a
	fo := FileOutcome{Input: t.name, SHA256: t.sha}
	skip := func(msg string) FileOutcome {
		fo.Status, fo.Message, fo.Finished = StatusSkipped, oneLine(msg), r.o.Now()
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

	stage, err := r.workArea(t.sha)
	if err != nil {
		return r.archiveFailed(fo, err)
	}
	defer os.RemoveAll(stage)
	inDir, outDir := filepath.Join(stage, "in"), filepath.Join(stage, "out")
	snap := filepath.Join(inDir, path.Base(t.name))
	got, err := snapshot(t.real, snap)
	if isArchiveFault(err) {
		return r.archiveFailed(fo, err)
	}
	if err != nil {
		return skip("could not be copied into the archive's work area (" + errText(err) + "); it will be tried again next run")
	}
	if got != t.sha {
		return skip("changed since the inbox was scanned; it will be tried again next run")
	}
	hook("snapshot", t.name)

	if err := r.markStarted(stage, t, fo.Started); err != nil {
		return r.archiveFailed(fo, err)
	}
	res, jerr := jr.run(Input{Path: snap, Name: t.name, SHA256: t.sha, ReferenceDir: filepath.Join(a.dir, ReferenceDir),
		History: filepath.Join(a.dir, HistoryFile), DriftSigma: r.o.DriftSigma, Started: fo.Started}, outDir)
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
	if isArchiveFault(jerr) {
		return r.archiveFailed(fo, jerr)
	}
	if jerr != nil {
		msg := message(jerr, snap, t.name, stage)
		if err := r.recordFailure(t, fo.Started, fo.Finished, msg); err != nil {
			r.fatal(err)
			return skip("not recorded: " + err.Error())
		}
		fo.Status, fo.Message = StatusFailed, msg
		r.forgetDeaths(t.sha)
		return fo
	}
	hook("manifest", t.name)

	out, err := r.place(t, outDir, stage)
	if isArchiveFault(err) {
		return r.archiveFailed(fo, err)
	}
	if err != nil {
		return skip("its results could not be put in place (" + err.Error() + "); it will be tried again next run")
	}
	hook("rename", t.name)
	notes := res.Notes
	if err := a.locked(func() error { return a.adoptReference(out, res.Reference) }); err != nil {
		// The result stands; the next file of the same species offers its
		// record again.
		notes = append(notes, "not adopted as the archive's reference: "+err.Error())
	}
	msg := oneLine(strings.Join(notes, "; "))
	var drift []Drift
	if err := a.locked(func() error {
		var err error
		drift, err = a.record(t.name, t.sha, fo.Started, fo.Finished, out, msg, res.Constants, r.o.DriftSigma)
		return err
	}); err != nil {
		if isArchiveFault(err) {
			return r.archiveFailed(fo, err)
		}
		r.fatal(err)
		return skip("not recorded: " + err.Error())
	}
	hook("history", t.name)
	r.forgetDeaths(t.sha)
	fo.Status, fo.Output, fo.Constants, fo.Drift, fo.Message = StatusOK, out, res.Constants, drift, msg
	return fo
}

// isArchiveFault reports whether err is the archive's failure rather than the
// input's: a full disk or quota, a read-only file system, an I/O error. Such a
// file is not recorded as failed; it is tried again on the next run.
func isArchiveFault(err error) bool {
	for _, e := range []error{syscall.ENOSPC, syscall.EDQUOT, syscall.EROFS, syscall.EIO} {
		if errors.Is(err, e) {
			return true
		}
	}
	return false
}

// archiveFailed stops the run after a fault of the archive (no new file is
// started; the run's error makes the exit code 1) and returns the outcome of
// the file it hit: skipped, without a ledger row, so that the next run tries
// it again.
func (r *runner) archiveFailed(fo FileOutcome, err error) FileOutcome {
	why := errText(err)
	r.fatal(fmt.Errorf("nightly: the archive %s cannot be written (%s); the files not done are tried again on the next run", r.a.shown, why))
	fo.Status, fo.Finished = StatusSkipped, r.o.Now()
	fo.Message = oneLine("not done: the archive cannot be written (" + why + "); it will be tried again next run")
	return fo
}

// workArea makes the private work area of a content hash, a fresh folder
// in the archive's work folder holding in/ (for the snapshot) and out/ (for
// the job's outputs), and removes the areas of the same hash that a crashed
// run left. On error nothing of the new area is left.
func (r *runner) workArea(sha string) (string, error) {
	stage, err := os.MkdirTemp(filepath.Join(r.a.dir, workDir), sha+"-")
	if err != nil {
		return "", err
	}
	r.removeStale(sha, stage)
	for _, d := range []string{"in", "out"} {
		if err := os.Mkdir(filepath.Join(stage, d), 0o755); err != nil {
			os.RemoveAll(stage)
			return "", err
		}
	}
	return stage, nil
}

// recordFailure appends the failed row of t to the ledger.
func (r *runner) recordFailure(t task, started, finished time.Time, msg string) error {
	row := ledgerRowFor(t.name, t.sha, StatusFailed, started, finished, "", msg)
	return r.a.locked(func() error { return r.a.led.append([][]string{row}) })
}

// removeStale removes work areas of sha left by a crashed run (the claim is
// held, so none of them is in use).
func (r *runner) removeStale(sha, keep string) {
	old, _ := filepath.Glob(filepath.Join(r.a.dir, workDir, sha+"-*"))
	for _, p := range old {
		if p != keep {
			if err := r.diedWhile(p); err != nil {
				r.note("nightly: %v", err)
			}
			os.RemoveAll(p)
		}
	}
}

// runJob calls the job in the run's process.
func (r *runner) runJob(in Input, out string) (*JobResult, error) {
	return callJob(context.WithoutCancel(r.ctx), r.o.Job, in, out, func(s string) { r.note("%s", s) })
}

// callJob calls job, turning a panic into an error (and a note with the
// stack).
func callJob(ctx context.Context, job Job, in Input, out string, note func(string)) (res *JobResult, err error) {
	defer func() {
		if p := recover(); p != nil {
			note(fmt.Sprintf("nightly: the pipeline panicked on %s: %v\n%s", shown(in.Name), p, debug.Stack()))
			res, err = nil, fmt.Errorf("nightly: internal error in the pipeline (%v); please report it with this input file", p)
		}
	}()
	res, err = job(ctx, in, out)
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
