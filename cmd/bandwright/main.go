// Command bandwright takes an infrared, Raman or microwave spectrum of a
// diatomic gas from picked peaks to assigned lines, fitted molecular constants
// with their covariance, and partition functions and thermodynamic tables with
// uncertainties. Each subcommand decodes its flags and calls one function of
// package pipelines; exit codes: 0 success, 1 bad input or usage, 2 a fit or
// computation that cannot be done honestly, 3 a batch in which some files failed.
package main

import (
	"errors"
	"fmt"
	"os"
	"sort"

	"github.com/urfave/cli/v2"

	"bandwright/pipelines"
)

func main() {
	os.Exit(run(os.Args))
}

// run executes the command line and returns the exit code.
func run(args []string) int {
	app := newApp()
	err := app.Run(args)
	if err == nil {
		return 0
	}
	fmt.Fprintln(os.Stderr, "bandwright:", err)
	var ec cli.ExitCoder
	if errors.As(err, &ec) {
		return ec.ExitCode()
	}
	return pipelines.ExitCode(err)
}

func newApp() *cli.App {
	return &cli.App{
		Name:    "bandwright",
		Usage:   "from picked peaks of a diatomic spectrum to constants, partition functions and thermodynamic tables",
		Version: pipelines.Version,
		Description: "Exit codes: 0 success; 1 bad input or usage (the message names the file, row and field); " +
			"2 a fit or computation that cannot be done honestly; 3 a batch in which some files failed.",
		HideHelpCommand: true,
		Commands:        commands(),
		OnUsageError: func(c *cli.Context, err error, isSub bool) error {
			return cli.Exit("usage: "+err.Error(), 1)
		},
	}
}

// registry holds the subcommands; each command's file registers itself in an
// init function with its place in the help listing.
var registry = map[int]func() *cli.Command{}

func register(place int, c func() *cli.Command) { registry[place] = c }

func commands() []*cli.Command {
	var places []int
	for p := range registry {
		places = append(places, p)
	}
	sort.Ints(places)
	var out []*cli.Command
	for _, p := range places {
		out = append(out, registry[p]())
	}
	return out
}

func usageExit(format string, a ...any) error {
	return cli.Exit(fmt.Sprintf(format, a...), 1)
}
