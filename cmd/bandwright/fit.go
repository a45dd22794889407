package main

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/urfave/cli/v2"

	"bandwright/constants"
	"bandwright/fit"
	"bandwright/fit/linelist"
	"bandwright/internal/failure"
	"bandwright/pipelines"
)

func init() {
	register(20, fitCommand)
	register(30, predictCommand)
}

func splitList(xs []string) []string {
	var out []string
	for _, x := range xs {
		for _, f := range strings.Split(x, ",") {
			if f = strings.TrimSpace(f); f != "" {
				out = append(out, f)
			}
		}
	}
	return out
}

func fitCommand() *cli.Command {
	return &cli.Command{
		Name:      "fit",
		Usage:     "fit molecular constants to assigned line lists",
		ArgsUsage: "LINES.csv...",
		Description: "Weighted least squares (QR on the column-scaled design matrix) of a term-values or Dunham model to the lines of one or more files.\n" +
			"Writes constants.json, residuals.csv and fit.md into --out. σ are scaled by the fit's dimensionless standard deviation.",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "model", Value: fit.DefaultModel, Usage: "energy-level model: dunham or term-values"},
			&cli.StringSliceFlag{Name: "terms", Usage: "terms that float: term-values B,D,H,L; dunham Y10,Y20,Y01,Y11,Y02,…; fine structure A,A_D,A_H,gamma,gamma_D,gamma_H,lambda,lambda_D,lambda_H,p,q,p_D,q_D,p_H,q_H (dunham A_e,alpha_A,…); STATE:NAME for one state (default: B,D or Y10,Y20,Y01,Y11,Y02, and the fine structure of each state's case)"},
			&cli.StringSliceFlag{Name: "fix", Usage: "hold a parameter: NAME=VALUE (D=6.1e-6, D_v1=…, D_v1[13C16O]=…, Y02=…, A:B_v0=… for state A); repeatable"},
			&cli.Float64Flag{Name: "reject", Value: fit.DefaultReject, Usage: "reject lines with |o−c|/unc above this many times the fit's standard deviation (0: off; at most 10 % of lines)"},
			&cli.BoolFlag{Name: "round", Usage: "sequential rounding and refitting of the constants (Le Roy 1998)"},
			&cli.BoolFlag{Name: "bob", Usage: "Born–Oppenheimer-breakdown terms for Y10 and Y01 of each substituted element (dunham)"},
			&cli.StringSliceFlag{Name: "bob-terms", Usage: "the Dunham terms that get breakdown terms (implies --bob)"},
			&cli.BoolFlag{Name: "calibrate", Usage: "float a multiplicative calibration factor per file (the first file is the reference)"},
			&cli.StringFlag{Name: "reference", Usage: "reference isotopologue of a Dunham fit (default: the first in the input)"},
			&cli.StringFlag{Name: "unit", Usage: "unit of the constants, rms and residuals shown: cm-1, MHz or GHz (MHz: each constant in MHz, kHz or Hz; default: the lines' unit)"},
			&cli.StringFlag{Name: "states", Usage: "electronic-states file (TOML): the states of open-shell levels and electronic band systems, starting values ([state.start])"},
			&cli.StringFlag{Name: "out", Value: "bandwright-fit", Usage: "output folder"},
		},
		Action: func(c *cli.Context) error {
			if c.NArg() == 0 {
				return usageExit("fit: give one or more line-list files (see bandwright fit --help)")
			}
			bob := splitList(c.StringSlice("bob-terms"))
			if c.Bool("bob") && len(bob) == 0 {
				bob = fit.DefaultBOBTerms()
			}
			if c.Float64("reject") < 0 {
				return usageExit("fit: --reject must be ≥ 0 (0 turns rejection off)")
			}
			o := pipelines.FitOptions{
				Inputs: c.Args().Slice(), Model: c.String("model"), Terms: splitList(c.StringSlice("terms")),
				Fix: c.StringSlice("fix"), Reject: c.Float64("reject"), Round: c.Bool("round"), BOBTerms: bob,
				Calibrate: c.Bool("calibrate"), Reference: c.String("reference"), Unit: c.String("unit"), States: c.String("states"), Out: c.String("out"),
			}
			oc, err := pipelines.RunFit(o)
			if err != nil {
				return err
			}
			st := oc.Result.Stats
			sText := fmt.Sprintf("%.3g", st.Sigma)
			if math.IsNaN(st.Sigma) {
				sText = "undefined (no degrees of freedom)"
			}
			fmt.Fprintf(c.App.Writer, "fit: %d lines (%d used, %d rejected), %d parameters, s = %s, rms %.3g %s\n", st.Lines, st.Used, st.Rejected, st.Params, sText, oc.Record.RMS(), oc.Result.Unit)
			for _, w := range oc.Result.Warnings {
				fmt.Fprintln(c.App.ErrWriter, "warning:", w)
			}
			fmt.Fprintf(c.App.Writer, "results in %s\n", filepath.Join(o.Out, constants.ConstantsFile))
			return nil
		},
	}
}

func predictCommand() *cli.Command {
	return &cli.Command{
		Name:      "predict",
		Usage:     "calculate line positions with propagated σ from a constants record",
		ArgsUsage: "CONSTANTS.json",
		Description: "Writes the lines of the given bands as CSV in the line-list columns (species, v_up, J_up, v_lo, J_lo, branch, position, unc, unit),\n" +
			"then extrapolated (yes: a level beyond those the fitted lines reach) and, with --temperature, intensity (relative to the strongest line).\n" +
			"Positions carry as many decimals as their 1σ needs for two significant digits.",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "species", Usage: "isotopologue (default: every species in the record)"},
			&cli.StringFlag{Name: "bands", Value: "1-0", Usage: "bands v′-v″, comma-separated (0-0: pure rotation; A:0-0: v′ = 0 of electronic state A)"},
			&cli.IntFlag{Name: "jmax", Value: 40, Usage: "highest lower-state J"},
			&cli.StringSliceFlag{Name: "branches", Usage: "branches O,P,Q,R,S (default: those of the spectrum — P,R infrared, R pure rotation, O,Q,S Raman; for open-shell and electronic states every ΔJ = 0, ±1)"},
			&cli.StringFlag{Name: "lines", Usage: "predict exactly the transitions of this file (line-list quantum-number columns, positions optional) instead of --bands"},
			&cli.StringFlag{Name: "spectrum", Usage: "selection rules and intensities: ir, raman or rotation (default: rotation for v′ = v″, ir otherwise)"},
			&cli.Float64Flag{Name: "temperature", Usage: "temperature in K for relative intensities (Boltzmann, 2J+1, Hönl–London, nuclear spin); default: no intensity column"},
			&cli.StringFlag{Name: "unit", Usage: "unit of the positions: cm-1, MHz or GHz (default: the unit of the fit's outputs)"},
			&cli.StringFlag{Name: "out", Value: "predicted.csv", Usage: "output CSV file"},
		},
		Action: func(c *cli.Context) error {
			if c.NArg() != 1 {
				return usageExit("predict: give one constants.json")
			}
			bands, err := linelist.ParseBands(c.String("bands"))
			if err != nil {
				return usageExit("%v", err)
			}
			if c.Int("jmax") < 0 || c.Int("jmax") > 1000 {
				return usageExit("predict: --jmax must be within 0…1000")
			}
			oc, err := pipelines.RunPredict(pipelines.PredictOptions{
				Constants: c.Args().First(), Species: c.String("species"), Bands: bands, JMax: c.Int("jmax"),
				Branches: splitList(c.StringSlice("branches")), Spectrum: c.String("spectrum"),
				Temperature: c.Float64("temperature"), Unit: c.String("unit"), Lines: c.String("lines"), Out: c.String("out"),
			})
			if err != nil {
				return err
			}
			for _, w := range oc.Warnings {
				fmt.Fprintln(c.App.ErrWriter, "warning:", w)
			}
			fmt.Fprintf(c.App.Writer, "predict: %d lines (%s) written to %s\n", oc.Lines, oc.Unit, c.String("out"))
			return nil
		},
	}
}

// onUsage refuses options the command does not know or cannot read (exit
// code 1), naming the command.
func onUsage(c *cli.Context, err error, isSub bool) error {
	return &commandError{cmd: c.Command.Name, err: usageError{failure.Errorf(failure.BadInput, "usage: %v (see bandwright %s --help)", err, c.Command.Name)}}
}
