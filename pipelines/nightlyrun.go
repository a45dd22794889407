package pipelines

import (
	"context"
	"fmt"
	"io"

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
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		d, err := outdir.Begin(work)
		if err != nil {
			return nil, err
		}
		defer d.Abort()
		oc, err := chainInto(d, ChainOptions{Inputs: []string{in.Path}, Names: []string{in.Name}, Pipeline: p})
		if err != nil {
			return nil, err
		}
		if err := d.Commit(); err != nil {
			return nil, err
		}
		used := make([]bool, len(oc.Fit.Result.Lines))
		for i, lr := range oc.Fit.Result.Lines {
			used[i] = lr.Used
		}
		cs, offer, notes := nightlyConstants(oc.Fit.Record, oc.Fit.Problem.Lines, used, in.ReferenceDir)
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
	rep, err := nightly.Run(ctx, nightly.Options{
		Inbox: o.Inbox, Archive: o.Archive, Workers: o.Workers, Shard: k, Shards: n,
		RetryFailed: o.RetryFailed, Include: o.Include, PipelineHash: p.Hash, Version: Version, Job: job, Progress: o.Progress,
	})
	if err != nil {
		return nil, err
	}
	if rep.Failed > 0 {
		return rep, &failure.BatchError{Failed: rep.Failed, Total: rep.Processed}
	}
	return rep, nil
}
