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
	"io"
	"os"
	"sort"
	"strings"

	"github.com/urfave/cli/v2"

	"bandwright/internal/failure"
	"bandwright/pipelines"
)

func main() {
	os.Exit(run(os.Args, os.Stdout, os.Stderr))
}

// run executes the command line with its output going to stdout and stderr, and
// returns the exit code (it never exits the process itself, so tests can call it).
func run(args []string, stdout, stderr io.Writer) int {
	app := newApp()
	app.Writer, app.ErrWriter = stdout, stderr
	// The library would print an exit error and end the process itself; run
	// returns the code instead.
	app.ExitErrHandler = func(*cli.Context, error) {}
	if code, done := helpOrUnknown(app, args, stderr); done {
		return code
	}
	err := app.Run(flagsFirst(app, args))
	if err == nil {
		return 0
	}
	fmt.Fprintln(stderr, userMessage(err))
	var ec cli.ExitCoder
	if errors.As(err, &ec) {
		return ec.ExitCode()
	}
	return failure.ExitCode(err)
}

// helpOrUnknown answers the forms of help the library does not — "bandwright
// help", "bandwright help CMD", "bandwright CMD ARGS… --help" (exit 0) — and
// refuses an unknown command with the nearest command names (exit 1). It
// reports whether it handled args.
func helpOrUnknown(app *cli.App, args []string, stderr io.Writer) (int, bool) {
	if len(args) < 2 || strings.HasPrefix(args[1], "-") {
		return 0, false // no command, or global flags (--help, --version): the library's
	}
	name, rest := args[1], args[2:]
	if name == "help" {
		if len(rest) == 0 || rest[0] == "help" {
			return showHelp(app, args[0])
		}
		name, rest = rest[0], nil
		if app.Command(name) == nil {
			return unknownCommand(app, name, stderr), true
		}
		return showHelp(app, args[0], name)
	}
	if app.Command(name) == nil {
		return unknownCommand(app, name, stderr), true
	}
	for _, a := range rest {
		if a == "--" {
			break
		}
		switch a {
		case "--help", "-help", "-h", "--h":
			return showHelp(app, args[0], name)
		}
	}
	return 0, false
}

// showHelp prints the help of the program, or of the command named, and
// returns exit code 0.
func showHelp(app *cli.App, prog string, cmd ...string) (int, bool) {
	if err := app.Run(append(append([]string{prog}, cmd...), "--help")); err != nil {
		fmt.Fprintln(app.ErrWriter, userMessage(err))
		return 1, true
	}
	return 0, true
}

// unknownCommand says that name is no command, suggests the nearest ones and
// lists them all; it returns exit code 1.
func unknownCommand(app *cli.App, name string, stderr io.Writer) int {
	var all []string
	for _, c := range app.Commands {
		if !c.Hidden {
			all = append(all, c.Name)
		}
	}
	msg := fmt.Sprintf("bandwright: unknown command %q", name)
	if s := suggest(name, app.Commands); len(s) > 0 {
		msg += "; did you mean " + strings.Join(s, " or ") + "?"
	}
	fmt.Fprintf(stderr, "%s (commands: %s; see bandwright help)\n", msg, strings.Join(all, ", "))
	return failure.BadInput.ExitCode()
}

func newApp() *cli.App {
	return &cli.App{
		Name:    "bandwright",
		Usage:   "from picked peaks of a diatomic spectrum to constants, partition functions and thermodynamic tables",
		Version: pipelines.Version,
		Description: "Exit codes: 0 success; 1 bad input or usage (the message names the file, row and field); " +
			"2 a fit or computation that cannot be done honestly; 3 a batch in which some files failed.",
		HideHelpCommand: true,
		Commands:        withCommandErrors(commands()),
		OnUsageError: func(c *cli.Context, err error, isSub bool) error {
			return usageError{failure.Errorf(failure.BadInput, "usage: %v (see bandwright --help)", err)}
		},
	}
}

// flagsFirst moves a subcommand's flags before its positional arguments, so
// that `bandwright fit lines.csv --model term-values` works as the README writes it
// (the command-line library stops reading flags at the first argument).
// Everything after "--" stays positional.
func flagsFirst(app *cli.App, args []string) []string {
	if len(args) < 3 {
		return args
	}
	var cmd *cli.Command
	for _, c := range app.Commands {
		if c.HasName(args[1]) {
			cmd = c
		}
	}
	if cmd == nil {
		return args
	}
	noValue := map[string]bool{"help": true, "h": true}
	takes := map[string]bool{}
	for _, fl := range cmd.Flags {
		_, isBool := fl.(*cli.BoolFlag)
		for _, n := range fl.Names() {
			if isBool {
				noValue[n] = true
			} else {
				takes[n] = true
			}
		}
	}
	var flags, pos []string
	rest := args[2:]
	for i := 0; i < len(rest); i++ {
		a := rest[i]
		if a == "--" {
			pos = append(pos, rest[i+1:]...)
			break
		}
		if len(a) > 1 && a[0] == '-' {
			name := strings.TrimLeft(a, "-")
			flags = append(flags, a)
			if !strings.Contains(name, "=") && takes[name] && i+1 < len(rest) {
				flags = append(flags, rest[i+1])
				i++
			}
			continue
		}
		pos = append(pos, a)
	}
	out := append([]string{args[0], args[1]}, flags...)
	if len(pos) > 0 {
		out = append(out, "--")
		out = append(out, pos...)
	}
	return out
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

// usageExit refuses the command line as given (exit code 1).
func usageExit(format string, a ...any) error {
	return usageError{failure.Errorf(failure.BadInput, format, a...)}
}
