package main

// bandwright never opens a network connection. Two checks back that promise:
// a static one over the packages linked into the binary, and, where strace is
// installed, a trace of the network system calls of the whole demo and a
// nightly run.

import (
	"bufio"
	"bytes"
	"go/ast"
	"go/parser"
	"go/token"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// networkPkgs are the standard-library packages that open connections.
var networkPkgs = map[string]bool{
	"net": true, "net/http": true, "crypto/tls": true, "net/rpc": true, "net/smtp": true,
	"net/http/httputil": true, "net/http/cgi": true, "net/http/fcgi": true, "log/syslog": true,
}

// allowedNetworkImporters are the third-party packages in the binary that
// import a network package, and why that is harmless: bandwright never calls
// the code that uses it (checked below).
var allowedNetworkImporters = map[string]string{
	// progressbar offers an optional HTTP server that reports progress
	// (StartHTTPServer); nightly draws its bar on a terminal only.
	"github.com/schollz/progressbar/v3": "StartHTTPServer",
}

func goTool(t *testing.T) string {
	t.Helper()
	if p, err := exec.LookPath("go"); err == nil {
		return p
	}
	// Not on the path: the go command that runs the tests exports GOROOT.
	p := filepath.Join(os.Getenv("GOROOT"), "bin", "go")
	if _, err := os.Stat(p); os.Getenv("GOROOT") == "" || err != nil {
		t.Skip("no go command to list the packages of the binary")
	}
	return p
}

// TestNoNetworkImports lists every package linked into bandwright with its
// imports (go list -deps): no bandwright package imports a network package,
// and the only other packages that do are the standard library's own and the
// allowed ones, whose network functions bandwright never calls.
func TestNoNetworkImports(t *testing.T) {
	cmd := exec.Command(goTool(t), "list", "-deps", "-f", "{{.ImportPath}}|{{.Standard}}|{{join .Imports \",\"}}", ".")
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	seenAllowed := map[string]bool{}
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	n := 0
	for sc.Scan() {
		f := strings.SplitN(sc.Text(), "|", 3)
		if len(f) != 3 {
			t.Fatalf("go list line %q", sc.Text())
		}
		n++
		pkg, std := f[0], f[1] == "true"
		for _, imp := range strings.Split(f[2], ",") {
			if !networkPkgs[imp] {
				continue
			}
			switch {
			case strings.HasPrefix(pkg, "bandwright"):
				t.Errorf("%s imports %s", pkg, imp)
			case std || strings.HasPrefix(pkg, "vendor/"):
			case allowedNetworkImporters[pkg] != "":
				seenAllowed[pkg] = true
			default:
				t.Errorf("%s (not in the allowed list) imports %s", pkg, imp)
			}
		}
	}
	if n < 50 {
		t.Fatalf("go list listed only %d packages", n)
	}

	// The allowed packages' network entry points are never called: scan every
	// non-test Go file of the module for them.
	root := filepath.Join("..", "..")
	fset := token.NewFileSet()
	err = filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (d.Name() == ".git" || d.Name() == "testdata") {
			return filepath.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(p, ".go") || strings.HasSuffix(p, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(fset, p, nil, parser.SkipObjectResolution)
		if err != nil {
			return err
		}
		for _, imp := range f.Imports {
			path := strings.Trim(imp.Path.Value, `"`)
			if networkPkgs[path] {
				t.Errorf("%s imports %s", p, path)
			}
		}
		ast.Inspect(f, func(n ast.Node) bool {
			if sel, ok := n.(*ast.SelectorExpr); ok {
				for _, fn := range allowedNetworkImporters {
					if sel.Sel.Name == fn {
						t.Errorf("%s: calls %s", fset.Position(sel.Pos()), fn)
					}
				}
			}
			return true
		})
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	for pkg := range allowedNetworkImporters {
		if !seenAllowed[pkg] {
			t.Logf("%s no longer imports a network package; it can leave the allowed list", pkg)
		}
	}
}

// TestNoNetworkSyscalls runs the built binary under strace through the demo
// (assign, fit, thermo, report) and a nightly run with its progress output,
// and fails on any socket, connect, bind, sendto or sendmsg call. Skipped where
// strace is not installed (or cannot trace here).
func TestNoNetworkSyscalls(t *testing.T) {
	strace, err := exec.LookPath("strace")
	if err != nil {
		t.Skip("strace is not installed; TestNoNetworkImports still checks the packages")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "bandwright")
	if out, err := exec.Command(goTool(t), "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	inbox := filepath.Join(dir, "inbox")
	for i, j := range []int{15, 18} {
		writeFile(t, filepath.Join(inbox, "s"+string(rune('a'+i))+".csv"), []byte(coLineList([][2]int{{1, 0}, {2, 1}}, j)))
	}
	pipe := filepath.Join(dir, "pipeline.toml")
	writeFile(t, pipe, []byte(basePipeline))
	for _, args := range [][]string{
		{"demo", "--out", filepath.Join(dir, "demo")},
		{"nightly", "--inbox", inbox, "--archive", filepath.Join(dir, "archive"), "--pipeline", pipe},
	} {
		trace := filepath.Join(dir, args[0]+".strace")
		cmd := exec.Command(strace, append([]string{"-f", "-qq", "-e", "trace=socket,connect,bind,sendto,sendmsg", "-e", "signal=none", "-o", trace, bin}, args...)...)
		out, err := cmd.CombinedOutput()
		if err != nil {
			if strings.Contains(string(out), "ptrace") || strings.Contains(string(out), "Operation not permitted") {
				t.Skipf("strace cannot trace here: %s", out)
			}
			t.Fatalf("%s: %v\n%s", args[0], err, out)
		}
		b, err := os.ReadFile(trace)
		if err != nil {
			t.Fatal(err)
		}
		if calls := networkCalls(string(b)); len(calls) > 0 {
			t.Errorf("bandwright %s made network system calls:\n%s", args[0], strings.Join(calls, "\n"))
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "demo", "results", "report.html")); err != nil {
		t.Errorf("the traced demo did not run: %v", err)
	}
}

// detachedLine is a line strace writes for a process it let go in the middle
// of a system call it had not decoded (at the exit of a process of -f):
// "[PID ]???( <detached ...>". Such a call is not one of those traced here
// (strace names every call it traces); any other line is.
var detachedLine = regexp.MustCompile(`^(\d+ +)?\?\?\?\( *<detached \.\.\.>$`)

// networkCalls returns the lines of an strace output (-e trace=socket,…) that
// record a call: every non-empty line except those of detached processes.
func networkCalls(trace string) []string {
	var out []string
	for _, l := range strings.Split(trace, "\n") {
		if l = strings.TrimSpace(l); l != "" && !detachedLine.MatchString(l) {
			out = append(out, l)
		}
	}
	return out
}

func TestNetworkCallsParsing(t *testing.T) {
	trace := "123 ???( <detached ...>\n???( <detached ...>\n\n4567 socket(AF_INET, SOCK_STREAM, 0) = 3\nconnect(3, {sa_family=AF_INET}, 16) = 0\n99 ???(AF_INET <detached ...>\n"
	got := networkCalls(trace)
	if len(got) != 3 || !strings.HasPrefix(got[0], "4567 socket(") || !strings.HasPrefix(got[1], "connect(") || !strings.Contains(got[2], "AF_INET") {
		t.Errorf("calls %q", got)
	}
}
