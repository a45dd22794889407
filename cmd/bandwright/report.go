package main

import (
	"fmt"
	"path/filepath"

	"github.com/urfave/cli/v2"

	"bandwright/constants"
	"bandwright/pipelines"
	"bandwright/pipelines/report"
)

func init() { register(60, reportCommand) }

func reportCommand() *cli.Command {
	return &cli.Command{
		Name:      "report",
		Usage:     "rebuild report.html and report.md from an output folder",
		ArgsUsage: "DIR",
		Description: "Reads the stage outputs in DIR (constants.json is required; residuals.csv, thermo.csv, assign.md, lines.csv and unassigned.csv add sections)\n" +
			"and writes report.html (self-contained, inline SVG plots) and report.md with its report-*.svg figures into DIR. Other files are left alone.",
		OnUsageError: onUsage,
		Flags: []cli.Flag{
			&cli.StringSliceFlag{Name: "format", Usage: "report formats: html, md (default both; repeatable or comma-separated)"},
			&cli.StringFlag{Name: "title", Usage: "title of the report (default: bandwright report — species)"},
		},
		Action: func(c *cli.Context) error {
			if c.NArg() != 1 {
				return usageExit("report: give one output folder (see bandwright report --help)")
			}
			dir := c.Args().First()
			if stale, err := report.Stale(dir); err == nil {
				for _, s := range stale {
					fmt.Fprintln(c.App.ErrWriter, "warning:", s)
				}
			}
			names, err := report.Rebuild(dir, report.Options{
				Formats: splitList(c.StringSlice("format")), Title: c.String("title"), Version: pipelines.Version,
			})
			if err != nil {
				return err
			}
			fmt.Fprintf(c.App.Writer, "report: %d files written into %s (%s)\n", len(names), dir, filepath.Join(dir, constants.ReportHTMLFile))
			return nil
		},
	}
}
