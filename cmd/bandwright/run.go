package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"bandwright/internal/failure"
	"bandwright/pipelines"
	"bandwright/pipelines/nightly"
)

func init() {
	register(50, runCommand)
	register(70, nightlyCommand)
	register(71, nightlyWorkerCommand)
}

func runCommand() *cli.Command {
	return &cli.Command{
		Name:      "run",
		Usage:     "run the whole chain (assign for peak lists, fit, thermo, report) on input files",
		ArgsUsage: "INPUT...",
		Description: "With --pipeline, the stages take the options of the pipeline file. Without, the inputs are line lists, or one peak list\n" +
			"(a position column, no quantum numbers) assigned with the assign options (--start or --constants, --bands, --spectrum, …);\n" +
			"bandwright then chooses the model (term values for a single band, Dunham for several vibrational levels) and adds terms\n" +
			"while the data determine them and an F-test says they are significant; it prints what it chose.",
		OnUsageError: onUsage,
		Flags: append(runAssignFlags(),
			&cli.StringFlag{Name: "pipeline", Usage: "pipeline file (TOML)"},
			&cli.StringFlag{Name: "states", Usage: "electronic-states file (TOML) of the fit and thermo stages, for open-shell and electronic spectra (or states = … in the pipeline file)"},
			&cli.StringFlag{Name: "out", Value: "bandwright-run", Usage: "output folder"},
		),
		Action: func(c *cli.Context) error {
			if c.NArg() == 0 {
				return usageExit("run: give one or more input files (see bandwright run --help)")
			}
			o := pipelines.ChainOptions{Inputs: c.Args().Slice(), Out: c.String("out"), Unit: c.String("unit"), States: c.String("states")}
			if f := c.String("pipeline"); f != "" {
				p, err := pipelines.LoadPipeline(f)
				if err != nil {
					return err
				}
				o.Pipeline = p
			}
			if assignGiven(c) {
				ao, err := assignOptions(c)
				if err != nil {
					return err
				}
				o.Assign = ao
			}
			oc, err := pipelines.RunChain(o)
			if err != nil {
				return err
			}
			printChain(c, oc)
			return nil
		},
	}
}

// runAssignFlags are assign's options as run takes them: --unit is also the
// unit of the fit's outputs, and has no default of its own (a peak list
// without units is then in cm-1, line lists show their own unit).
func runAssignFlags() []cli.Flag {
	fs := assignFlags()
	for i, f := range fs {
		if f.Names()[0] == "unit" {
			fs[i] = &cli.StringFlag{Name: "unit", Usage: "cm-1, MHz or GHz: the unit of peaks whose row gives none (default cm-1) and of the constants, rms and residuals shown (default: the lines' unit)"}
		}
	}
	return fs
}

// assignGiven reports whether any option of a peak list's assignment was given.
func assignGiven(c *cli.Context) bool {
	for _, n := range []string{"start", "constants", "bands", "spectrum", "temperature", "tolerance", "unc", "species"} {
		if c.IsSet(n) {
			return true
		}
	}
	return false
}

// printChain prints what a chain chose and produced, and its warnings.
func printChain(c *cli.Context, oc *pipelines.ChainOutcome) {
	if a := oc.Assign; a != nil {
		fmt.Fprintf(c.App.Writer, "assign: %d peaks assigned, %d left unassigned, %d bands\n", len(a.Result.Lines), len(a.Result.Unassigned), len(a.Result.Bands))
	}
	for _, s := range oc.Chosen {
		fmt.Fprintln(c.App.Writer, s)
	}
	st := oc.Fit.Result.Stats
	fmt.Fprintf(c.App.Writer, "fit: %s model, %d lines (%d used, %d rejected), s = %.3g, rms %.3g %s\n", oc.Fit.Record.Model, st.Lines, st.Used, st.Rejected, st.Sigma, oc.Fit.Record.RMS(), oc.Fit.Record.ShownIn())
	tr := oc.Thermo.Result
	fmt.Fprintln(c.App.Writer, thermoSummary(tr))
	if tr.OmittedNote != "" {
		fmt.Fprintln(c.App.ErrWriter, "warning: thermo:", tr.OmittedNote)
	}
	if oc.Assign != nil {
		for _, w := range oc.Assign.Result.Warnings {
			fmt.Fprintln(c.App.ErrWriter, "warning: assign:", w)
		}
	}
	for _, w := range oc.Fit.Result.Warnings {
		fmt.Fprintln(c.App.ErrWriter, "warning:", w)
	}
	fmt.Fprintf(c.App.Writer, "report: %s\n", oc.ReportPath())
}

func nightlyCommand() *cli.Command {
	return &cli.Command{
		Name:  "nightly",
		Usage: "run a pipeline on every new file of an inbox, with results, ledger and summary in an archive",
		Description: "New work is found by content (SHA-256); the inbox is never written. Results go to ARCHIVE/results/,\n" +
			"one row per file to ARCHIVE/ledger.csv, and a summary with drift flags to ARCHIVE/summary-DATE.html/.md.\n" +
			"Exit 0: every file of this run succeeded (or nothing to do); 3: some failed, the others completed.\n" +
			"SIGINT/SIGTERM stop after the files in progress.",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "inbox", Usage: "folder of new measurement files (only read; required)"},
			&cli.StringFlag{Name: "archive", Usage: "folder of results, ledger, history and summaries (required)"},
			&cli.StringFlag{Name: "pipeline", Usage: "pipeline file (TOML; required)"},
			&cli.IntFlag{Name: "workers", Value: 2, Usage: "files processed at once"},
			&cli.StringFlag{Name: "shard", Usage: "K/N: process only shard K of N (by content hash), for job arrays"},
			&cli.BoolFlag{Name: "retry-failed", Usage: "run again the files that failed before"},
			&cli.StringFlag{Name: "include", Value: nightly.DefaultInclude, Usage: "glob of the files to process, letter case ignored (others are listed as ignored in the summary; \"\": every file)"},
			&cli.IntFlag{Name: "job-memory", Value: pipelines.DefaultJobMemory >> 20, Usage: "memory limit of each file's chain in MiB (each worker runs its chains in a process of its own; 0: no limit)"},
		},
		Action: func(c *cli.Context) error {
			var missing []string
			for _, f := range []string{"inbox", "archive", "pipeline"} {
				if c.String(f) == "" {
					missing = append(missing, "--"+f)
				}
			}
			if len(missing) > 0 {
				return usageExit("nightly: give %s (see bandwright nightly --help)", strings.Join(missing, ", "))
			}
			if c.Int("workers") < 1 {
				return usageExit("nightly: --workers must be at least 1")
			}
			ctx, cancel := nightly.NotifyContext(context.Background(), c.App.ErrWriter)
			defer cancel()
			rep, err := pipelines.RunNightly(ctx, pipelines.NightlyOptions{
				Inbox: c.String("inbox"), Archive: c.String("archive"), Pipeline: c.String("pipeline"),
				Workers: c.Int("workers"), Shard: c.String("shard"), RetryFailed: c.Bool("retry-failed"), Include: c.String("include"), Progress: c.App.ErrWriter,
				WorkerCommand: workerCommand(), JobMemory: int64(c.Int("job-memory")) << 20,
			})
			var be *failure.BatchError
			if err != nil && !errors.As(err, &be) {
				return err
			}
			fmt.Fprintf(c.App.Writer, "nightly: %d processed, %d ok, %d failed, %d skipped, %d already done\n", rep.Processed, rep.Succeeded, rep.Failed, rep.Skipped, rep.AlreadyDone)
			if rep.Summary != "" {
				fmt.Fprintf(c.App.Writer, "summary: %s\n", rep.Summary)
			}
			if rep.Interrupted {
				fmt.Fprintln(c.App.Writer, "nightly: stopped by a signal; the remaining files will be done by the next run")
			}
			return err
		},
	}
}

// workerCommand starts this program as a worker process of nightly (the
// hidden subcommand nightly-worker), or returns nil when the program cannot
// find itself (the chains then run in the nightly process).
func workerCommand() func(pipelines.WorkerArgs) *exec.Cmd {
	exe, err := os.Executable()
	if err != nil {
		return nil
	}
	return func(a pipelines.WorkerArgs) *exec.Cmd {
		return exec.Command(exe, "nightly-worker", "--pipeline", a.Pipeline, "--sha256", a.SHA256,
			"--memory", strconv.FormatInt(a.Memory, 10), "--procs", strconv.Itoa(a.Procs))
	}
}

// nightlyWorkerCommand is the worker process of nightly: it runs the chains
// that the nightly process sends on its standard input, one at a time, each
// reply on its standard output. Not for people.
func nightlyWorkerCommand() *cli.Command {
	return &cli.Command{
		Name:   "nightly-worker",
		Hidden: true,
		Usage:  "internal: the worker process of nightly",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "pipeline", Required: true},
			&cli.StringFlag{Name: "sha256", Required: true},
			&cli.Int64Flag{Name: "memory"},
			&cli.IntFlag{Name: "procs"},
		},
		Action: func(c *cli.Context) error {
			a := pipelines.WorkerArgs{Pipeline: c.String("pipeline"), SHA256: c.String("sha256"), Memory: c.Int64("memory"), Procs: c.Int("procs")}
			return pipelines.ServeNightlyWorker(context.Background(), a, os.Stdin, c.App.Writer)
		},
	}
}
