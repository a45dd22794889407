package main

import (
	"fmt"

	"github.com/urfave/cli/v2"

	"bandwright/pipelines"
)

func init() { register(90, demoCommand) }

func demoCommand() *cli.Command {
	return &cli.Command{
		Name:         "demo",
		Usage:        "run the whole chain on the bundled demo (an invented CO gas-cell peak list)",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Value: "bandwright-demo", Usage: "output folder"},
		},
		Action: func(c *cli.Context) error {
			oc, err := pipelines.RunDemo(c.String("out"))
			if err != nil {
				return err
			}
			ch := oc.Chain
			fmt.Fprintf(c.App.Writer, "demo: invented scenario (Larkspur Ridge gas-cell laboratory, fictional); inputs copied to %s\n", oc.Inputs)
			if a := ch.Assign; a != nil {
				fmt.Fprintf(c.App.Writer, "assign: %d peaks assigned, %d left unassigned, %d bands\n", len(a.Result.Lines), len(a.Result.Unassigned), len(a.Result.Bands))
			}
			for _, s := range ch.Chosen {
				fmt.Fprintln(c.App.Writer, s)
			}
			st := ch.Fit.Result.Stats
			fmt.Fprintf(c.App.Writer, "fit: %s model, %d lines (%d used, %d rejected), s = %.3g\n", ch.Fit.Record.Model, st.Lines, st.Used, st.Rejected, st.Sigma)
			fmt.Fprintf(c.App.Writer, "thermo: %d temperatures\n", len(ch.Thermo.Result.Rows))
			fmt.Fprintf(c.App.Writer, "report: %s\n", ch.ReportPath())
			return nil
		},
	}
}
