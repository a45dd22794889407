package nightly_test

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"bandwright/fit/model"
	"bandwright/pipelines"
	"bandwright/pipelines/nightly"
	"bandwright/pipelines/outdir"
)

// Dunham constants of 12C16O X¹Σ⁺ (cm⁻¹): Huber & Herzberg, Constants of
// Diatomic Molecules (1979), as quoted in docs/references.md; from memory.
const (
	y10 = 2169.81358
	y20 = -13.28831
	y01 = 1.93128087
	y11 = -0.01750441
	y02 = -6.12147e-6
)

// termValue is the Dunham term value E(v, J) = Σ Y_kl (v+½)^k [J(J+1)]^l over
// the five constants above (cm⁻¹).
func termValue(v, j int) float64 {
	x := float64(j * (j + 1))
	h := float64(v) + 0.5
	return y10*h + y20*h*h + y01*x + y11*h*x + y02*x*x
}

// lineList returns a valid line list of the 1-0 band of 12C16O: n lines
// alternating R(J) and P(J+1), positions from termValue scaled by scale (a
// calibration error when ≠ 1) plus Gaussian noise of 0.001 cm⁻¹ drawn with the
// given seed (so each seed gives a different file), unc 0.001 cm⁻¹.
func lineList(seed uint64, scale float64, n int) []byte {
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	var b bytes.Buffer
	fmt.Fprintf(&b, "# synthetic 12C16O 1-0 band, seed %d\n", seed)
	b.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,branch\n")
	for i := 0; i < n; i++ {
		j := i / 2
		jUp, jLo, br := j+1, j, "R"
		if i%2 == 1 {
			jUp, jLo, br = j, j+1, "P"
		}
		pos := (termValue(1, jUp)-termValue(0, jLo))*scale + 0.001*rng.NormFloat64()
		fmt.Fprintf(&b, "12C16O,1,%d,0,%d,%.6f,0.001,%s\n", jUp, jLo, pos, br)
	}
	return b.Bytes()
}

// badLineList has a negative uncertainty on its data row 3 (file line 5).
func badLineList() []byte {
	b := lineList(99, 1, 20)
	lines := strings.Split(string(b), "\n")
	lines[4] = strings.Replace(lines[4], ",0.001,", ",-0.001,", 1)
	return []byte(strings.Join(lines, "\n"))
}

// fitJob is a real chain of one stage: the term-values-model fit of the snapshot,
// written with the fit stage's own writers.
func fitJob(ctx context.Context, in nightly.Input, work string) (*nightly.JobResult, error) {
	oc, err := pipelines.Fit(pipelines.FitOptions{Inputs: []string{in.Path}, Model: model.KindTermValues})
	if err != nil {
		return nil, err
	}
	oc.Record.Provenance.Inputs[0].Path = in.Name
	d, err := outdir.Begin(work)
	if err != nil {
		return nil, err
	}
	defer d.Abort()
	if err := pipelines.WriteFitOutputs(d, oc); err != nil {
		return nil, err
	}
	if err := d.Commit(); err != nil {
		return nil, err
	}
	return &nightly.JobResult{Constants: nightly.RecordConstants(oc.Record)}, nil
}

func write(t testing.TB, p string, b []byte) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func shaOf(b []byte) string {
	s := sha256.Sum256(b)
	return hex.EncodeToString(s[:])
}

type env struct {
	inbox, archive string
}

func newEnv(t testing.TB) env {
	d := t.TempDir()
	e := env{inbox: filepath.Join(d, "inbox"), archive: filepath.Join(d, "archive")}
	if err := os.MkdirAll(e.inbox, 0o755); err != nil {
		t.Fatal(err)
	}
	return e
}

func (e env) opts(job nightly.Job) nightly.Options {
	return nightly.Options{Inbox: e.inbox, Archive: e.archive, Workers: 2, Job: job,
		Version: "test", PipelineHash: strings.Repeat("ab", 32)}
}

func run(t testing.TB, o nightly.Options) *nightly.Report {
	t.Helper()
	rep, err := nightly.Run(context.Background(), o)
	if err != nil {
		t.Fatalf("Run: %v", err)
	}
	return rep
}

// ledgerRow is one parsed row of ledger.csv.
type ledgerRow struct {
	Input, SHA, Status, Started, Finished, Output, Message string
}

func readCSV(t testing.TB, p string) [][]string {
	t.Helper()
	f, err := os.Open(p)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.FieldsPerRecord = -1
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", p, err)
	}
	return recs
}

func readLedger(t testing.TB, archive string) []ledgerRow {
	t.Helper()
	recs := readCSV(t, filepath.Join(archive, "ledger.csv"))
	if len(recs) == 0 || strings.Join(recs[0], ",") != "input,sha256,status,started,finished,output,message" {
		t.Fatalf("ledger header: %v", recs)
	}
	var out []ledgerRow
	for i, r := range recs[1:] {
		if len(r) != 7 {
			t.Fatalf("ledger row %d has %d fields: %q", i+2, len(r), r)
		}
		out = append(out, ledgerRow{r[0], r[1], r[2], r[3], r[4], r[5], r[6]})
	}
	return out
}

// okCount counts the ok rows per content hash.
func okCount(rows []ledgerRow) map[string]int {
	m := map[string]int{}
	for _, r := range rows {
		if r.Status == "ok" {
			m[r.SHA]++
		}
	}
	return m
}

// checkArchive checks the invariants a finished run leaves: every content in
// want has exactly one ok row; no other content has one; every results folder
// has its ok row and passes its manifest; every ok row has its folder and its
// history rows (once); nothing is left under construction.
func checkArchive(t testing.TB, archive string, want map[string]bool) {
	t.Helper()
	rows := readLedger(t, archive)
	oks := okCount(rows)
	for sha := range want {
		if oks[sha] != 1 {
			t.Errorf("content %s has %d ok rows, want exactly 1", sha[:8], oks[sha])
		}
	}
	outputs := map[string]string{}
	for _, r := range rows {
		if r.Status != "ok" {
			continue
		}
		if !want[r.SHA] {
			t.Errorf("unexpected ok row for %s (%s)", r.Input, r.SHA[:8])
		}
		outputs[r.Output] = r.SHA
	}
	ents, err := os.ReadDir(filepath.Join(archive, "results"))
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, e := range ents {
		out := "results/" + e.Name()
		seen[out] = true
		sha, ok := outputs[out]
		if !ok {
			t.Errorf("results folder %s has no ok row in the ledger", out)
			continue
		}
		dir := filepath.Join(archive, "results", e.Name())
		m, err := nightly.ReadManifest(dir)
		if err != nil {
			t.Errorf("%s: %v", out, err)
			continue
		}
		if m.Input.SHA256 != sha || m.Outcome != nightly.StatusOK {
			t.Errorf("%s: manifest says %s/%s, ledger %s", out, m.Input.SHA256[:8], m.Outcome, sha[:8])
		}
		if err := nightly.VerifyFolder(dir, m); err != nil {
			t.Errorf("%v", err)
		}
	}
	for out := range outputs {
		if !seen[out] {
			t.Errorf("ok row names %s, which does not exist", out)
		}
	}
	work, _ := os.ReadDir(filepath.Join(archive, ".work"))
	for _, e := range work {
		if e.Name() != "claims" {
			t.Errorf("left under construction: .work/%s", e.Name())
		}
	}
	// History: the rows of each ok content exactly once.
	hist := readCSV(t, filepath.Join(archive, "history.csv"))
	perSHA := map[string]int{}
	for _, r := range hist[1:] {
		perSHA[r[0]]++
	}
	for out, sha := range outputs {
		m, err := nightly.ReadManifest(filepath.Join(archive, filepath.FromSlash(out)))
		if err != nil {
			continue
		}
		if perSHA[sha] != len(m.Constants) {
			t.Errorf("history has %d rows for %s, its manifest %d constants", perSHA[sha], out, len(m.Constants))
		}
	}
}

// inboxState fingerprints every entry of a folder (name, mode, size, mtime,
// content hash, link target).
func inboxState(t testing.TB, dir string) []string {
	t.Helper()
	var out []string
	err := filepath.Walk(dir, func(p string, fi os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		s := fmt.Sprintf("%s %v %d %d", p, fi.Mode(), fi.Size(), fi.ModTime().UnixNano())
		switch {
		case fi.Mode()&os.ModeSymlink != 0:
			l, _ := os.Readlink(p)
			s += " -> " + l
		case fi.Mode().IsRegular():
			b, _ := os.ReadFile(p)
			s += " " + shaOf(b)
		}
		out = append(out, s)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	sort.Strings(out)
	return out
}

func counts(r *nightly.Report) string {
	return fmt.Sprintf("found %d, duplicates %d, other shards %d, done before %d, failed before %d, recovered %d, processed %d (ok %d, failed %d), skipped %d, pending %d, interrupted %v",
		r.Found, r.Duplicates, r.OtherShards, r.AlreadyDone, r.FailedBefore, r.Recovered, r.Processed, r.Succeeded, r.Failed, r.Skipped, r.Pending, r.Interrupted)
}
