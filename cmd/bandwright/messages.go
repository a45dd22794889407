package main

import (
	"bandwright/internal/failure"
	"errors"
	"fmt"
	"os"
	"sort"
	"strings"

	"github.com/urfave/cli/v2"
)

// How the command line words what went wrong: every message begins with the
// command and the file it concerns ("bandwright fit: lines.csv:12: unc: must
// be > 0"), never with the name of the package that found the problem.

// internalPackages are the names of bandwright's packages, with which the
// packages begin their error messages for developers; the command line drops
// them (TestInternalPackagesListed keeps the list complete).
var internalPackages = []string{
	"assign", "browser", "codeshape", "constants", "csvcell", "failure", "fit", "linelist", "lsq", "mdtext", "model",
	"nightly", "outdir", "parallel", "pipelines", "report", "species", "states", "svgfig", "synth", "textcheck", "typeset",
	"thermo", "units",
}

// commandError is the error of a command's action: the command, the input
// files its message is about, and the cause.
type commandError struct {
	cmd    string
	inputs []string
	err    error
}

func (e *commandError) Error() string { return e.err.Error() }
func (e *commandError) Unwrap() error { return e.err }

// usageError is a command line refused as given (exit code 1); its message
// is about the options, not a file.
type usageError struct{ error }

// withCommandErrors makes every action of cmds return a *commandError naming
// the command and its positional arguments (the input files).
func withCommandErrors(cmds []*cli.Command) []*cli.Command {
	for _, c := range cmds {
		act := c.Action
		if act == nil {
			continue
		}
		c.Action = func(ctx *cli.Context) error {
			if err := act(ctx); err != nil {
				return &commandError{cmd: ctx.Command.Name, inputs: ctx.Args().Slice(), err: err}
			}
			return nil
		}
	}
	return cmds
}

// userMessage words err for the person at the terminal: "bandwright CMD: "
// then, unless the message's first line already names one of the command's
// input files, is about the options or states no kind (the errors of reading
// and writing files, which name their path), the input files; every line without
// the package names that begin it (internalPackages) or the command's own
// name.
func userMessage(err error) string {
	var ce *commandError
	if !errors.As(err, &ce) {
		return "bandwright: " + stripPrefixes(err.Error(), "")
	}
	msg := stripPrefixes(ce.err.Error(), ce.cmd)
	var ue usageError
	// Errors that state no kind (a file or folder that cannot be read or
	// written) name their own path: the inputs would mislead there.
	named := failure.KindOf(ce.err) == failure.Unclassified || errors.As(ce.err, &ue)
	if !named && len(ce.inputs) > 0 && !startsWithInput(msg, ce.inputs) && !strings.HasPrefix(msg, "-") {
		msg = inputsLabel(ce.inputs) + ": " + msg
	}
	return "bandwright " + ce.cmd + ": " + msg
}

// stripPrefixes removes, from the start of every line of msg, the internal
// package names and the command's name followed by ": ", as often as they
// repeat ("pipelines: fit: x" is "x").
func stripPrefixes(msg, cmd string) string {
	lines := strings.Split(msg, "\n")
	for i, l := range lines {
		for {
			trimmed := l
			for _, p := range append(internalPackages, cmd) {
				if p != "" && strings.HasPrefix(trimmed, p+": ") {
					trimmed = trimmed[len(p)+2:]
					break
				}
			}
			if trimmed == l {
				break
			}
			l = trimmed
		}
		lines[i] = l
	}
	return strings.Join(lines, "\n")
}

// startsWithInput reports whether the first line of msg names one of the
// input files ("lines.csv:12: …", "open lines.csv: …") or begins with the
// name of another file ("start.toml:3: …", a file the options named).
func startsWithInput(msg string, inputs []string) bool {
	first, _, _ := strings.Cut(msg, "\n")
	for _, in := range inputs {
		if in != "" && strings.Contains(first, in) {
			return true
		}
	}
	if name, _, ok := strings.Cut(first, ":"); ok && name != "" {
		if _, err := os.Stat(name); err == nil {
			return true
		}
	}
	return false
}

// inputsLabel names the input files: all of them up to three, else the first
// and a count.
func inputsLabel(inputs []string) string {
	if len(inputs) <= 3 {
		return strings.Join(inputs, ", ")
	}
	return fmt.Sprintf("%s and %d more files", inputs[0], len(inputs)-1)
}

// suggest returns the command names closest to a mistyped one: those within
// an edit distance of 2, or that begin with it or it with them, best first.
func suggest(name string, cmds []*cli.Command) []string {
	type cand struct {
		name string
		d    int
	}
	var cs []cand
	for _, c := range cmds {
		for _, n := range c.Names() {
			d := editDistance(strings.ToLower(name), n)
			if d <= 2 || (len(name) >= 2 && (strings.HasPrefix(n, strings.ToLower(name)) || strings.HasPrefix(strings.ToLower(name), n))) {
				cs = append(cs, cand{n, d})
			}
		}
	}
	sort.SliceStable(cs, func(i, j int) bool { return cs[i].d < cs[j].d })
	var out []string
	for _, c := range cs {
		out = append(out, c.name)
	}
	return out
}

// editDistance is the Levenshtein distance between a and b (insertions,
// deletions and substitutions of one byte each cost 1).
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
