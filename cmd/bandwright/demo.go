package main

import (
	"fmt"
	"path/filepath"

	"github.com/urfave/cli/v2"

	"bandwright/pipelines"
)

func init() { register(90, demoCommand) }

func demoCommand() *cli.Command {
	return &cli.Command{
		Name:         "demo",
		Usage:        "run every stage on the bundled demo (an invented CO gas-cell campaign)",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Value: "bandwright-demo", Usage: "output folder"},
		},
		Action: func(c *cli.Context) error {
			oc, err := pipelines.RunDemo(c.String("out"))
			if err != nil {
				return err
			}
			st := oc.Fit.Result.Stats
			fmt.Printf("demo: invented scenario (Larkspur Ridge gas-cell laboratory, fictional), inputs in %s\n", filepath.Join(oc.Out, "inputs"))
			fmt.Printf("fit: %d lines (%d used, %d rejected), s = %.3g, rms %.3g cm-1\n", st.Lines, st.Used, st.Rejected, st.Sigma, st.RMSCm)
			fmt.Printf("results: %s\n", filepath.Join(oc.Out, "fit", pipelines.FitReportFile))
			return nil
		},
	}
}
