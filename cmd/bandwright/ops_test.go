package main

// Operational faults and hostile content, at the command line: writes that
// cannot be done, a full disk, a stop by signal during nightly, inputs that
// must not be overwritten, paths that point outside the output folder, text
// that reaches reports and spreadsheets.

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestMain lets a test run the command line in a child process (to send it a
// signal): with BW_CLI_CHILD=1 the test binary is bandwright, its arguments
// taken as JSON from BW_CLI_ARGS. Started as a worker process of nightly (its
// first argument nightly-worker: nightly runs its program as its workers, and
// in these tests the program is this test binary), it is bandwright too.
func TestMain(m *testing.M) {
	if len(os.Args) > 1 && os.Args[1] == "nightly-worker" {
		os.Exit(run(append([]string{"bandwright"}, os.Args[1:]...), os.Stdout, os.Stderr))
	}
	if os.Getenv("BW_CLI_CHILD") == "1" {
		var args []string
		if err := json.Unmarshal([]byte(os.Getenv("BW_CLI_ARGS")), &args); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(99)
		}
		os.Exit(run(append([]string{"bandwright"}, args...), os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

// TestOutputCannotBeWritten: an --out that cannot be made (its parent is a
// regular file, or it lies in /proc) is exit 1 with a message naming the path,
// and nothing is written anywhere. (The tests run as root, for whom a
// read-only permission does not stop a write; a file in the way and /proc
// refuse it for anyone.)
func TestOutputCannotBeWritten(t *testing.T) {
	dir := t.TempDir()
	lines := filepath.Join(dir, "lines.csv")
	writeFile(t, lines, []byte(baseLines))
	blocker := filepath.Join(dir, "results")
	writeFile(t, blocker, []byte("a file where a folder is expected\n"))
	before := snapshot(t, dir)
	for _, out := range []string{blocker, filepath.Join(blocker, "fit"), filepath.Join(blocker, "a", "b"), "/proc/bandwright-test/fit"} {
		code, _, stderr := runCLI("fit", lines, "--out", out)
		// The message begins with the command and names the folder (not the
		// input, nor the package that found it).
		if code != 1 || !strings.HasPrefix(stderr, "bandwright fit: ") || strings.Contains(stderr, "outdir") || strings.Contains(stderr, "lines.csv") {
			t.Errorf("--out %s: exit %d, %s", out, code, stderr)
		}
		if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
			t.Errorf("--out %s changed the folder: %v", out, d)
		}
	}
	code, _, stderr := runCLI("predict", filepath.Join(dir, "nothing.json"), "--out", filepath.Join(blocker, "p.csv"))
	if code != 1 || !strings.Contains(stderr, "nothing.json") {
		t.Errorf("predict: exit %d, %s", code, stderr)
	}
	if _, err := os.Stat("/proc/bandwright-test"); err == nil {
		t.Error("wrote into /proc")
	}
}

// TestDiskFull: the outputs of fit (a residuals.csv of a few hundred kB) do not
// fit on a 64 kB file system. The run is exit 1 naming the file and "no space
// left on device", and the file system is left as it was: no partial folder, no
// temporary files. Needs a tmpfs mount (root, as in CI here); skipped where
// mounting is not allowed.
func TestDiskFull(t *testing.T) {
	mnt := t.TempDir()
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", 0, "size=64k"); err != nil {
		t.Skipf("cannot mount a small tmpfs here (%v); the full-disk path is covered by pipelines/outdir TestDiskFullLeavesNothing", err)
	}
	t.Cleanup(func() { syscall.Unmount(mnt, 0) })
	dir := t.TempDir()
	lines := filepath.Join(dir, "lines.csv")
	// Long comments make residuals.csv larger than the file system.
	var b strings.Builder
	for i, l := range strings.Split(strings.TrimSuffix(baseLines, "\n"), "\n") {
		if i > 0 {
			l += strings.Repeat(" padding", 500)
		}
		b.WriteString(l + "\n")
	}
	writeFile(t, lines, []byte(b.String()))
	before := snapshot(t, dir)
	code, _, stderr := runCLI("fit", lines, "--out", filepath.Join(mnt, "fit"))
	if code != 1 || !strings.Contains(stderr, "no space left on device") || !strings.Contains(stderr, "residuals.csv") {
		t.Errorf("exit %d: %s", code, stderr)
	}
	if es, _ := os.ReadDir(mnt); len(es) != 0 {
		t.Errorf("left on the full disk: %v", es)
	}
	if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
		t.Errorf("input folder changed: %v", d)
	}
	// The same run with room to spare succeeds (the failure was the disk).
	if code, _, stderr := runCLI("fit", lines, "--out", filepath.Join(dir, "fit")); code != 0 {
		t.Errorf("with room: exit %d: %s", code, stderr)
	}
}

// TestInputsNeverOverwritten: an output folder that holds an input under an
// output's name is refused before anything is replaced.
func TestInputsNeverOverwritten(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	lines := filepath.Join(out, "residuals.csv") // an input named like an output
	writeFile(t, lines, []byte(baseLines))
	before := snapshot(t, dir)
	code, _, stderr := runCLI("fit", lines, "--out", out)
	if code != 1 || !strings.Contains(stderr, "refusing to overwrite the input file") {
		t.Errorf("exit %d: %s", code, stderr)
	}
	if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
		t.Errorf("changed: %v", d)
	}
	// A chain whose pipeline names an electronic-states file that sits in --out
	// under the name of an output.
	lines2 := filepath.Join(dir, "l.csv")
	writeFile(t, lines2, []byte(baseLines))
	statesFile := filepath.Join(dir, "out2", "thermo.csv")
	writeFile(t, statesFile, []byte(coStates))
	pipe := filepath.Join(dir, "p.toml")
	writeFile(t, pipe, []byte("input = \"lines\"\nstates = \"out2/thermo.csv\"\n[fit]\nmodel = \"dunham\"\n[thermo]\ntemperatures = [298.15]\n"))
	before = snapshot(t, dir)
	code, _, stderr = runCLI("run", lines2, "--pipeline", pipe, "--out", filepath.Join(dir, "out2"))
	if code != 1 || !strings.Contains(stderr, "refusing to overwrite the input file") || !strings.Contains(stderr, "thermo.csv") {
		t.Errorf("chain over its electronic-states file: exit %d: %s", code, stderr)
	}
	if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
		t.Errorf("changed: %v", d)
	}
	rec := filepath.Join(dir, "constants.json")
	writeFile(t, rec, record(t))
	before = snapshot(t, dir)
	if code, _, stderr := runCLI("predict", rec, "--out", rec); code != 1 || !strings.Contains(stderr, "would overwrite the constants record") {
		t.Errorf("predict over its input: exit %d: %s", code, stderr)
	}
	if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
		t.Errorf("changed: %v", d)
	}
}

// ledgerRows reads ARCHIVE/ledger.csv (nil when absent).
func ledgerRows(t *testing.T, archive string) [][]string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(archive, "ledger.csv"))
	if os.IsNotExist(err) {
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(bytes.NewReader(b)).ReadAll()
	if err != nil {
		t.Fatalf("ledger: %v", err)
	}
	return rows[1:]
}

// checkLedger: every row is ok, each content once, and the ok rows are exactly
// the results folders.
func checkLedger(t *testing.T, archive string) map[string]bool {
	t.Helper()
	seen := map[string]bool{}
	outs := map[string]bool{}
	for _, r := range ledgerRows(t, archive) {
		if r[2] != "ok" {
			t.Errorf("ledger row %v", r)
		}
		if seen[r[1]] {
			t.Errorf("content %s recorded twice", r[1])
		}
		seen[r[1]] = true
		outs[r[5]] = true
	}
	es, _ := os.ReadDir(filepath.Join(archive, "results"))
	for _, e := range es {
		if !outs["results/"+e.Name()] {
			t.Errorf("results folder %s has no ledger row", e.Name())
		}
	}
	if len(es) != len(outs) {
		t.Errorf("%d results folders, %d ok rows", len(es), len(outs))
	}
	return seen
}

// TestNightlyStopsGracefully sends SIGINT, and in a second run SIGTERM, to
// `bandwright nightly` while it works through an inbox: the run stops after
// the file in progress with exit 0, every finished file has exactly one ok row
// and a complete results folder, and the next run does the rest — each file
// once.
func TestNightlyStopsGracefully(t *testing.T) {
	for _, sig := range []syscall.Signal{syscall.SIGINT, syscall.SIGTERM} {
		t.Run(sig.String(), func(t *testing.T) {
			dir := t.TempDir()
			inbox, archive := filepath.Join(dir, "inbox"), filepath.Join(dir, "archive")
			const n = 24
			for i := 0; i < n; i++ {
				writeFile(t, filepath.Join(inbox, fmt.Sprintf("session-%02d.csv", i)), []byte(coLineList([][2]int{{1, 0}, {2, 1}}, 12+i)))
			}
			pipe := filepath.Join(dir, "pipeline.toml")
			writeFile(t, pipe, []byte(basePipeline))
			inboxBefore := snapshot(t, inbox)
			args, _ := json.Marshal([]string{"nightly", "--inbox", inbox, "--archive", archive, "--pipeline", pipe, "--workers", "1"})
			cmd := exec.Command(os.Args[0], "-test.run=^$")
			cmd.Env = append(os.Environ(), "BW_CLI_CHILD=1", "BW_CLI_ARGS="+string(args))
			var stdout, stderr bytes.Buffer
			cmd.Stdout, cmd.Stderr = &stdout, &stderr
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			deadline := time.Now().Add(60 * time.Second)
			for len(ledgerRows(t, archive)) == 0 {
				if time.Now().After(deadline) {
					cmd.Process.Kill()
					t.Fatalf("no file finished within a minute: %s", stderr.String())
				}
				time.Sleep(10 * time.Millisecond)
			}
			cmd.Process.Signal(sig)
			err := cmd.Wait()
			if err != nil {
				t.Fatalf("child: %v\n%s", err, stderr.String())
			}
			done := checkLedger(t, archive)
			if len(done) == n {
				t.Skipf("all %d files finished before the signal arrived; nothing to test on this machine", n)
			}
			if !strings.Contains(stdout.String(), "stopped by a signal") || !strings.Contains(stderr.String(), "finishing the files in progress") {
				t.Errorf("stdout %q\nstderr %s", stdout.String(), stderr.String())
			}
			if len(ledgerRows(t, archive)) >= n {
				t.Fatalf("no file left for the next run")
			}
			// No half-built results left in the work area.
			if es, _ := os.ReadDir(filepath.Join(archive, ".work")); len(es) > 0 {
				for _, e := range es {
					if e.Name() != "claims" { // the lock files of the claims stay
						t.Errorf("left in .work: %s", e.Name())
					}
				}
			}
			code, _, errText := runCLI("nightly", "--inbox", inbox, "--archive", archive, "--pipeline", pipe, "--workers", "2")
			if code != 0 {
				t.Fatalf("next run: exit %d: %s", code, errText)
			}
			if done := checkLedger(t, archive); len(done) != n {
				t.Errorf("%d of %d files done after the second run", len(done), n)
			}
			if d := diffSnapshots(inboxBefore, snapshot(t, inbox)); len(d) > 0 {
				t.Errorf("the inbox was written: %v", d)
			}
		})
	}
}

// TestHostileText: text a user controls — a pipeline name, comments and
// pass-through cells of a line list — reaches the HTML and Markdown reports
// only escaped, and CSV outputs only with formula-starting cells neutralised
// (numbers untouched). Paths in the pipeline file that climb out of its folder
// or are absolute are only read: nothing is written outside --out.
func TestHostileText(t *testing.T) {
	root := t.TempDir()
	lab := filepath.Join(root, "lab", "pipelines")
	// An electronic-states file outside the pipeline's folder, reached by ../
	// and by an absolute path.
	statesFile := filepath.Join(root, "common", "co-states.toml")
	writeFile(t, statesFile, []byte(coStates))
	evil := `<script>alert(1)</script> **bold** [x](javascript:alert(1)) | a | b | ../../../../etc/passwd`
	pipe := filepath.Join(lab, "p.toml")
	writeFile(t, pipe, []byte(fmt.Sprintf(`name = %q
input = "lines"
states = "../../common/co-states.toml"
[fit]
model = "dunham"
[thermo]
temperatures = [298.15, 1000.0]
[report]
formats = ["html", "md"]
`, evil)))
	// A line list whose comment and pass-through cells carry formulas and markup.
	var b strings.Builder
	for i, l := range strings.Split(strings.TrimSuffix(baseLines, "\n"), "\n") {
		switch {
		case i == 0:
			b.WriteString(l + ",=cmd|' /C calc'!A0\n")
		case i == 1:
			f := strings.Split(l, ",")
			f[8] = `"=HYPERLINK(""http://example.invalid"",""x"")"`
			b.WriteString(strings.Join(f, ",") + ",@SUM(A1:A9)\n")
		case i == 2:
			f := strings.Split(l, ",")
			f[8] = "<img src=x onerror=alert(1)>"
			b.WriteString(strings.Join(f, ",") + ",+1+2\n")
		default:
			b.WriteString(l + ",-0.5\n")
		}
	}
	lines := filepath.Join(root, "lab", "data", "lines.csv")
	writeFile(t, lines, []byte(b.String()))
	out := filepath.Join(root, "lab", "out")
	before := snapshot(t, root)
	code, _, stderr := runCLI("run", lines, "--pipeline", pipe, "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	// Nothing changed or appeared outside --out.
	after := snapshot(t, root)
	for _, d := range diffSnapshots(before, after) {
		if !strings.Contains(d, "lab/out") {
			t.Errorf("outside --out: %s", d)
		}
	}
	html := readFile(t, filepath.Join(out, "report.html"))
	for _, raw := range []string{"<script>alert", "<img src=x", "javascript:alert(1)\""} {
		if strings.Contains(html, raw) {
			t.Errorf("report.html holds %q unescaped", raw)
		}
	}
	if !strings.Contains(html, "&lt;script&gt;") {
		t.Errorf("report.html lacks the escaped name")
	}
	md := readFile(t, filepath.Join(out, "report.md"))
	for _, raw := range []string{"<script>", "<img src=x", "| a | b |"} {
		if strings.Contains(md, raw) {
			t.Errorf("report.md holds %q unescaped", raw)
		}
	}
	// A link needs "](" with the bracket not escaped.
	if regexp.MustCompile(`(^|[^\\])\]\(javascript`).MatchString(md) || !strings.Contains(md, `\[x\](javascript`) {
		t.Errorf("report.md: the link in the pipeline name is not escaped")
	}
	// residuals.csv: formula cells neutralised, numbers kept.
	rows, err := csv.NewReader(strings.NewReader(readFile(t, filepath.Join(out, "residuals.csv")))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var cells []string
	for _, r := range rows {
		cells = append(cells, r...)
	}
	all := "\x00" + strings.Join(cells, "\x00") + "\x00"
	for _, c := range []string{"=HYPERLINK", "=cmd|", "@SUM", "+1+2"} {
		if strings.Contains(all, "\x00"+c) {
			t.Errorf("residuals.csv has a cell starting %q", c)
		}
		if !strings.Contains(all, "\x00'"+c) {
			t.Errorf("residuals.csv lost the neutralised %q", c)
		}
	}
	if !strings.Contains(all, "\x00-0.5\x00") {
		t.Errorf("the number -0.5 was altered")
	}
	// The electronic-states file was read (its dissociation energy bounds the
	// sum), not written.
	if th := readFile(t, filepath.Join(out, "thermo.csv")); !strings.Contains(th, "dissociation energy D0 = 89460 cm-1") {
		t.Errorf("the electronic-states file outside the pipeline's folder was not used")
	}

	// An absolute path climbing out is as harmless, and a pipeline cannot name
	// where the outputs go: a second run with the absolute path of the
	// electronic-states file writes only into its own --out.
	abs := strings.Replace(readFile(t, pipe), `"../../common/co-states.toml"`, fmt.Sprintf("%q", statesFile), 1)
	writeFile(t, pipe, []byte(abs))
	before = snapshot(t, root)
	out2 := filepath.Join(root, "lab", "out2")
	if code, _, stderr := runCLI("run", lines, "--pipeline", pipe, "--out", out2); code != 0 {
		t.Fatalf("absolute electronic-states path: exit %d: %s", code, stderr)
	}
	for _, d := range diffSnapshots(before, snapshot(t, root)) {
		if !strings.Contains(d, "lab/out2") {
			t.Errorf("outside --out: %s", d)
		}
	}
}

// TestStatesConstantsOnlyRead: an electronic-states file whose state takes its
// constants from "../../x.json" reads that record and writes nothing next to it.
func TestStatesConstantsOnlyRead(t *testing.T) {
	root := t.TempDir()
	x := filepath.Join(root, "x.json")
	writeFile(t, x, record(t))
	statesFile := filepath.Join(root, "a", "b", "states.toml")
	writeFile(t, statesFile, []byte(coStates+"constants = \"../../x.json\"\n"))
	rec := filepath.Join(root, "a", "b", "constants.json")
	writeFile(t, rec, record(t))
	before := snapshot(t, root)
	out := filepath.Join(root, "a", "b", "out")
	code, _, stderr := runCLI("thermo", rec, "--states", statesFile, "--temperatures", "298.15", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, d := range diffSnapshots(before, snapshot(t, root)) {
		if !strings.Contains(d, "a/b/out") {
			t.Errorf("outside --out: %s", d)
		}
	}
	if j := readFile(t, filepath.Join(out, "thermo.json")); !strings.Contains(j, "x.json") {
		t.Errorf("thermo.json does not name the record it read")
	}
}

// TestNotRegularFiles: a device that never ends (/dev/zero), a named pipe
// without a writer, or a folder given where a file is expected is refused at
// once (exit 1, naming the path) instead of being read forever.
func TestNotRegularFiles(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.csv")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	good := filepath.Join(dir, "lines.csv")
	writeFile(t, good, []byte(baseLines))
	rec := filepath.Join(dir, "constants.json")
	writeFile(t, rec, record(t))
	start := filepath.Join(dir, "start.toml")
	writeFile(t, start, []byte(readFile(t, startFile)))
	out := filepath.Join(dir, "out")
	for _, bad := range []string{"/dev/zero", fifo, dir} {
		for _, args := range [][]string{
			{"fit", bad, "--out", out},
			{"assign", bad, "--start", start, "--bands", "0-0", "--spectrum", "rotation", "--out", out},
			{"assign", good, "--start", bad, "--bands", "0-0", "--out", out},
			{"thermo", bad, "--out", out},
			{"thermo", rec, "--states", bad, "--out", out},
			{"predict", bad, "--out", out + ".csv"},
			{"run", good, "--pipeline", bad, "--out", out},
		} {
			done := make(chan struct{})
			var code int
			var stderr string
			go func() {
				code, _, stderr = runCLI(args...)
				close(done)
			}()
			select {
			case <-done:
			case <-time.After(20 * time.Second):
				t.Fatalf("%v: still reading after 20 s", args)
			}
			if code != 1 || !strings.Contains(stderr, bad) {
				t.Errorf("%v: exit %d: %s", args, code, stderr)
			}
		}
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("output written")
	}
}
