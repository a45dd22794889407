package main

import (
	"os"
	"regexp"
	"slices"
	"sort"
	"strings"
	"testing"

	"github.com/urfave/cli/v2"
)

// readmeSections returns the README's section of each command: the text from
// its heading "### bandwright CMD" to the next "### " or "## " heading.
func readmeSections(t *testing.T) map[string]string {
	t.Helper()
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]string{}
	var name string
	var cur strings.Builder
	flush := func() {
		if name != "" {
			out[name] = cur.String()
		}
		cur.Reset()
	}
	for _, l := range strings.Split(string(b), "\n") {
		switch {
		case strings.HasPrefix(l, "### bandwright "):
			flush()
			name = strings.TrimSpace(strings.TrimPrefix(l, "### bandwright "))
			continue
		case strings.HasPrefix(l, "### "), strings.HasPrefix(l, "## "):
			flush()
			name = ""
		}
		if name != "" {
			cur.WriteString(l + "\n")
		}
	}
	flush()
	return out
}

// flagToken matches an option as the README writes it: --name.
var flagToken = regexp.MustCompile(`(^|[^\w-])--([a-z][a-z0-9-]*)`)

// commandFlags returns the names of the options of c as its help lists them
// (without --help).
func commandFlags(c *cli.Command) []string {
	var out []string
	for _, f := range c.Flags {
		if vf, ok := f.(cli.VisibleFlag); ok && !vf.IsVisible() {
			continue
		}
		out = append(out, f.Names()[0])
	}
	sort.Strings(out)
	return out
}

// TestHelpAndReadmeAgree: every option of every command (read from the
// command-line application itself) appears in the README's section of that
// command, every option that section writes is one the command has, and a
// number the usage block gives an option (`--reject 3`) is its default.
func TestHelpAndReadmeAgree(t *testing.T) {
	sections := readmeSections(t)
	app := newApp()
	for _, c := range app.Commands {
		if c.Hidden {
			continue // not for people (nightly-worker)
		}
		sec, ok := sections[c.Name]
		if !ok {
			t.Errorf("README has no section \"### bandwright %s\"", c.Name)
			continue
		}
		flags := commandFlags(c)
		written := map[string]bool{}
		for _, m := range flagToken.FindAllStringSubmatch(sec, -1) {
			written[m[2]] = true
		}
		for _, f := range flags {
			if !written[f] {
				t.Errorf("bandwright %s --%s is not in the README's section of %s", c.Name, f, c.Name)
			}
		}
		for f := range written {
			if f != "help" && !slices.Contains(flags, f) {
				t.Errorf("the README's section of %s writes --%s, which bandwright %s does not take (it takes %s)", c.Name, f, c.Name, strings.Join(flags, ", "))
			}
		}
		checkUsageDefaults(t, c, sec)
	}
	for name := range sections {
		if app.Command(name) == nil {
			t.Errorf("README section \"### bandwright %s\" names no command", name)
		}
	}
}

// usageNumber matches an option followed by a number in a usage block.
var usageNumber = regexp.MustCompile(`--([a-z][a-z0-9-]*)[ =]([0-9][0-9.e+:-]*[0-9])`)

// checkUsageDefaults checks the numbers the first code block of a section
// (the usage) gives options against their defaults.
func checkUsageDefaults(t *testing.T, c *cli.Command, sec string) {
	t.Helper()
	start := strings.Index(sec, "```")
	if start < 0 {
		return
	}
	end := strings.Index(sec[start+3:], "```")
	if end < 0 {
		return
	}
	usage := sec[start : start+3+end]
	for _, m := range usageNumber.FindAllStringSubmatch(usage, -1) {
		for _, f := range c.Flags {
			if f.Names()[0] != m[1] {
				continue
			}
			def := ""
			if df, ok := f.(cli.DocGenerationFlag); ok {
				def = strings.Trim(df.GetDefaultText(), `"`)
			}
			if def != "" && def != m[2] {
				t.Errorf("README usage of %s gives --%s %s; its default is %s", c.Name, m[1], m[2], def)
			}
		}
	}
}

// TestHelpForms: help in every form prints the help and exits 0; an unknown
// command exits 1 and names the nearest commands.
func TestHelpForms(t *testing.T) {
	for _, args := range [][]string{
		{}, {"help"}, {"--help"}, {"-h"}, {"help", "fit"}, {"fit", "--help"}, {"fit", "lines.csv", "--help"},
		{"fit", "-h", "lines.csv"}, {"predict", "c.json", "--bands", "1-0", "--help"}, {"help", "help"},
	} {
		code, stdout, stderr := runCLI(args...)
		if code != 0 || !strings.Contains(stdout, "USAGE:") || stderr != "" {
			t.Errorf("bandwright %s: exit %d, stderr %q, stdout %.80q", strings.Join(args, " "), code, stderr, stdout)
		}
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"fti", "lines.csv"}, `bandwright: unknown command "fti"; did you mean fit?`},
		{[]string{"help", "thermos"}, `bandwright: unknown command "thermos"; did you mean thermo?`},
		{[]string{"nonsense"}, `bandwright: unknown command "nonsense" (commands: assign, fit, predict, thermo, run, report, nightly, demo; see bandwright help)`},
	} {
		code, stdout, stderr := runCLI(tc.args...)
		if code != 1 || !strings.HasPrefix(stderr, tc.want) || stdout != "" {
			t.Errorf("bandwright %s: exit %d, stderr %q; want exit 1 and %q", strings.Join(tc.args, " "), code, stderr, tc.want)
		}
	}
}
