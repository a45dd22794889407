package pipelines

import (
	"context"
	"fmt"
	"io"
	"os/exec"
	"runtime"
	"strings"

	"bandwright/internal/failure"
	"bandwright/pipelines/nightly"
	"bandwright/pipelines/outdir"
)

// NightlyOptions are the options of `bandwright nightly`.
type NightlyOptions struct {
	Inbox, Archive, Pipeline string
	Workers                  int
	Shard                    string // "K/N"; empty: 1/1
	RetryFailed              bool
	// Include is the glob of the files to process (nightly.Options.Include;
	// "": every file).
	Include  string
	Progress io.Writer
	// WorkerCommand, when set, runs each file's chain in a worker process
	// (nightly.Isolation): it returns the command of a process that calls
	// ServeNightlyWorker with the same arguments. nil: the chains run in this
	// process.
	WorkerCommand func(a WorkerArgs) *exec.Cmd
	// JobMemory bounds the memory of each worker process in bytes (0: no
	// bound); see nightly.LimitMemory.
	JobMemory int64
}

// DefaultJobMemory is the memory limit of a worker process of `bandwright
// nightly` (--job-memory): the largest line list read (linelist.MaxFileBytes,
// 512 MiB) needs about 4.6 GiB (9 bytes per byte of file while it is read, see
// the README's promises), and two workers then still fit a 24 GiB machine.
const DefaultJobMemory = 8 << 30

// WorkerArgs are what a worker process of `bandwright nightly` needs: the
// pipeline file, the SHA-256 the run read it with (a worker refuses a file
// changed since), its memory limit in bytes and the number of cores its chain
// may use (the cores divided among the workers, since each runs one chain at
// a time).
type WorkerArgs struct {
	Pipeline, SHA256 string
	Memory           int64
	Procs            int
}

// ServeNightlyWorker is the main loop of a worker process of RunNightly: it
// limits its memory, reads the pipeline file, checks that it is the one the
// run read, and serves the chain of every file the run sends on in (see
// nightly.ServeJobs).
func ServeNightlyWorker(ctx context.Context, a WorkerArgs, in io.Reader, out io.Writer) error {
	if a.Procs > 0 {
		runtime.GOMAXPROCS(a.Procs)
	}
	if err := nightly.LimitMemory(a.Memory); err != nil {
		return fmt.Errorf("nightly worker: cannot limit the memory: %w", err)
	}
	p, err := LoadPipeline(a.Pipeline)
	if err != nil {
		return err
	}
	if p.Hash != a.SHA256 {
		return fmt.Errorf("nightly worker: the pipeline file %s changed since the run started (SHA-256 %s, the run read %s)", a.Pipeline, p.Hash, a.SHA256)
	}
	return nightly.ServeJobs(ctx, in, out, nightlyJob(p))
}

// RunNightly runs the pipeline file's chain on every new file of the inbox
// (package nightly has the rules). It returns a *failure.BatchError (exit code 3) when
// some files failed and the others completed.
func RunNightly(ctx context.Context, o NightlyOptions) (*nightly.Report, error) {
	if o.Pipeline == "" {
		return nil, failure.Errorf(failure.BadInput, "nightly: --pipeline FILE is required: an unattended run must not guess its model")
	}
	p, err := LoadPipeline(o.Pipeline)
	if err != nil {
		return nil, err
	}
	k, n := 1, 1
	if o.Shard != "" {
		k, n, err = nightly.ParseShard(o.Shard)
		if err != nil {
			return nil, failure.Wrap(failure.BadInput, err)
		}
	}
	rep, err := nightly.Run(ctx, nightly.Options{
		Inbox: o.Inbox, Archive: o.Archive, Workers: o.Workers, Shard: k, Shards: n,
		RetryFailed: o.RetryFailed, Include: o.Include, PipelineHash: p.Hash, Version: Version, Job: nightlyJob(p), Progress: o.Progress,
		Isolate: isolation(o, p),
	})
	if err != nil {
		return nil, err
	}
	if rep.Failed > 0 {
		return rep, &failure.BatchError{Failed: rep.Failed, Total: rep.Processed}
	}
	return rep, nil
}

// nightlyJob is the chain of the pipeline p on one file of the inbox.
func nightlyJob(p *Pipeline) nightly.Job {
	return func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		d, err := outdir.Begin(work)
		if err != nil {
			return nil, err
		}
		defer d.Abort()
		var cs []nightly.Constant
		var offer *nightly.ReferenceOffer
		var notes []string
		labels := &ReportLabels{
			Title: fmt.Sprintf("%s · %s · %s", in.Name, shortSHA(in.SHA256), in.Started.Format("2006-01-02")),
			Input: in.Name,
			Flag: func(oc *ChainOutcome) (string, bool) {
				cs, offer, notes = nightlyOutcomeConstants(oc, in.ReferenceDir)
				return driftFlag(in, cs)
			},
		}
		if p.Name != "" {
			labels.Title = p.Name + " — " + labels.Title
		}
		oc, err := chainInto(d, ChainOptions{Inputs: []string{in.Path}, Names: []string{in.Name}, Pipeline: p, Report: labels})
		if err != nil {
			return nil, err
		}
		if cs == nil {
			// The pipeline writes no report: the constants all the same.
			cs, offer, notes = nightlyOutcomeConstants(oc, in.ReferenceDir)
		}
		if err := d.Commit(); err != nil {
			return nil, err
		}
		jr := &nightly.JobResult{Constants: cs, Reference: offer}
		st := oc.Fit.Result.Stats
		jr.Notes = append(jr.Notes, fmt.Sprintf("%s model, %d lines (%d used, %d rejected), s = %.3g", oc.Fit.Record.Model, st.Lines, st.Used, st.Rejected, st.Sigma))
		jr.Notes = append(jr.Notes, oc.Fit.Result.Warnings...)
		jr.Notes = append(jr.Notes, notes...)
		if oc.Thermo != nil {
			if n := dominanceNote(oc.Thermo.Result.ModelDominated); n != "" {
				jr.Notes = append(jr.Notes, n)
			}
		}
		return jr, nil
	}
}

// isolation is the nightly.Isolation of o (nil without a WorkerCommand).
func isolation(o NightlyOptions, p *Pipeline) *nightly.Isolation {
	if o.WorkerCommand == nil {
		return nil
	}
	workers := o.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	a := WorkerArgs{Pipeline: p.Path, SHA256: p.Hash, Memory: o.JobMemory, Procs: max(1, runtime.NumCPU()/workers)}
	return &nightly.Isolation{Command: func() *exec.Cmd { return o.WorkerCommand(a) }}
}

// nightlyOutcomeConstants are the constants a nightly result records
// (nightlyConstants) from the chain's fit.
func nightlyOutcomeConstants(oc *ChainOutcome, refDir string) ([]nightly.Constant, *nightly.ReferenceOffer, []string) {
	used := make([]bool, len(oc.Fit.Result.Lines))
	for i, lr := range oc.Fit.Result.Lines {
		used[i] = lr.Used
	}
	cs, offer, notes := nightlyConstants(oc.Fit.Record, oc.Fit.Problem.Lines, used, refDir)
	if cs == nil {
		cs = []nightly.Constant{}
	}
	return cs, offer, notes
}

// driftFlag is the flag line of a nightly result's report: its drift test
// against the archive's history as it stood when the report was built.
func driftFlag(in nightly.Input, cs []nightly.Constant) (string, bool) {
	if in.History == "" {
		return "", false
	}
	ds, err := nightly.PreviewDrift(in.History, cs, in.DriftSigma)
	if err != nil {
		return "Drift: not tested (" + err.Error() + ").", true
	}
	threshold := in.DriftSigma
	if threshold == 0 {
		threshold = 5
	}
	flagged, tested := nightly.DistinctDrifted(ds)
	when := "against the results in the archive's history when this report was built; the nightly summary has the test as recorded"
	switch {
	case tested == 0:
		return "Drift: nothing to compare with yet (" + when + ").", false
	case len(flagged) == 0:
		return fmt.Sprintf("Drift: none — no constant more than %g combined σ from the weighted mean of its earlier results (%s).", threshold, when), false
	}
	return fmt.Sprintf("DRIFT: %d quantities more than %g combined σ from the weighted mean of their earlier results: %s (%s).", len(flagged), threshold, strings.Join(flagged, "; "), when), true
}

// shortSHA is the first 8 hex digits of a SHA-256.
func shortSHA(sha string) string {
	if len(sha) > 8 {
		return sha[:8]
	}
	return sha
}
