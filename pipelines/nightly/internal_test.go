package nightly

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats/scalar"
)

func testArchive(t *testing.T) *archive {
	t.Helper()
	d := t.TempDir()
	a, err := openArchive(d, d)
	if err != nil {
		t.Fatal(err)
	}
	if err := a.locked(a.open); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(a.close)
	return a
}

func sha(c byte) string { return strings.Repeat(string(c), 64) }

// TestDriftArithmetic checks the weighted mean and the z of the drift test on
// numbers worked by hand: earlier 1.0 ± 0.1 and 1.2 ± 0.2 give weights 100 and
// 25, x̄ = (100·1.0 + 25·1.2)/125 = 1.04, σ(x̄) = 1/√125 = 0.0894427; a new
// 2.0 ± 0.1 is z = 0.96/√(0.01 + 0.008) = 7.15542 combined σ away (flagged at
// 5), a new 1.1 ± 0.1 is z = 0.06/√0.018 = 0.447214 (not flagged).
func TestDriftArithmetic(t *testing.T) {
	a := testArchive(t)
	add := func(s string, v, sg float64) []Drift {
		var ds []Drift
		err := a.locked(func() error {
			var err error
			ds, err = a.addHistory("f", s, "2026-01-01T00:00:00Z", []Constant{{Species: "12C16O", Name: "B_v0", Value: v, Sigma: sg, Unit: "cm-1"}}, 5)
			return err
		})
		if err != nil {
			t.Fatal(err)
		}
		return ds
	}
	if d := add(sha('1'), 1.0, 0.1)[0]; d.N != 0 || !math.IsNaN(d.Z) || d.Flagged {
		t.Errorf("first result: %+v", d)
	}
	add(sha('2'), 1.2, 0.2)
	// σ = 0: recorded, neither tested nor averaged.
	if d := add(sha('3'), 5, 0)[0]; !math.IsNaN(d.Z) || d.Flagged || d.N != 2 {
		t.Errorf("σ = 0: %+v", d)
	}
	d := add(sha('4'), 2.0, 0.1)[0]
	if d.N != 2 || !scalar.EqualWithinAbsOrRel(d.Mean, 1.04, 1e-12, 1e-12) ||
		!scalar.EqualWithinAbsOrRel(d.SigmaMean, 1/math.Sqrt(125), 1e-12, 1e-12) ||
		!scalar.EqualWithinAbsOrRel(d.Z, 0.96/math.Sqrt(0.018), 1e-12, 1e-12) || !d.Flagged {
		t.Errorf("jump: %+v", d)
	}
	// The flagged 2.0 now counts among the earlier results: weights 100, 25,
	// 100 → x̄ = (100 + 30 + 200)/225 = 1.466667, σ(x̄) = 1/15.
	d = add(sha('5'), 1.1, 0.1)[0]
	if d.N != 3 || !scalar.EqualWithinAbsOrRel(d.Mean, 330.0/225, 1e-12, 1e-12) ||
		!scalar.EqualWithinAbsOrRel(d.Z, (1.1-330.0/225)/math.Hypot(0.1, 1.0/15), 1e-12, 1e-12) || d.Flagged {
		t.Errorf("after the jump: %+v", d)
	}
	// Another species or unit is another constant.
	var other []Drift
	a.locked(func() error {
		var err error
		other, err = a.addHistory("f", sha('6'), "x", []Constant{{Species: "13C16O", Name: "B_v0", Value: 9, Sigma: 0.1, Unit: "cm-1"}}, 5)
		return err
	})
	if other[0].N != 0 {
		t.Errorf("13C16O averaged with 12C16O: %+v", other[0])
	}
}

// TestTornLedgerLine: a last record without its line break (a crash, power
// cut or full disk in the middle of a write) is not read, and the next append
// cuts it off before writing, whether it stopped inside a quoted cell or not.
func TestTornLedgerLine(t *testing.T) {
	for _, torn := range []string{
		`x.csv,` + sha('a') + `,ok,2026-01-01T00:00:00Z,2026-01-01T00:00:01Z,results/x-aaaaaaaa,"unfinished`,
		`x.csv,` + sha('a') + `,ok,2026-01-01T00:00:00Z,2026-01-01T00:00:01Z,results/x-aaaaaaaa,`,
		"\"x\ny.csv\"," + sha('a') + ",ok,2026-01-01T",
	} {
		a := testArchive(t)
		f, err := os.OpenFile(filepath.Join(a.dir, LedgerFile), os.O_APPEND|os.O_WRONLY, 0)
		if err != nil {
			t.Fatal(err)
		}
		f.WriteString(torn)
		f.Close()
		if _, err := a.led.refresh(); err != nil || a.state(sha('a')).ok != 0 {
			t.Errorf("%q: the torn row was read: %+v, %v", torn, a.state(sha('a')), err)
		}
		now := time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)
		err = a.locked(func() error {
			return a.led.append([][]string{ledgerRowFor("y.csv", sha('b'), StatusOK, now, now, "results/y-bbbbbbbb", "")})
		})
		if err != nil {
			t.Fatal(err)
		}
		if a.led.bad != 0 || a.state(sha('a')).ok != 0 || a.state(sha('b')).ok != 1 {
			t.Errorf("%q: bad %d, a %+v, b %+v", torn, a.led.bad, a.state(sha('a')), a.state(sha('b')))
		}
		b, _ := os.ReadFile(filepath.Join(a.dir, LedgerFile))
		lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
		if len(lines) != 2 || !strings.HasPrefix(lines[1], "y.csv,") {
			t.Errorf("%q: ledger:\n%s", torn, b)
		}
		// A second reader (another process) sees the same.
		a2, err := openArchive(a.dir, a.dir)
		if err != nil {
			t.Fatal(err)
		}
		if err := a2.locked(a2.open); err != nil {
			t.Fatal(err)
		}
		if a2.state(sha('b')).ok != 1 || a2.led.bad != 0 {
			t.Errorf("%q: second reader: bad %d", torn, a2.led.bad)
		}
		a2.close()
	}
}

// TestLedgerCellsWithLineBreaks: names and messages holding line breaks,
// quotes and commas are written and read back by one CSV codec, by this
// process and by another.
func TestLedgerCellsWithLineBreaks(t *testing.T) {
	a := testArchive(t)
	now := time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)
	names := []string{"a\nb.csv", "c\r\nd.csv", `"e",f.csv`, "g\rh.csv"}
	for i, n := range names {
		err := a.locked(func() error {
			return a.led.append([][]string{ledgerRowFor(n, sha(byte('a'+i)), StatusOK, now, now, "results/x-"+strconv.Itoa(i), "")})
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	a2, err := openArchive(a.dir, a.dir)
	if err != nil {
		t.Fatal(err)
	}
	defer a2.close()
	if err := a2.locked(a2.open); err != nil {
		t.Fatal(err)
	}
	for i, n := range names {
		for _, x := range []*archive{a, a2} {
			if st := x.state(sha(byte('a' + i))); st.ok != 1 || st.input != strings.ReplaceAll(n, "\r\n", "\n") {
				t.Errorf("%q: read back as %+v", n, st)
			}
		}
	}
	if a.led.bad != 0 || a2.led.bad != 0 {
		t.Errorf("bad records: %d, %d", a.led.bad, a2.led.bad)
	}
}

func TestLedgerWithWrongHeaderRefused(t *testing.T) {
	d := t.TempDir()
	os.WriteFile(filepath.Join(d, LedgerFile), []byte("name,hash\n"), 0o644)
	a, err := openArchive(d, d)
	if err != nil {
		t.Fatal(err)
	}
	err = a.locked(a.open)
	if err == nil || !strings.Contains(err.Error(), "ledger.csv") || !strings.Contains(err.Error(), "header") {
		t.Errorf("got %v", err)
	}
}

func TestFolderStem(t *testing.T) {
	for in, want := range map[string]string{
		"a.csv":                "a",
		"sub/run 3.csv":        "run_3",
		"..hidden.csv":         "hidden",
		"<x>.csv":              "_x_",
		"CO_2026-03-14.tar.gz": "CO_2026-03-14.tar",
		".csv":                 "input",
		"spectre-été.csv":      "spectre-été",
	} {
		if got := folderStem(in); got != want {
			t.Errorf("folderStem(%q) = %q, want %q", in, got, want)
		}
	}
	if got := folderStem(strings.Repeat("é", 100) + ".csv"); len(got) > 80 || !strings.HasPrefix(got, "éé") {
		t.Errorf("long stem %q", got)
	}
}

func TestOneLine(t *testing.T) {
	if got := oneLine("fit: a\n  b\r\n\nc  "); got != "fit: a | b | c" {
		t.Errorf("got %q", got)
	}
	long := strings.Repeat("x", 3000)
	if got := oneLine(long); len([]rune(got)) != 1000 || !strings.HasSuffix(got, "…") {
		t.Errorf("long message kept %d characters", len([]rune(got)))
	}
	err := errors.New("linelist: /a/.work/s-1/in/x.csv:5: unc: must be > 0\nsee /a/.work/s-1/out")
	if got := message(err, "/a/.work/s-1/in/x.csv", "x.csv", "/a/.work/s-1"); got != "linelist: x.csv:5: unc: must be > 0 | see (work folder)/out" {
		t.Errorf("message %q", got)
	}
}

// TestCSVLogAllOrNothing: an append that meets a full disk leaves no part of
// its rows (a result's history is recorded whole, or by the next run's
// backfill; with part of it the backfill would skip the result). A small
// tmpfs is filled to within a few hundred bytes, then ten rows that need
// more are appended: the append fails with ENOSPC and the file is as before.
// Needs a tmpfs mount (root, as in CI); skipped elsewhere.
func TestCSVLogAllOrNothing(t *testing.T) {
	mnt := t.TempDir()
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", 0, "size=64k"); err != nil {
		t.Skipf("cannot mount a small tmpfs here (%v)", err)
	}
	t.Cleanup(func() { syscall.Unmount(mnt, 0) })
	path := filepath.Join(mnt, "history.csv")
	l, err := openCSVLog(path, "history", []string{"a", "b"}, func([]string) {})
	if err != nil {
		t.Fatal(err)
	}
	defer l.close()
	if err := l.append([][]string{{"1", "first"}}); err != nil {
		t.Fatal(err)
	}
	filler, err := os.Create(filepath.Join(mnt, "filler"))
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := filler.Write(make([]byte, 512)); err != nil {
			break
		}
	}
	filler.Close()
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var rows [][]string
	for i := range 10 {
		rows = append(rows, []string{strconv.Itoa(i), strings.Repeat("x", 1000)})
	}
	err = l.append(rows)
	if !errors.Is(err, syscall.ENOSPC) {
		t.Fatalf("append on a full disk: %v, want ENOSPC", err)
	}
	after, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(before, after) {
		t.Errorf("the failed append left %d bytes behind:\n%q", len(after)-len(before), after[len(before):])
	}
}
