package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"

	"github.com/urfave/cli/v2"

	"bandwright/fit"
	"bandwright/pipelines"
)

func init() { register(10, assignCommand) }

func assignCommand() *cli.Command {
	return &cli.Command{
		Name:      "assign",
		Usage:     "assign quantum numbers to a picked peak list from rough starting constants",
		ArgsUsage: "PEAKS.csv",
		Description: "Locks each band onto the peaks (offset and B-scale search), matches peaks to predicted lines one to one,\n" +
			"fits, extends to higher J until nothing new is assigned, and checks the result with combination differences.\n" +
			"Writes lines.csv (ready for `bandwright fit`), unassigned.csv, constants.json and assign.md into --out.\n" +
			"Peak list columns: position (required), unc, intensity, unit (cm-1 or MHz); other columns are passed through.",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "start", Usage: "starting constants in equilibrium notation (TOML [[species]] tables)"},
			&cli.StringFlag{Name: "constants", Usage: "starting constants from an earlier fit (constants.json)"},
			&cli.StringFlag{Name: "bands", Usage: "bands v′-v″ looked for in every species, comma-separated (e.g. 1-0,2-1; 0-0 for pure rotation)"},
			&cli.StringFlag{Name: "spectrum", Value: "ir", Usage: "selection rules: ir (ΔJ = ±1), raman (ΔJ = 0, ±2), rotation (ΔJ = +1, v′ = v″)"},
			&cli.Float64Flag{Name: "temperature", Value: pipelines.DefaultAssignTemp, Usage: "sample temperature in K, for predicted intensities"},
			&cli.StringFlag{Name: "tolerance", Usage: "largest |observed − predicted| for a candidate, e.g. 0.01 or 0.3MHz (default: 4·√(unc² + σ_pred²))"},
			&cli.StringFlag{Name: "unc", Usage: "1σ of peaks without one, e.g. 0.001 or 0.05MHz (default: median of the given ones, else the fit's scatter)"},
			&cli.StringFlag{Name: "unit", Value: "cm-1", Usage: "unit of peaks whose row gives none: cm-1 or MHz"},
			&cli.StringSliceFlag{Name: "species", Usage: "isotopologues to look for (default: all in the starting constants)"},
			&cli.StringFlag{Name: "out", Value: "bandwright-assign", Usage: "output folder"},
		},
		Action: func(c *cli.Context) error {
			f, err := lateFlags(c)
			if err != nil {
				return usageExit("assign: %v (see bandwright assign --help)", err)
			}
			if len(f.args) != 1 {
				return usageExit("assign: give one peak list (see bandwright assign --help)")
			}
			if f.str("bands") == "" {
				return usageExit("assign: --bands is required (e.g. --bands 1-0,2-1)")
			}
			bands, err := fit.ParseBands(f.str("bands"))
			if err != nil {
				return usageExit("%v", err)
			}
			temp, err := f.float("temperature")
			if err != nil {
				return usageExit("assign: --temperature: %v", err)
			}
			oc, err := pipelines.RunAssign(pipelines.AssignOptions{
				Peaks: f.args[0], Start: f.str("start"), Constants: f.str("constants"), Bands: bands,
				Spectrum: f.str("spectrum"), Temperature: temp, Tolerance: f.str("tolerance"),
				Unc: f.str("unc"), Unit: f.str("unit"), Species: splitList(f.slice("species")), Out: f.str("out"),
			})
			if err != nil {
				return err
			}
			r := oc.Result
			fmt.Fprintf(os.Stdout, "assign: %d lines assigned, %d peaks left over, internal fit rms %.3g cm-1\n", len(r.Lines), len(r.Unassigned), r.Fit.Stats.RMSCm)
			for _, b := range r.Bands {
				if b.Locked {
					fmt.Fprintf(os.Stdout, "  %s: %d lines\n", b.Label(), b.Lines)
				} else {
					fmt.Fprintf(os.Stderr, "warning: band %s not locked: %s\n", b.Label(), b.Lock.Reason)
				}
			}
			fmt.Fprintf(os.Stdout, "results in %s (check %s)\n", filepath.Join(oc.Out, pipelines.LinesFile), filepath.Join(oc.Out, pipelines.AssignReportFile))
			return nil
		},
	}
}

// flagsAfter holds the command's flags including those written after the
// peak list: urfave/cli v2 stops reading flags at the first argument, and
// `bandwright assign PEAKS.csv --start … --bands …` is the documented order.
type flagsAfter struct {
	c      *cli.Context
	args   []string
	late   map[string]string
	slices map[string][]string
}

func lateFlags(c *cli.Context) (*flagsAfter, error) {
	fs := flag.NewFlagSet(c.Command.Name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	for _, fl := range c.Command.Flags {
		if err := fl.Apply(fs); err != nil {
			return nil, err
		}
	}
	f := &flagsAfter{c: c, late: map[string]string{}, slices: map[string][]string{}}
	rest := c.Args().Slice()
	for len(rest) > 0 {
		if err := fs.Parse(rest); err != nil {
			return nil, err
		}
		rest = fs.Args()
		if len(rest) == 0 {
			break
		}
		f.args = append(f.args, rest[0])
		rest = rest[1:]
	}
	fs.Visit(func(fl *flag.Flag) {
		if ss, ok := fl.Value.(*cli.StringSlice); ok {
			f.slices[fl.Name] = ss.Value()
			return
		}
		f.late[fl.Name] = fl.Value.String()
	})
	return f, nil
}

func (f *flagsAfter) str(name string) string {
	if v, ok := f.late[name]; ok {
		return v
	}
	return f.c.String(name)
}

func (f *flagsAfter) float(name string) (float64, error) {
	if v, ok := f.late[name]; ok {
		return strconv.ParseFloat(v, 64)
	}
	return f.c.Float64(name), nil
}

func (f *flagsAfter) slice(name string) []string {
	return append(append([]string(nil), f.c.StringSlice(name)...), f.slices[name]...)
}
