// Package nightly is bandwright's unattended batch engine: it finds the new
// measurement files in an inbox folder, runs a chain of stages on each of them
// on a bounded worker pool, and files the results in an archive folder with an
// append-only ledger, a history of the main constants (with drift flags) and a
// nightly summary. The chain itself is a function (Job), so the engine knows
// nothing of spectroscopy; package pipelines supplies the real chain.
//
// # What is new
//
// A file is identified by the SHA-256 of its content, not by its name: a file
// already done is not redone, a renamed or copied identical file is not
// redone, and a changed file is a new version that is done again into a new
// results folder. A file whose run failed is retried only when it changes, or
// with Options.RetryFailed. Hidden files and folders (name starting with '.')
// are ignored, so an instrument or rsync can write ".name.part" and rename it
// when complete, and so are files whose name Options.Include does not match
// (listed in Report.Ignored). Symbolic links are followed only when they resolve to a
// regular file inside the inbox; links pointing outside are listed in
// Report.Ignored and never opened.
//
// # Archive layout
//
//	ARCHIVE/ledger.csv                 one row per finished file: input,sha256,status,started,finished,output,message
//	ARCHIVE/history.csv                the main constants of every ok result, with the drift test of each
//	ARCHIVE/results/<stem>-<sha8>/     the job's outputs plus manifest.json
//	ARCHIVE/summary-<date>.html, .md   the files finished on that date, their constants and the drift flags
//	ARCHIVE/.work/                     snapshots and results under construction; claims (lock files)
//	ARCHIVE/.work/claims/<sha>.died    runs that died while the file's job ran in their own process
//	ARCHIVE/.ledger.lock               short exclusive lock taken to append to ledger.csv and history.csv
//	ARCHIVE/.lock-shard-K-of-N         held by the run of shard K/N for its whole duration
//
// # One file
//
// A worker claims the file's content hash (an exclusive lock, so that two runs
// sharing the archive never work on the same content), copies the inbox file
// into a private snapshot while hashing the copy, writes the started claim
// (started.json in its work area), runs the Job on the snapshot with an empty
// work folder, hashes the inbox file again, writes manifest.json
// (input hashes, program version, pipeline hash, times, outcome, the SHA-256 of
// every file produced), syncs everything to disk and renames the work folder to
// ARCHIVE/results/<stem>-<sha8> in one step. Only then is the ok row appended
// to the ledger (O_APPEND, one write, fsync) and the constants to the history.
// A failing job gets a failed row with its message on one line; a file that
// changed while it was processed gets no row and is tried again next run.
//
// ledger.csv and history.csv are written and read back with encoding/csv, so
// a name holding a line break, quote or comma is found again; a record cut
// short (a crash, a full disk) is not read and is cut off before the next
// append. Names are recorded with the bytes that are not UTF-8 written as
// \xNN, and the progress log quotes names holding control characters.
//
// # Worker processes and the started claim
//
// With Options.Isolate each worker of the pool runs its jobs in a worker
// process of its own (ServeJobs; bandwright runs itself with a hidden
// subcommand, LimitMemory bounding its memory). A job that ends its process
// (out of memory, killed) fails its file with DiedMessage and the reason,
// and the next file gets a new worker process; the run goes on. Worker
// processes ignore SIGINT and SIGTERM (the run stops them when its jobs are
// done) and die with the run.
//
// The started claim (started.json in a work area) tells a later run which
// file a dead run was doing: its work area is still there and the content's
// claim is free. With isolation the run's own death is never a file's doing,
// so the file is done again. Without isolation the job may have killed the
// process; the death is counted, and the second death in a row records the
// file as failed with DiedMessage, so that no file kills every run forever.
//
// # The archive's own failures
//
// A full disk or quota, a read-only file system or an I/O error while a file
// is processed (work area, snapshot, the job's writes, manifest, rename) is
// the archive's failure: the run starts no new file and returns an error
// naming the archive (exit code 1), and the file gets no ledger row, so the
// next run does it.
//
// # Crash safety
//
// After a crash or SIGKILL at any moment the next run removes the half-built
// results in .work, adopts a complete results folder whose ok row was not yet
// written (its manifest says what it is), writes the history rows of an ok row
// whose history was not yet written, and does the rest. Every file therefore
// ends with exactly one ok row, and no results folder lacks its row. A context
// cancelled (SIGINT/SIGTERM, see NotifyContext) stops the run gracefully: no
// new file is started, those in progress are finished and recorded.
//
// # Drift
//
// For every constant of a new ok result, the earlier results of the same
// constant (same species, name, unit and model — the model and its term set,
// so that a Y10 of five Dunham terms is never compared with one of six; in
// the order they were recorded in history.csv) give the weighted mean x̄ = Σwᵢxᵢ/Σwᵢ with wᵢ = 1/σᵢ² and
// σ(x̄) = (Σwᵢ)^−½. The new value x ± σ is flagged when
//
//	|z| = |x − x̄| / √(σ² + σ(x̄)²) > 5   (Options.DriftSigma)
//
// (the combined standard uncertainty of a difference of independent
// quantities, common practice). A constant of a model that was chosen in
// fewer than half of the earlier results of its species is recorded but not
// tested: a model the automatic choice takes only now and then is taken
// because of the noise of those files (a term admitted when it happens to look
// significant), so its constants are not a steady sample, and comparing them
// gave the only false alarms we measured over 1000 quiet nights (see the
// README). Constants with σ = 0 are recorded but neither tested nor averaged; constants without a finite value or σ are left out of
// the manifest and the history, with a note.
//
// A job may also report constants that do not depend on the model (Model
// empty), such as a scale factor of each file against a reference. The
// archive keeps one reference constants record per set of species in
// ARCHIVE/reference/ (see ReferenceKey): the first ok result of that set that
// offers one (JobResult.Reference) becomes it, and every later job is told
// where the references are (Input.ReferenceDir). Replace or delete a
// reference to start anew; bandwright never changes one it has written.
package nightly

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path"
	"runtime"
	"sync"
	"time"

	"bandwright/internal/failure"
)

// Job runs the chain of stages on one input. in.Path is a private snapshot of
// the inbox file (never the inbox file itself); work is an empty folder the job
// writes its outputs into (any files, sub-folders allowed; "manifest.json" is
// reserved). The returned error, on one line, goes into the ledger's message
// column, so it should say what a person can do about it. ctx is not cancelled
// by a graceful stop: a job in progress is allowed to finish.
type Job func(ctx context.Context, in Input, work string) (*JobResult, error)

// Input is the file a Job works on.
type Input struct {
	// Path is the snapshot copy to read.
	Path string
	// Name is the file's path relative to the inbox, with '/' separators; use
	// it (not Path) in messages and provenance.
	Name string
	// SHA256 is the hex SHA-256 of the content.
	SHA256 string
	// ReferenceDir is the archive's folder of reference constants records
	// (ARCHIVE/reference; it may not exist yet): the record of a set of
	// species is ReferenceDir/ReferenceKey(species)+".json". Read only.
	ReferenceDir string
	// History is the archive's history.csv (read only; it may not exist
	// yet) and DriftSigma the run's drift threshold: with PreviewDrift a job
	// can show the drift test of its result in its own report.
	History    string
	DriftSigma float64
	// Started is when the run started the job (the date of its report).
	Started time.Time
}

// JobResult is what a successful Job reports besides the files it wrote.
type JobResult struct {
	// Constants are the main constants of the result: they go into the
	// manifest, the history (drift test) and the summary.
	Constants []Constant
	// Notes are remarks shown in the summary (warnings of the fit, say).
	Notes []string
	// Inputs lists further files the job read (electronic-states file, trial constants),
	// recorded with their SHA-256 in the manifest.
	Inputs []FileHash
	// Reference offers a constants record of the result (Path relative to
	// the work folder) as the archive's reference for the species set Key,
	// adopted when the archive has none for it yet; nil: none offered.
	Reference *ReferenceOffer
}

// ReferenceOffer is a constants record a job offers as the archive's
// reference for a set of species.
type ReferenceOffer struct {
	Key  string // ReferenceKey of the record's species
	Path string // relative to the job's work folder
}

// Constant is one constant of a result with its 1σ uncertainty. Name is the
// constant as every output writes it, the way --fix takes a parameter:
// "B_v0[12C16O]", "Y01", and "B_e[13C16O]" for a derived constant of one
// isotopologue. Model names the model and term set the value depends on
// ("dunham Y01,Y02,Y10,Y11,Y20"; empty when it does not). Species, Name, Unit
// and Model together identify a constant in the history.
type Constant struct {
	Species string  `json:"species"`
	Name    string  `json:"name"`
	Value   float64 `json:"value"`
	Sigma   float64 `json:"sigma"`
	Unit    string  `json:"unit"`
	Model   string  `json:"model,omitempty"`
}

// Options configure a run. The zero values of Workers, Shard/Shards, Now,
// Progress and DriftSigma have the defaults given beside them.
type Options struct {
	Inbox   string // folder of measurement files; only read, never written
	Archive string // folder of results, ledger, history and summaries; created if missing
	// Workers is the number of files processed at once (0: the number of CPUs).
	Workers int
	// Shard K of Shards N (1 ≤ K ≤ N): this run does only the files whose
	// content hash falls in shard K (see ShardOf). Zero values mean 1/1.
	Shard, Shards int
	// RetryFailed runs again the files whose content failed before.
	RetryFailed bool
	// Include is a glob (path.Match, letter case ignored) a file's name must
	// match to be processed — matched against its path relative to the inbox
	// when the glob holds a '/'; other files are listed in Report.Ignored.
	// "": every file. The command line uses DefaultInclude.
	Include string
	// PipelineHash is the SHA-256 of the pipeline file, Version the program
	// version; both are recorded in every manifest.
	PipelineHash, Version string
	// Job is the chain of stages (required).
	Job Job
	// Isolate runs each job in a worker process (nil: in this process); see
	// Isolation.
	Isolate *Isolation
	// Progress receives the progress: a bar when it is a terminal, plain log
	// lines otherwise (nil: nothing is shown).
	Progress io.Writer
	// Now is the clock (nil: time.Now). Dates of the summaries are taken in the
	// location of the times it returns.
	Now func() time.Time
	// DriftSigma is the drift threshold in combined σ (0: 5).
	DriftSigma float64
}

// Status is how the processing of one file ended.
type Status string

// Statuses of FileOutcome. Only StatusOK and StatusFailed are written to the
// ledger; a skipped file gets no row and is tried again next run.
const (
	StatusOK      Status = "ok"
	StatusFailed  Status = "failed"
	StatusSkipped Status = "skipped"
)

// FileOutcome is what happened to one file in this run.
type FileOutcome struct {
	Input     string // name relative to the inbox
	SHA256    string
	Status    Status
	Output    string // results folder relative to the archive ("results/a-1234abcd"); ok only
	Message   string // the failure, the reason for skipping or the notes of an ok result, one line
	Started   time.Time
	Finished  time.Time
	Constants []Constant
	Drift     []Drift // the drift test of each constant (ok only)
}

// Drift is the drift test of one constant of a new result against the earlier
// results (see the package documentation).
type Drift struct {
	Constant
	N         int     // number of earlier results of this constant
	Mean      float64 // their weighted mean (NaN when N = 0)
	SigmaMean float64 // its 1σ
	Z         float64 // (value − Mean)/combined σ (NaN when not tested)
	Flagged   bool    // |Z| > DriftSigma
	// Untested says why a constant with earlier results was not tested
	// (its model was chosen in fewer than half of the earlier results).
	Untested string
}

// Ignored is an inbox entry that was not considered, with the reason.
type Ignored struct {
	Name, Reason string
}

// Report is the outcome of a run.
type Report struct {
	Found        int // distinct regular files found in the inbox (excluding Ignored)
	Duplicates   int // files with the same content as another file found (done once)
	OtherShards  int // contents that belong to other shards
	AlreadyDone  int // contents with an ok row
	FailedBefore int // contents that failed before and were not retried (no RetryFailed)
	Recovered    int // complete results of a crashed run whose ok row was written now
	Processed    int // files whose job ran to a conclusion in this run (Succeeded + Failed)
	Succeeded    int
	Failed       int
	Skipped      int // changed while processed, or taken by another run: no row, retried next run
	Pending      int // not started because the run was stopped (Interrupted)
	Files        []FileOutcome
	Ignored      []Ignored
	// Summary and SummaryMarkdown are the paths of today's summary.
	Summary, SummaryMarkdown string
	// Interrupted is set when the context was cancelled before every file was
	// started.
	Interrupted bool
}

// ExitCode returns bandwright's exit code for the run: 3 when some file
// failed (the others completed), 0 otherwise (including nothing to do).
func (r *Report) ExitCode() int {
	if r.Failed > 0 {
		return failure.PartialBatch.ExitCode()
	}
	return 0
}

// ErrLocked is matched (errors.Is) by the error of a run that found another
// run of the same shard active on the archive.
var ErrLocked = errors.New("nightly: another run is active on this archive")

// LockError says which lock is held.
type LockError struct {
	Archive, Lock string
	Shard, Shards int
}

func (e *LockError) Error() string {
	return fmt.Sprintf("nightly: another nightly run (shard %d/%d) is active on the archive %s: the lock %s is held; wait for that run to finish or stop it first",
		e.Shard, e.Shards, e.Archive, e.Lock)
}

// Unwrap returns ErrLocked.
func (e *LockError) Unwrap() error { return ErrLocked }

// DefaultInclude is the --include of `bandwright nightly`: the CSV files of
// the inbox (line or peak lists), so that a README or an instrument's log
// file in the inbox is listed as ignored instead of failing the night.
const DefaultInclude = "*.csv"

func (o *Options) normalise() error {
	if _, err := path.Match(o.Include, ""); err != nil {
		return fmt.Errorf("nightly: --include %q: not a glob pattern (%v); e.g. *.csv", o.Include, err)
	}
	if o.Inbox == "" {
		return errors.New("nightly: no inbox folder given (--inbox)")
	}
	if o.Archive == "" {
		return errors.New("nightly: no archive folder given (--archive)")
	}
	if o.Job == nil {
		return errors.New("nightly: no pipeline to run (Options.Job is nil)")
	}
	if o.Workers < 0 {
		return fmt.Errorf("nightly: --workers %d: want a positive number", o.Workers)
	}
	if o.Workers == 0 {
		o.Workers = runtime.NumCPU()
	}
	if o.Shard == 0 && o.Shards == 0 {
		o.Shard, o.Shards = 1, 1
	}
	if o.Shards < 1 || o.Shard < 1 || o.Shard > o.Shards {
		return fmt.Errorf("nightly: shard %d/%d: want 1 ≤ K ≤ N", o.Shard, o.Shards)
	}
	if o.Now == nil {
		o.Now = time.Now
	}
	if o.Progress == nil {
		o.Progress = io.Discard
	}
	if o.DriftSigma == 0 {
		o.DriftSigma = 5
	}
	if !(o.DriftSigma > 0) {
		return fmt.Errorf("nightly: drift threshold %g: want > 0", o.DriftSigma)
	}
	return nil
}

// Run processes the new files of o.Inbox into o.Archive. The error is for a
// run that could not start or could not keep its records: bad options, the
// lock held by another run of the same shard (ErrLocked), an archive that
// cannot be written. The failure of a file is not an error: it is in the
// ledger and the Report (see Report.ExitCode). Cancelling ctx stops the run
// gracefully after the files in progress.
func Run(ctx context.Context, o Options) (*Report, error) {
	if err := o.normalise(); err != nil {
		return nil, err
	}
	inbox, err := realDir(o.Inbox, "inbox")
	if err != nil {
		return nil, err
	}
	if to, err := resolve(o.Archive); err != nil || within(inbox, to) || within(to, inbox) {
		return nil, fmt.Errorf("nightly: the inbox %s and the archive %s overlap; the archive must be a folder outside the inbox and vice versa", o.Inbox, o.Archive)
	}
	if err := os.MkdirAll(o.Archive, 0o755); err != nil {
		return nil, fmt.Errorf("nightly: cannot create the archive: %w", err)
	}
	arch, err := realDir(o.Archive, "archive")
	if err != nil {
		return nil, err
	}
	a, err := openArchive(arch, o.Archive)
	if err != nil {
		return nil, err
	}
	defer a.close()
	if err := a.lockRun(o.Shard, o.Shards); err != nil {
		return nil, err
	}
	r := &runner{o: o, a: a, inbox: inbox, rep: &Report{}, ctx: ctx}
	r.prog = newProgress(o.Progress)
	start := o.Now()
	r.loc = start.Location()
	if err := r.load(); err != nil {
		return nil, err
	}
	if err := r.recover(); err != nil {
		return nil, err
	}
	todo, err := r.select_()
	if err != nil {
		return nil, err
	}
	r.process(todo)
	serr := r.summaries(start)
	r.prog.finish(r.rep)
	if r.err != nil {
		return r.rep, r.err
	}
	return r.rep, serr
}

type runner struct {
	o     Options
	a     *archive
	inbox string
	ctx   context.Context
	prog  progress

	mu  sync.Mutex
	rep *Report
	err error // first error in the archive's own records (stops the run)
	// dates on which this run finished a row (for the summaries), in loc
	dates   map[string]bool
	loc     *time.Location
	stopAll func()
}

func (r *runner) note(format string, args ...any) {
	r.prog.note(fmt.Sprintf(format, args...))
}
