package main

import (
	"fmt"
	"path/filepath"

	"github.com/urfave/cli/v2"

	"bandwright/assign"
	"bandwright/constants"
	"bandwright/fit/linelist"
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
			"Peak list columns: position (required), unc, intensity, unit (cm-1, MHz or GHz); other columns are passed through.",
		OnUsageError: onUsage,
		Flags:        append(assignFlags(), &cli.StringFlag{Name: "out", Value: "bandwright-assign", Usage: "output folder"}),
		Action: func(c *cli.Context) error {
			if c.NArg() != 1 {
				return usageExit("assign: give one peak list (see bandwright assign --help)")
			}
			if c.String("bands") == "" {
				return usageExit("assign: --bands is required (e.g. --bands 1-0,2-1)")
			}
			o, err := assignOptions(c)
			if err != nil {
				return err
			}
			o.Peaks, o.Out = c.Args().First(), c.String("out")
			oc, err := pipelines.RunAssign(*o)
			if err != nil {
				return err
			}
			r := oc.Result
			fmt.Fprintf(c.App.Writer, "assign: %d lines assigned, %d peaks left over, internal fit rms %.3g %s\n", len(r.Lines), len(r.Unassigned), oc.Record.RMS(), oc.Record.ShownIn())
			for _, b := range r.Bands {
				if b.Locked {
					fmt.Fprintf(c.App.Writer, "  %s: %d lines\n", b.Label(), b.Lines)
				}
			}
			for _, w := range r.Warnings { // bands not locked, duplicate peaks, …
				fmt.Fprintln(c.App.ErrWriter, "warning:", w)
			}
			fmt.Fprintf(c.App.Writer, "results in %s (check %s)\n", filepath.Join(oc.Out, constants.LinesFile), filepath.Join(oc.Out, constants.AssignReportFile))
			return nil
		},
	}
}

// assignFlags are the options of assign, which run takes too for a peak list.
func assignFlags() []cli.Flag {
	return []cli.Flag{
		&cli.StringFlag{Name: "start", Usage: "starting constants in equilibrium notation (TOML [[species]] tables; B alone for pure rotation in v = 0)"},
		&cli.StringFlag{Name: "constants", Usage: "starting constants from an earlier fit (constants.json)"},
		&cli.StringFlag{Name: "bands", Usage: "bands v′-v″ looked for in every species, comma-separated (e.g. 1-0,2-1; 0-0 for pure rotation)"},
		&cli.StringFlag{Name: "spectrum", Value: "ir", Usage: "selection rules: ir (ΔJ = ±1), raman (ΔJ = 0, ±2), rotation (ΔJ = +1, v′ = v″)"},
		&cli.Float64Flag{Name: "temperature", Value: assign.DefaultTemperature, Usage: "sample temperature in K, for predicted intensities"},
		&cli.StringFlag{Name: "tolerance", Usage: "largest |observed − predicted| for a candidate, e.g. 0.01 or 0.3MHz (default: 4·√(unc² + σ_pred²))"},
		&cli.StringFlag{Name: "unc", Usage: "1σ of peaks without one, e.g. 0.001 or 0.05MHz (default: median of the given ones, else the fit's scatter)"},
		&cli.StringFlag{Name: "unit", Value: linelist.DefaultUnit.String(), Usage: "unit of peaks whose row gives none: cm-1, MHz or GHz"},
		&cli.StringSliceFlag{Name: "species", Usage: "isotopologues to look for (default: all in the starting constants)"},
	}
}

// assignOptions decodes the assign options of c (Peaks and Out are the
// caller's).
func assignOptions(c *cli.Context) (*pipelines.AssignOptions, error) {
	var bands []linelist.Band
	if b := c.String("bands"); b != "" {
		var err error
		if bands, err = linelist.ParseBands(b); err != nil {
			return nil, usageExit("%v", err)
		}
	}
	if temp := c.Float64("temperature"); c.IsSet("temperature") && !(temp > 0) {
		return nil, usageExit("assign: --temperature %g: give the sample temperature in K, > 0 (leave the flag out for %g K)", temp, assign.DefaultTemperature)
	}
	return &pipelines.AssignOptions{
		Start: c.String("start"), Constants: c.String("constants"), Bands: bands,
		Spectrum: c.String("spectrum"), Temperature: c.Float64("temperature"), Tolerance: c.String("tolerance"),
		Unc: c.String("unc"), Unit: c.String("unit"), Species: splitList(c.StringSlice("species")),
	}, nil
}
