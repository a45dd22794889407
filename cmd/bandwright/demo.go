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
		Usage:        "run the whole chain on the bundled demo (invented: a CO gas-cell peak list, and an NO gas-cell line list with fine structure)",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Value: "bandwright-demo", Usage: "output folder"},
		},
		Action: func(c *cli.Context) error {
			oc, err := pipelines.RunDemo(c.String("out"))
			if err != nil {
				return err
			}
			fmt.Fprintf(c.App.Writer, "demo: invented scenario (Larkspur Ridge gas-cell laboratory, fictional); inputs copied to %s\n", oc.Inputs)
			printChain(c, oc.Chain)
			if s := oc.OpenShell; s != nil {
				fmt.Fprintf(c.App.Writer, "\ndemo: second invented scenario, a hot NO cell (open shell, X²Π fine structure); inputs copied to %s\n", s.Inputs)
				printChain(c, s.Chain)
			}
			return nil
		},
	}
}
