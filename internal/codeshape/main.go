// Command codeshape checks the shape of bandwright's Go code: it lists every
// function whose cyclomatic complexity or length exceeds the limits of the
// project's code-shape rule, and exits with status 1 when there is one.
//
//	go run ./internal/codeshape [-complexity 30] [-lines 120] [DIR]
//	go run ./internal/codeshape -stats [DIR]
//
// Cyclomatic complexity is counted as gocyclo counts it: 1, plus one for each
// if, for, range, non-default case of a switch or select, && and ||; function
// literals count toward the function that holds them. Length is the number of
// lines from the func keyword to the closing brace. Test files (_test.go) and
// folders starting with "." are not checked: table-driven tests are long by
// design. -stats prints, per package folder, the exported identifiers (top-level
// names and methods) and the lines of its non-test files.
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
)

func main() {
	complexity := flag.Int("complexity", 30, "largest cyclomatic complexity allowed")
	lines := flag.Int("lines", 120, "largest function length allowed, in lines")
	stats := flag.Bool("stats", false, "print exported identifiers and lines per package instead of checking")
	flag.Parse()
	root := "."
	if flag.NArg() > 0 {
		root = flag.Arg(0)
	}
	os.Exit(run(os.Stdout, os.Stderr, root, *complexity, *lines, *stats))
}

// run checks the tree at root and returns the exit status: 0 when every
// function is within the limits, 1 when some are not, 2 when the code cannot
// be read.
func run(stdout, stderr io.Writer, root string, maxComplexity, maxLines int, stats bool) int {
	files, err := parseTree(root)
	if err != nil {
		fmt.Fprintln(stderr, "codeshape:", err)
		return 2
	}
	if stats {
		for _, p := range packageStats(files) {
			fmt.Fprintf(stdout, "%-28s exported %4d  lines %6d\n", p.Dir, p.Exported, p.Lines)
		}
		return 0
	}
	bad := offenders(files, maxComplexity, maxLines)
	for _, o := range bad {
		fmt.Fprintln(stdout, o)
	}
	if len(bad) > 0 {
		fmt.Fprintf(stderr, "codeshape: %d functions above cyclomatic complexity %d or %d lines; split them along their steps\n", len(bad), maxComplexity, maxLines)
		return 1
	}
	return 0
}
