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
			fmt.Fprintf(c.App.Writer, "demo: invented scenario (Larkspur Ridge gas-cell laboratory, fictional); inputs copied to %s\n", oc.Inputs)
			printChain(c, oc.Chain)
			return nil
		},
	}
}
