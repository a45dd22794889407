package nightly_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/pipelines/nightly"
)

// fill writes n good line lists a0.csv … into the inbox and returns their
// content hashes.
func fill(t testing.TB, inbox string, n, lines int) map[string]bool {
	want := map[string]bool{}
	for i := range n {
		b := lineList(uint64(i+1), 1, lines)
		write(t, filepath.Join(inbox, fmt.Sprintf("a%d.csv", i)), b)
		want[shaOf(b)] = true
	}
	return want
}

func TestFirstRunThenNothing(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 4, 40)
	rep := run(t, e.opts(fitJob))
	if rep.Processed != 4 || rep.Succeeded != 4 || rep.Failed != 0 || rep.ExitCode() != 0 {
		t.Fatalf("first run: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)

	// The results folder of a0.csv: the fit's files and a manifest that
	// names the input's hash, the version and the pipeline hash.
	b, _ := os.ReadFile(filepath.Join(e.inbox, "a0.csv"))
	sha := shaOf(b)
	dir := filepath.Join(e.archive, "results", "a0-"+sha[:8])
	m, err := nightly.ReadManifest(dir)
	if err != nil {
		t.Fatal(err)
	}
	if m.Input.Name != "a0.csv" || m.Input.SHA256 != sha || m.Version != "test" || m.PipelineSHA256 != strings.Repeat("ab", 32) || m.Outcome != "ok" {
		t.Errorf("manifest: %+v", m)
	}
	names := map[string]bool{}
	for _, f := range m.Files {
		names[f.Name] = true
	}
	for _, n := range []string{"constants.json", "residuals.csv", "fit.md"} {
		if !names[n] {
			t.Errorf("manifest does not list %s: %+v", n, m.Files)
		}
	}
	if _, err := time.Parse(time.RFC3339, m.Started); err != nil {
		t.Errorf("started: %v", err)
	}
	// The fit inside the job is real: B_0 of 12C16O from the lines made with
	// the Huber & Herzberg (1979) Dunham constants (from memory) comes back as
	// B_0 = Y01 + Y11/2 within 5σ.
	f, err := os.Open(filepath.Join(dir, "constants.json"))
	if err != nil {
		t.Fatal(err)
	}
	rec, err := constants.Read(f, "constants.json")
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	if rec.Provenance.Inputs[0].Path != "a0.csv" || rec.Provenance.Inputs[0].SHA256 != sha {
		t.Errorf("record provenance %+v", rec.Provenance.Inputs)
	}
	var b0 *nightly.Constant
	for _, c := range m.Constants {
		if c.Name == "B_v0[12C16O]" && c.Species == "12C16O" {
			c := c
			b0 = &c
		}
	}
	if b0 == nil {
		t.Fatalf("no B_v0 among the manifest's constants %+v", m.Constants)
	}
	if want := y01 + y11/2; math.Abs(b0.Value-want) > 5*b0.Sigma || b0.Sigma <= 0 {
		t.Errorf("B_0 = %g ± %g, want %g", b0.Value, b0.Sigma, want)
	}

	// Second run: nothing to do.
	before := readLedger(t, e.archive)
	rep = run(t, e.opts(fitJob))
	if rep.Processed != 0 || rep.AlreadyDone != 4 || rep.ExitCode() != 0 {
		t.Fatalf("second run: %s", counts(rep))
	}
	if after := readLedger(t, e.archive); len(after) != len(before) {
		t.Errorf("second run added %d rows", len(after)-len(before))
	}
	checkArchive(t, e.archive, want)
}

func TestRenamedAndCopiedNotRedone(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 3, 30)
	run(t, e.opts(fitJob))
	if err := os.Rename(filepath.Join(e.inbox, "a0.csv"), filepath.Join(e.inbox, "renamed.csv")); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(filepath.Join(e.inbox, "a1.csv"))
	write(t, filepath.Join(e.inbox, "sub", "copy-of-a1.csv"), b)
	rep := run(t, e.opts(fitJob))
	if rep.Processed != 0 || rep.AlreadyDone != 3 || rep.Duplicates != 1 || rep.Found != 4 {
		t.Fatalf("rename/copy run: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)
}

func TestChangedFileIsNewVersion(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 2, 30)
	run(t, e.opts(fitJob))
	old, _ := os.ReadFile(filepath.Join(e.inbox, "a0.csv"))
	nb := lineList(1000, 1, 30)
	write(t, filepath.Join(e.inbox, "a0.csv"), nb)
	rep := run(t, e.opts(fitJob))
	if rep.Processed != 1 || rep.Succeeded != 1 {
		t.Fatalf("changed-file run: %s", counts(rep))
	}
	want[shaOf(nb)] = true
	checkArchive(t, e.archive, want)
	for _, sha := range []string{shaOf(old), shaOf(nb)} {
		if _, err := os.Stat(filepath.Join(e.archive, "results", "a0-"+sha[:8], "constants.json")); err != nil {
			t.Errorf("version %s: %v", sha[:8], err)
		}
	}
	n := 0
	for _, r := range readLedger(t, e.archive) {
		if r.Input == "a0.csv" && r.Status == "ok" {
			n++
		}
	}
	if n != 2 {
		t.Errorf("a0.csv has %d ok rows, want 2 (two versions)", n)
	}
}

func TestFailureDoesNotStopOthersAndRetry(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 3, 30)
	write(t, filepath.Join(e.inbox, "bad.csv"), badLineList())
	rep := run(t, e.opts(fitJob))
	if rep.Succeeded != 3 || rep.Failed != 1 || rep.ExitCode() != 3 {
		t.Fatalf("run with a bad file: %s", counts(rep))
	}
	checkArchive(t, e.archive, want)
	var failed []ledgerRow
	for _, r := range readLedger(t, e.archive) {
		if r.Status == "failed" {
			failed = append(failed, r)
		}
	}
	if len(failed) != 1 || failed[0].Input != "bad.csv" || failed[0].Output != "" {
		t.Fatalf("failed rows: %+v", failed)
	}
	// The message names the inbox file, the row and the field, not the
	// snapshot in the work area.
	msg := failed[0].Message
	if !strings.Contains(msg, "bad.csv:5") || !strings.Contains(msg, "unc") || strings.Contains(msg, ".work") || strings.Contains(msg, "\n") {
		t.Errorf("message %q", msg)
	}

	// Not retried unless it changes or --retry-failed.
	rep = run(t, e.opts(fitJob))
	if rep.Processed != 0 || rep.FailedBefore != 1 || rep.ExitCode() != 0 {
		t.Fatalf("second run: %s", counts(rep))
	}
	o := e.opts(fitJob)
	o.RetryFailed = true
	rep = run(t, o)
	if rep.Processed != 1 || rep.Failed != 1 || rep.ExitCode() != 3 {
		t.Fatalf("retry run: %s", counts(rep))
	}
	if n := len(readLedger(t, e.archive)); n != 5 {
		t.Errorf("ledger has %d rows, want 3 ok + 2 failed", n)
	}
	// Fixed: a new content, done.
	good := lineList(77, 1, 30)
	write(t, filepath.Join(e.inbox, "bad.csv"), good)
	rep = run(t, e.opts(fitJob))
	if rep.Processed != 1 || rep.Succeeded != 1 || rep.ExitCode() != 0 {
		t.Fatalf("fixed run: %s", counts(rep))
	}
	want[shaOf(good)] = true
	checkArchive(t, e.archive, want)
}

func TestPanickingJobIsAFailure(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 2, 20)
	write(t, filepath.Join(e.inbox, "boom.csv"), lineList(50, 1, 20))
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		if in.Name == "boom.csv" {
			panic("a bug in the job")
		}
		return fitJob(ctx, in, work)
	}
	rep := run(t, e.opts(job))
	if rep.Succeeded != 2 || rep.Failed != 1 {
		t.Fatalf("%s", counts(rep))
	}
	checkArchive(t, e.archive, want)
	for _, f := range rep.Files {
		if f.Input == "boom.csv" && !strings.Contains(f.Message, "internal error") {
			t.Errorf("message %q", f.Message)
		}
	}
}

func TestReservedManifestName(t *testing.T) {
	e := newEnv(t)
	write(t, filepath.Join(e.inbox, "x.csv"), []byte("x"))
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		return nil, os.WriteFile(filepath.Join(work, "manifest.json"), []byte("{}"), 0o644)
	}
	rep := run(t, e.opts(job))
	if rep.Failed != 1 || !strings.Contains(rep.Files[0].Message, "reserved") {
		t.Fatalf("%s", counts(rep))
	}
	checkArchive(t, e.archive, map[string]bool{})
}

func TestShardsDisjointAndComplete(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 12, 20)
	reps := make([]*nightly.Report, 3)
	errs := make([]error, 3)
	var wg sync.WaitGroup
	for k := 1; k <= 3; k++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			o := e.opts(fitJob)
			o.Shard, o.Shards = k, 3
			reps[k-1], errs[k-1] = nightly.Run(context.Background(), o)
		}()
	}
	wg.Wait()
	seen := map[string]int{}
	for k, rep := range reps {
		if errs[k] != nil {
			t.Fatalf("shard %d/3: %v", k+1, errs[k])
		}
		if rep.OtherShards+rep.Succeeded != 12 {
			t.Errorf("shard %d/3: %s", k+1, counts(rep))
		}
		for _, f := range rep.Files {
			if f.Status != nightly.StatusOK {
				t.Errorf("shard %d/3: %+v", k+1, f)
			}
			seen[f.SHA256]++
			if got := nightly.ShardOf(f.SHA256, 3); got != k+1 {
				t.Errorf("%s processed by shard %d, belongs to %d", f.Input, k+1, got)
			}
		}
	}
	for sha := range want {
		if seen[sha] != 1 {
			t.Errorf("content %s processed %d times over the shards", sha[:8], seen[sha])
		}
	}
	checkArchive(t, e.archive, want)
	if rep := run(t, e.opts(fitJob)); rep.Processed != 0 || rep.AlreadyDone != 12 {
		t.Errorf("unsharded run after the shards: %s", counts(rep))
	}
}

func TestShardOf(t *testing.T) {
	// 1 + (first 64 bits) mod n, worked by hand: 5 mod 3 = 2 → shard 3;
	// 2^64 − 1 ≡ 0 (mod 3) since 2^64 = (2^2)^32 ≡ 1 → shard 1.
	if got := nightly.ShardOf("0000000000000005"+strings.Repeat("0", 48), 3); got != 3 {
		t.Errorf("got %d, want 3", got)
	}
	if got := nightly.ShardOf("ffffffffffffffff"+strings.Repeat("0", 48), 3); got != 1 {
		t.Errorf("got %d, want 1", got)
	}
	if got := nightly.ShardOf(strings.Repeat("f", 64), 1); got != 1 {
		t.Errorf("got %d, want 1", got)
	}
}

func TestParseShard(t *testing.T) {
	for _, c := range []struct {
		in   string
		k, n int
		ok   bool
	}{{"2/8", 2, 8, true}, {"1/1", 1, 1, true}, {" 3 / 3 ", 3, 3, true}, {"0/3", 0, 0, false}, {"4/3", 0, 0, false},
		{"3", 0, 0, false}, {"a/b", 0, 0, false}, {"1/0", 0, 0, false}, {"-1/2", 0, 0, false}} {
		k, n, err := nightly.ParseShard(c.in)
		if (err == nil) != c.ok || k != c.k || n != c.n {
			t.Errorf("ParseShard(%q) = %d, %d, %v", c.in, k, n, err)
		}
		if err != nil && !strings.HasPrefix(err.Error(), "nightly: --shard") {
			t.Errorf("message %q", err)
		}
	}
}

func TestSecondRunIsLockedOut(t *testing.T) {
	e := newEnv(t)
	fill(t, e.inbox, 1, 20)
	started, release := make(chan struct{}), make(chan struct{})
	var once sync.Once
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		once.Do(func() { close(started) })
		<-release
		return fitJob(ctx, in, work)
	}
	done := make(chan error)
	go func() {
		_, err := nightly.Run(context.Background(), e.opts(job))
		done <- err
	}()
	<-started
	_, err := nightly.Run(context.Background(), e.opts(fitJob))
	var le *nightly.LockError
	if !errors.Is(err, nightly.ErrLocked) || !errors.As(err, &le) {
		t.Fatalf("second run: %v, want ErrLocked", err)
	}
	if !strings.Contains(err.Error(), ".lock-shard-1-of-1") || !strings.Contains(err.Error(), "another nightly run") {
		t.Errorf("message %q", err)
	}
	close(release)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	// Free again.
	run(t, e.opts(fitJob))
}

func TestInboxNeverWritten(t *testing.T) {
	e := newEnv(t)
	fill(t, e.inbox, 3, 20)
	write(t, filepath.Join(e.inbox, "bad.csv"), badLineList())
	write(t, filepath.Join(e.inbox, "sub", "b.csv"), lineList(31, 1, 20))
	write(t, filepath.Join(e.inbox, ".hidden.csv.part"), lineList(32, 1, 20))
	if err := os.Symlink("sub/b.csv", filepath.Join(e.inbox, "link.csv")); err != nil {
		t.Fatal(err)
	}
	before := inboxState(t, e.inbox)
	run(t, e.opts(fitJob))
	o := e.opts(fitJob)
	o.RetryFailed = true
	run(t, o)
	after := inboxState(t, e.inbox)
	if strings.Join(before, "\n") != strings.Join(after, "\n") {
		t.Errorf("inbox changed:\nbefore %q\nafter  %q", before, after)
	}
}

func TestSymlinkOutsideNotFollowed(t *testing.T) {
	e := newEnv(t)
	outside := filepath.Join(filepath.Dir(e.inbox), "outside")
	ob := lineList(40, 1, 20)
	write(t, filepath.Join(outside, "secret.csv"), ob)
	if err := os.Symlink(filepath.Join(outside, "secret.csv"), filepath.Join(e.inbox, "link-out.csv")); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(outside, filepath.Join(e.inbox, "dir-out")); err != nil {
		t.Fatal(err)
	}
	in := lineList(41, 1, 20)
	write(t, filepath.Join(e.inbox, "real.csv"), in)
	if err := os.Symlink("real.csv", filepath.Join(e.inbox, "link-in.csv")); err != nil {
		t.Fatal(err)
	}
	rep := run(t, e.opts(fitJob))
	if rep.Succeeded != 1 || rep.Duplicates != 1 {
		t.Fatalf("%s", counts(rep))
	}
	reasons := map[string]string{}
	for _, g := range rep.Ignored {
		reasons[g.Name] = g.Reason
	}
	if !strings.Contains(reasons["link-out.csv"], "outside the inbox") || !strings.Contains(reasons["dir-out"], "outside the inbox") {
		t.Errorf("ignored: %+v", rep.Ignored)
	}
	checkArchive(t, e.archive, map[string]bool{shaOf(in): true})
}

func TestChangedWhileProcessingIsSkipped(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 1, 20)
	moving := filepath.Join(e.inbox, "moving.csv")
	write(t, moving, lineList(60, 1, 20))
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		if in.Name == "moving.csv" {
			// The instrument is still writing: more lines arrive.
			f, err := os.OpenFile(moving, os.O_APPEND|os.O_WRONLY, 0)
			if err != nil {
				return nil, err
			}
			f.WriteString("12C16O,1,30,0,29,2200.0,0.001,R\n")
			f.Close()
		}
		return fitJob(ctx, in, work)
	}
	rep := run(t, e.opts(job))
	if rep.Succeeded != 1 || rep.Skipped != 1 || rep.ExitCode() != 0 {
		t.Fatalf("%s", counts(rep))
	}
	for _, f := range rep.Files {
		if f.Input == "moving.csv" && (f.Status != nightly.StatusSkipped || !strings.Contains(f.Message, "changed while it was being processed")) {
			t.Errorf("%+v", f)
		}
	}
	checkArchive(t, e.archive, want)
	// Next run: the completed file is done.
	b, _ := os.ReadFile(moving)
	rep = run(t, e.opts(fitJob))
	if rep.Succeeded != 1 {
		t.Fatalf("next run: %s", counts(rep))
	}
	want[shaOf(b)] = true
	checkArchive(t, e.archive, want)
}

func TestDriftFlagged(t *testing.T) {
	e := newEnv(t)
	fill(t, e.inbox, 4, 60)
	day1 := time.Date(2026, 3, 14, 2, 0, 0, 0, time.UTC)
	o := e.opts(fitJob)
	o.Now = func() time.Time { return day1 }
	rep := run(t, o)
	for _, f := range rep.Files {
		for _, d := range f.Drift {
			if d.Flagged {
				t.Errorf("unexpected drift in a nominal file: %s %+v", f.Input, d)
			}
		}
	}
	// A spectrometer whose wavenumber scale is off by 1e-5 (relative): every
	// line moves by ~0.02 cm⁻¹, far beyond the 0.001 cm⁻¹ noise.
	write(t, filepath.Join(e.inbox, "drifted.csv"), lineList(500, 1+1e-5, 60))
	day2 := day1.Add(24 * time.Hour)
	o.Now = func() time.Time { return day2 }
	rep = run(t, o)
	if rep.Succeeded != 1 {
		t.Fatalf("%s", counts(rep))
	}
	flagged := map[string]float64{}
	for _, d := range rep.Files[0].Drift {
		if d.N != 4 {
			t.Errorf("%s: %d earlier results, want 4", d.Name, d.N)
		}
		if d.Flagged {
			flagged[d.Name] = d.Z
		}
	}
	// The band origin T_v1 = ν₀ moves by 1e-5·2143 ≈ 0.021 cm⁻¹.
	if z, ok := flagged["T_v1[12C16O]"]; !ok || z < 5 {
		t.Errorf("T_v1 not flagged: %v", rep.Files[0].Drift)
	}
	// history.csv says so, and the summary of day 2 lists it.
	hist := readCSV(t, filepath.Join(e.archive, "history.csv"))
	nFlag := 0
	for _, r := range hist[1:] {
		if r[12] == "flagged" {
			nFlag++
			if r[1] != "drifted.csv" {
				t.Errorf("flagged row of %s", r[1])
			}
			z, _ := strconv.ParseFloat(r[11], 64)
			if math.Abs(z) <= 5 {
				t.Errorf("flagged with z = %g", z)
			}
		}
	}
	if nFlag != len(flagged) {
		t.Errorf("history has %d flagged rows, report %d", nFlag, len(flagged))
	}
	html, err := os.ReadFile(filepath.Join(e.archive, "summary-2026-03-15.html"))
	if err != nil {
		t.Fatal(err)
	}
	// The drifted quantity T_v1[12C16O] (= nu0_1-0) as the trade writes it.
	if !strings.Contains(string(html), "<h2>Drift</h2>") || !strings.Contains(string(html), "T<sub>1</sub> (¹²C¹⁶O)") {
		t.Errorf("day-2 summary does not show the drift:\n%s", html)
	}
	md, _ := os.ReadFile(filepath.Join(e.archive, "summary-2026-03-15.md"))
	if !strings.Contains(string(md), "## Drift") || !strings.Contains(string(md), "DRIFT") {
		t.Errorf("day-2 Markdown summary does not show the drift:\n%s", md)
	}
	// Day 1's summary still lists its four files and no drift.
	h1, _ := os.ReadFile(filepath.Join(e.archive, "summary-2026-03-14.html"))
	if strings.Contains(string(h1), "<h2>Drift</h2>") || strings.Count(string(h1), `<td class="num">`) == 0 || !strings.Contains(string(h1), "<strong>4</strong> files processed") {
		t.Errorf("day-1 summary:\n%s", h1)
	}
}

func TestSummaryEscapesUserText(t *testing.T) {
	e := newEnv(t)
	evil := "<script>alert(1)<script>.csv"
	write(t, filepath.Join(e.inbox, evil), lineList(70, 1, 20))
	write(t, filepath.Join(e.inbox, "=cmd|calc.csv"), badLineList())
	rep := run(t, e.opts(fitJob))
	if rep.Succeeded != 1 || rep.Failed != 1 {
		t.Fatalf("%s", counts(rep))
	}
	html, err := os.ReadFile(rep.Summary)
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(html), "<script>") || !strings.Contains(string(html), "&lt;script&gt;alert(1)&lt;script&gt;.csv") {
		t.Errorf("HTML summary does not escape the file name:\n%s", html)
	}
	md, _ := os.ReadFile(rep.SummaryMarkdown)
	if strings.Contains(string(md), "<script>") || !strings.Contains(string(md), "&lt;script&gt;alert(1)&lt;script&gt;.csv") {
		t.Errorf("Markdown summary does not escape the file name:\n%s", md)
	}
	// CSV cells that start with = are neutralised.
	var inputs []string
	for _, r := range readLedger(t, e.archive) {
		inputs = append(inputs, r.Input)
	}
	found := false
	for _, in := range inputs {
		if in == "'=cmd|calc.csv" {
			found = true
		}
		if strings.HasPrefix(in, "=") {
			t.Errorf("ledger cell %q not neutralised", in)
		}
	}
	if !found {
		t.Errorf("ledger inputs %q", inputs)
	}
	// The results folder name keeps only safe characters.
	ents, _ := os.ReadDir(filepath.Join(e.archive, "results"))
	if len(ents) != 1 || !strings.HasPrefix(ents[0].Name(), "_script_alert_1__script_-") {
		t.Errorf("results folders %v", ents)
	}
}

func TestNothingToDo(t *testing.T) {
	e := newEnv(t)
	rep := run(t, e.opts(fitJob))
	if rep.Processed != 0 || rep.ExitCode() != 0 || rep.Summary == "" {
		t.Fatalf("%s", counts(rep))
	}
	b, err := os.ReadFile(rep.Summary)
	if err != nil || !strings.Contains(string(b), "No file was processed") {
		t.Errorf("summary %s: %v", b, err)
	}
}

func TestBadOptions(t *testing.T) {
	e := newEnv(t)
	cases := map[string]nightly.Options{
		"no inbox":         {Archive: e.archive, Job: fitJob},
		"missing inbox":    {Inbox: filepath.Join(e.inbox, "nope"), Archive: e.archive, Job: fitJob},
		"archive in inbox": {Inbox: e.inbox, Archive: filepath.Join(e.inbox, "arch"), Job: fitJob},
		"inbox in archive": {Inbox: e.inbox, Archive: filepath.Dir(e.inbox), Job: fitJob},
		"no job":           {Inbox: e.inbox, Archive: e.archive},
		"bad shard":        {Inbox: e.inbox, Archive: e.archive, Job: fitJob, Shard: 4, Shards: 3},
		"negative workers": {Inbox: e.inbox, Archive: e.archive, Job: fitJob, Workers: -1},
	}
	for name, o := range cases {
		_, err := nightly.Run(context.Background(), o)
		if err == nil || !strings.HasPrefix(err.Error(), "nightly: ") {
			t.Errorf("%s: %v", name, err)
		}
	}
	if _, err := os.Stat(filepath.Join(e.inbox, "arch")); err == nil {
		t.Errorf("an archive was created inside the inbox")
	}
}

func TestProgressLogLines(t *testing.T) {
	e := newEnv(t)
	fill(t, e.inbox, 2, 20)
	write(t, filepath.Join(e.inbox, "bad.csv"), badLineList())
	var buf bytes.Buffer
	o := e.opts(fitJob)
	o.Progress = &buf
	run(t, o)
	s := buf.String()
	for _, want := range []string{"nightly: 3 files in the inbox", "[3/3]", "ok      a0.csv -> results/a0-", "FAILED  bad.csv: ", "3 processed: 2 ok, 1 failed", "summary "} {
		if !strings.Contains(s, want) {
			t.Errorf("progress lacks %q:\n%s", want, s)
		}
	}
	if strings.Contains(s, "\r") {
		t.Errorf("a bar was drawn on a non-terminal")
	}
	f, err := os.CreateTemp(t.TempDir(), "log")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if nightly.IsTerminal(&buf) || nightly.IsTerminal(f) {
		t.Errorf("a buffer or a regular file taken for a terminal")
	}
}

func TestManifestJSONFields(t *testing.T) {
	e := newEnv(t)
	fill(t, e.inbox, 1, 20)
	rep := run(t, e.opts(fitJob))
	b, err := os.ReadFile(filepath.Join(e.archive, filepath.FromSlash(rep.Files[0].Output), "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"schema", "program", "version", "pipeline_sha256", "input", "inputs", "started", "finished", "outcome", "files", "constants"} {
		if _, ok := m[k]; !ok {
			t.Errorf("manifest.json lacks %q", k)
		}
	}
}

func TestRecordConstants(t *testing.T) {
	e := newEnv(t)
	p := filepath.Join(e.inbox, "x.csv")
	write(t, p, lineList(3, 1, 60))
	dir := t.TempDir()
	res, err := fitJob(context.Background(), nightly.Input{Path: p, Name: "x.csv"}, dir)
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]nightly.Constant{}
	for _, c := range res.Constants {
		got[c.Name] = c
	}
	// Term-values model of the 1-0 band: T_v1, B_v0, B_v1, D_v0, D_v1 fitted
	// (T_v0 = 0 fixed, left out). Expected from the Dunham constants above:
	// T_1 = G(1) − G(0) = Y10 + 2·Y20, B_v = Y01 + Y11(v+½), D_v = −Y02;
	// within 5σ.
	want := map[string]float64{
		"T_v1[12C16O]": y10 + 2*y20,
		"B_v0[12C16O]": y01 + y11/2, "B_v1[12C16O]": y01 + 1.5*y11,
		"D_v0[12C16O]": -y02, "D_v1[12C16O]": -y02,
	}
	for k, w := range want {
		c, ok := got[k]
		if !ok {
			t.Errorf("%s missing from %v", k, res.Constants)
			continue
		}
		if !scalar.EqualWithinAbs(c.Value, w, 5*c.Sigma) || c.Unit != "cm-1" {
			t.Errorf("%s = %g ± %g %s, want %g", k, c.Value, c.Sigma, c.Unit, w)
		}
	}
	if _, ok := got["T_v0[12C16O]"]; ok {
		t.Errorf("the fixed T_v0 is listed")
	}
}

// TestOverlappingRunsNeverDoubleOne: runs with different shard counts (1/1 and
// 1/2) hold different run locks and see overlapping files; the claim on each
// content and the ledger check after it keep every content to one ok row.
func TestOverlappingRunsNeverDoubleOne(t *testing.T) {
	e := newEnv(t)
	want := fill(t, e.inbox, 10, 20)
	slow := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		time.Sleep(20 * time.Millisecond)
		return fitJob(ctx, in, work)
	}
	var wg sync.WaitGroup
	reps := make([]*nightly.Report, 2)
	for i, sh := range [][2]int{{1, 1}, {1, 2}} {
		wg.Add(1)
		go func() {
			defer wg.Done()
			o := e.opts(slow)
			o.Shard, o.Shards = sh[0], sh[1]
			var err error
			if reps[i], err = nightly.Run(context.Background(), o); err != nil {
				t.Error(err)
			}
		}()
	}
	wg.Wait()
	if t.Failed() {
		return
	}
	if reps[0].Succeeded+reps[1].Succeeded != 10 {
		t.Errorf("%s\n%s", counts(reps[0]), counts(reps[1]))
	}
	checkArchive(t, e.archive, want)
}

// TestNonFiniteConstantsDropped: a constant without a finite value or σ is
// kept out of the manifest and the history, with a note.
func TestNonFiniteConstantsDropped(t *testing.T) {
	e := newEnv(t)
	write(t, filepath.Join(e.inbox, "x.csv"), []byte("x"))
	job := func(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
		return &nightly.JobResult{Constants: []nightly.Constant{
			{Name: "good", Value: 1, Sigma: 0.1, Unit: "cm-1"},
			{Name: "nan", Value: math.NaN(), Sigma: 0.1, Unit: "cm-1"},
			{Name: "inf", Value: 1, Sigma: math.Inf(1), Unit: "cm-1"},
		}}, os.WriteFile(filepath.Join(work, "out.txt"), []byte("y"), 0o644)
	}
	rep := run(t, e.opts(job))
	if rep.Succeeded != 1 {
		t.Fatalf("%s: %+v", counts(rep), rep.Files)
	}
	m, err := nightly.ReadManifest(filepath.Join(e.archive, filepath.FromSlash(rep.Files[0].Output)))
	if err != nil {
		t.Fatal(err)
	}
	if len(m.Constants) != 1 || m.Constants[0].Name != "good" || len(m.Notes) != 2 || !strings.Contains(m.Notes[0], "nan") {
		t.Errorf("constants %+v notes %q", m.Constants, m.Notes)
	}
	checkArchive(t, e.archive, map[string]bool{shaOf([]byte("x")): true})
}

// TestIncludeGlob: with Include "*.csv" a README and an instrument's log in
// the inbox are not read as line lists (the night does not fail); they are
// listed as ignored in the report and in the summary. Letter case is ignored,
// and a glob with '/' matches the path in the inbox.
func TestIncludeGlob(t *testing.T) {
	e := newEnv(t)
	in := lineList(70, 1, 20)
	write(t, filepath.Join(e.inbox, "cell", "a.csv"), in)
	up := lineList(71, 1, 20)
	write(t, filepath.Join(e.inbox, "B.CSV"), up)
	write(t, filepath.Join(e.inbox, "README.txt"), []byte("Drop the spectrometer's line lists here.\n"))
	write(t, filepath.Join(e.inbox, "cell", "run.log"), []byte("lamp on\n"))
	o := e.opts(fitJob)
	o.Include = nightly.DefaultInclude
	rep := run(t, o)
	if rep.Succeeded != 2 || rep.Failed != 0 {
		t.Fatalf("%s", counts(rep))
	}
	reasons := map[string]string{}
	for _, g := range rep.Ignored {
		reasons[g.Name] = g.Reason
	}
	for _, name := range []string{"README.txt", "cell/run.log"} {
		if reasons[name] != "not matched by --include *.csv" {
			t.Errorf("%s: ignored %q; ignored list %+v", name, reasons[name], rep.Ignored)
		}
	}
	sums, _ := filepath.Glob(filepath.Join(e.archive, "summary-*.md"))
	if len(sums) != 1 {
		t.Fatalf("summaries %v", sums)
	}
	sum, err := os.ReadFile(sums[0])
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(sum), "README.txt") || !strings.Contains(string(sum), "not matched by --include") {
		t.Errorf("summary does not list the ignored files:\n%s", sum)
	}
	checkArchive(t, e.archive, map[string]bool{shaOf(in): true, shaOf(up): true})

	// A glob with a folder.
	e2 := newEnv(t)
	write(t, filepath.Join(e2.inbox, "cell", "a.csv"), in)
	write(t, filepath.Join(e2.inbox, "other", "b.csv"), up)
	o2 := e2.opts(fitJob)
	o2.Include = "cell/*.csv"
	if rep := run(t, o2); rep.Succeeded != 1 || len(rep.Ignored) != 1 || rep.Ignored[0].Name != "other/b.csv" {
		t.Errorf("cell/*.csv: %s, ignored %+v", counts(rep), rep.Ignored)
	}
	o2.Include = "[z-"
	if _, err := nightly.Run(context.Background(), o2); err == nil || !strings.Contains(err.Error(), "--include") {
		t.Errorf("bad glob: %v", err)
	}
}

// TestOlderHistoryRefused: a history.csv of an earlier version (no model
// column) is refused with a message that says what to do; nothing is written.
func TestOlderHistoryRefused(t *testing.T) {
	dir := t.TempDir()
	inbox, archive := filepath.Join(dir, "inbox"), filepath.Join(dir, "archive")
	os.MkdirAll(inbox, 0o755)
	os.MkdirAll(archive, 0o755)
	old := strings.Join(nightly.HistoryHeader[:len(nightly.HistoryHeader)-1], ",") + "\n"
	os.WriteFile(filepath.Join(archive, nightly.HistoryFile), []byte(old), 0o644)
	_, err := nightly.Run(context.Background(), nightly.Options{Inbox: inbox, Archive: archive, Job: func(context.Context, nightly.Input, string) (*nightly.JobResult, error) {
		return &nightly.JobResult{}, nil
	}})
	if err == nil || !strings.Contains(err.Error(), "earlier version of bandwright") || !strings.Contains(err.Error(), "move it aside") {
		t.Errorf("%v", err)
	}
	if b, _ := os.ReadFile(filepath.Join(archive, nightly.HistoryFile)); string(b) != old {
		t.Errorf("history.csv changed: %q", b)
	}
}
