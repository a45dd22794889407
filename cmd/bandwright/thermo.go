package main

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/urfave/cli/v2"

	"bandwright/constants"
	"bandwright/pipelines"
	"bandwright/thermo"
)

func init() { register(40, thermoCommand) }

func thermoCommand() *cli.Command {
	nasa := thermo.DefaultNASARanges()
	return &cli.Command{
		Name:      "thermo",
		Usage:     "partition functions, ideal-gas thermodynamic functions and NASA-7 polynomials with propagated σ",
		ArgsUsage: "CONSTANTS.json",
		Description: "Exact level sums from a fitted constants record, with the covariance of the fit carried into every number " +
			"(linear propagation; Monte Carlo with --mc). Writes thermo.csv, thermo.json and nasa7.json into --out.\n" +
			"Caution: " + thermo.Caution + ".",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "states", Usage: "electronic-states file (TOML): electronic states, dissociation energy"},
			&cli.StringFlag{Name: "species", Usage: "isotopologue (default: the electronic-states file's, else the first in the record)"},
			&cli.StringFlag{Name: "temperatures", Usage: "comma-separated temperatures in K, e.g. 298.15,1000"},
			&cli.StringFlag{Name: "range", Usage: "temperatures FROM:TO:STEP in K, e.g. 10:6000:1"},
			&cli.StringFlag{Name: "pressure", Value: "1bar", Usage: "standard pressure: 1bar or 1atm"},
			&cli.StringFlag{Name: "composition", Value: thermo.CompositionIsotopologue, Usage: "translational molar mass: isotopologue, or natural (IUPAC standard atomic weights, the convention of the reference tables)"},
			&cli.StringFlag{Name: "nuclear-spin", Value: thermo.SpinThermochemistry, Usage: "nuclear-spin convention: thermochemistry (spin degeneracy divided out) or line-intensity (full degeneracy)"},
			&cli.IntFlag{Name: "mc", Usage: "Monte Carlo draws from the fit's covariance (0: off)"},
			&cli.StringFlag{Name: "seed", Value: strconv.FormatUint(thermo.DefaultSeed, 10), Usage: "seed of the Monte Carlo draws (unsigned integer)"},
			&cli.Float64Flag{Name: "nasa-breakpoint", Value: nasa.Break, Usage: "breakpoint of the NASA-7 ranges, K"},
			&cli.StringFlag{Name: "nasa-limits", Value: fmt.Sprintf("%g:%g", nasa.Low, nasa.High), Usage: "lower and upper limits of the NASA-7 fit, LOW:HIGH in K"},
			&cli.StringFlag{Name: "out", Value: "bandwright-thermo", Usage: "output folder"},
		},
		Action: func(c *cli.Context) error {
			args := c.Args().Slice()
			if len(args) != 1 {
				return usageExit("thermo: give one constants.json (see bandwright thermo --help)")
			}
			seed, err := strconv.ParseUint(strings.TrimSpace(c.String("seed")), 10, 64)
			if err != nil {
				return usageExit("thermo: --seed %q: give an unsigned integer", c.String("seed"))
			}
			if c.Int("mc") < 0 {
				return usageExit("thermo: --mc %d: give the number of draws (0: off)", c.Int("mc"))
			}
			lo, hi, err := pipelines.ParseNASALimits(c.String("nasa-limits"))
			if err != nil {
				return usageExit("thermo: --nasa-limits: %v", err)
			}
			o := pipelines.ThermoOptions{
				Constants: args[0], States: c.String("states"), Species: c.String("species"),
				Temperatures: c.String("temperatures"), Range: c.String("range"),
				Pressure: c.String("pressure"), Composition: c.String("composition"), NuclearSpin: c.String("nuclear-spin"),
				MC: c.Int("mc"), Seed: seed,
				NASA: thermo.NASARanges{Low: lo, Break: c.Float64("nasa-breakpoint"), High: hi},
				Out:  c.String("out"),
			}
			oc, err := pipelines.RunThermo(o)
			if err != nil {
				return err
			}
			r := oc.Result
			fmt.Fprintln(c.App.Writer, thermoSummary(r))
			for _, w := range r.Warnings {
				fmt.Fprintln(c.App.ErrWriter, "warning:", w)
			}
			fmt.Fprintf(c.App.Writer, "results in %s (%s, %s, %s)\n", o.Out, constants.ThermoCSVFile, constants.ThermoJSONFile, constants.NASA7File)
			return nil
		},
	}
}

// parseLimits reads LOW:HIGH (K).

// thermoSummary is the line that thermo and run print for a table: the
// isotopologue it is for (a fit of several gives the table of one), the
// temperatures, the levels summed and the conventions.
func thermoSummary(r *thermo.Result) string {
	temps := "no temperatures"
	switch n := len(r.Rows); {
	case n == 1:
		temps = fmt.Sprintf("1 temperature (%g K)", r.Rows[0].T)
	case n > 1:
		temps = fmt.Sprintf("%d temperatures (%g–%g K)", n, r.Rows[0].T, r.Rows[n-1].T)
	}
	return fmt.Sprintf("thermo: %s, %s, %d levels; %s; %s", r.Conventions.Species, temps, r.System.NumLevels(),
		r.Conventions.PressureLabel, r.Conventions.NuclearSpin)
}
