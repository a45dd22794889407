package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"testing"
)

// runCLI runs the command line in-process and returns its exit code, stdout
// and stderr.
func runCLI(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = run(append([]string{"bandwright"}, args...), &o, &e)
	return code, o.String(), e.String()
}

// snapshot maps every file and folder under dir (relative, '/' separators) to
// the SHA-256 of its content ("dir" for folders).
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		rel = filepath.ToSlash(rel)
		if d.IsDir() {
			out[rel] = "dir"
			return nil
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		s := sha256.Sum256(b)
		out[rel] = hex.EncodeToString(s[:])
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// diffSnapshots lists what changed between two snapshots.
func diffSnapshots(before, after map[string]string) []string {
	var d []string
	for k, v := range after {
		if w, ok := before[k]; !ok {
			d = append(d, "new: "+k)
		} else if w != v {
			d = append(d, "changed: "+k)
		}
	}
	for k := range before {
		if _, ok := after[k]; !ok {
			d = append(d, "removed: "+k)
		}
	}
	sort.Strings(d)
	return d
}

func writeFile(t *testing.T, path string, b []byte) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

func readFile(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// Ground-state constants of 12C16O, Huber & Herzberg, Constants of Diatomic
// Molecules (1979), from memory (docs/references.md), as Dunham coefficients
// (Y10 = ωe, Y20 = −ωexe, Y30 = ωeye, Y01 = Be, Y11 = −αe, Y02 = −De; common
// practice), cm-1.
var coY = []struct {
	k, l int
	y    float64
}{
	{1, 0, 2169.81358}, {2, 0, -13.28831}, {3, 0, 0.010511},
	{0, 1, 1.93128087}, {1, 1, -0.01750441}, {0, 2, -6.12147e-6},
}

// coEnergy is E(v, J) = Σ Y_kl (v+½)^k [J(J+1)]^l (Dunham 1932; common practice).
func coEnergy(v, J int) float64 {
	x := float64(J) * float64(J+1)
	e := 0.0
	for _, c := range coY {
		e += c.y * math.Pow(float64(v)+0.5, float64(c.k)) * math.Pow(x, float64(c.l))
	}
	return e
}

// coLineList returns a 12C16O line list of the given bands, P and R branches for
// J″ ≤ jmax, positions from coEnergy with Gaussian noise of 0.001 cm-1 (fixed
// seed) and unc 0.001 cm-1, in the columns species, v_up, J_up, v_lo, J_lo,
// position, unc, branch, comment. Data rows start on line 2.
func coLineList(bands [][2]int, jmax int) string {
	rng := rand.New(rand.NewPCG(2024, 6))
	var b strings.Builder
	b.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,branch,comment\n")
	for _, bd := range bands {
		for jl := 0; jl <= jmax; jl++ {
			for _, dj := range []int{-1, 1} {
				ju := jl + dj
				if ju < 0 {
					continue
				}
				nu := coEnergy(bd[0], ju) - coEnergy(bd[1], jl) + 0.001*rng.NormFloat64()
				br := map[int]string{-1: "P", 1: "R"}[dj]
				fmt.Fprintf(&b, "12C16O,%d,%d,%d,%d,%.6f,0.001,%s,%s(%d)\n", bd[0], ju, bd[1], jl, nu, br, br, jl)
			}
		}
	}
	return b.String()
}

// baseLines is the line list most cases start from: 12C16O 1-0 and 2-1, J″ ≤ 20
// (82 lines, rows 2–83).
var baseLines = coLineList([][2]int{{1, 0}, {2, 1}}, 20)

// baseRecord returns a constants record fitted (by the fit command itself) to
// baseLines with the default Dunham model.
var baseRecord = sync.OnceValues(func() ([]byte, error) {
	dir, err := os.MkdirTemp("", "bandwright-record-")
	if err != nil {
		return nil, err
	}
	defer os.RemoveAll(dir)
	in := filepath.Join(dir, "lines.csv")
	if err := os.WriteFile(in, []byte(baseLines), 0o644); err != nil {
		return nil, err
	}
	if code, _, stderr := runCLI("fit", in, "--out", filepath.Join(dir, "fit")); code != 0 {
		return nil, fmt.Errorf("fit of the base lines: exit %d: %s", code, stderr)
	}
	return os.ReadFile(filepath.Join(dir, "fit", "constants.json"))
})

func record(t *testing.T) []byte {
	t.Helper()
	b, err := baseRecord()
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// The assignment cases start from the synthetic far-infrared HCl peak list and
// its starting constants in testdata/assign (see its README: Huber & Herzberg
// constants, Dunham mass scaling).
var (
	peaksFile = filepath.Join("..", "..", "testdata", "assign", "hcl-rotation.csv")
	startFile = filepath.Join("..", "..", "testdata", "assign", "hcl-rotation-start.toml")
)

// catCase is one entry of a catalogue of bad inputs: the content of the file
// under test, the exit code wanted, substrings of stderr (which name the file,
// the row and the field), and for a run that succeeds with a warning, the
// output file that must repeat it.
type catCase struct {
	name     string
	input    []byte
	code     int
	want     []string
	warnFile string // output file (relative to --out) that must hold every want substring
	check    func(t *testing.T, out string)
}

// catalogue runs the cases of one file type. For each case it writes the other
// inputs (setup) and the file under test into a fresh folder, runs the command
// args(dir, file, out), and checks the exit code and stderr. A case that fails
// must leave the folder exactly as it was: no output folder or file, inputs
// byte for byte the same. A case that succeeds must leave its inputs unchanged.
func catalogue(t *testing.T, fileName string, cases []catCase, setup func(t *testing.T, dir string), args func(dir, file, out string) []string) {
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			if setup != nil {
				setup(t, dir)
			}
			file := filepath.Join(dir, fileName)
			writeFile(t, file, c.input)
			out := filepath.Join(dir, "results", "out")
			before := snapshot(t, dir)
			code, stdout, stderr := runCLI(args(dir, file, out)...)
			if code != c.code {
				t.Fatalf("exit %d, want %d\nstdout: %s\nstderr: %s", code, c.code, stdout, stderr)
			}
			for _, w := range c.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr lacks %q:\n%s", w, stderr)
				}
			}
			after := snapshot(t, dir)
			if code != 0 {
				if d := diffSnapshots(before, after); len(d) > 0 {
					t.Errorf("a failed run changed the folder: %v", d)
				}
				if strings.Contains(stderr, "panic") || strings.Contains(stderr, "goroutine ") {
					t.Errorf("stderr: %s", stderr)
				}
				return
			}
			for k, v := range before {
				if after[k] != v {
					t.Errorf("input %s changed", k)
				}
			}
			if c.warnFile != "" {
				if !strings.Contains(stderr, "warning:") {
					t.Errorf("no warning on stderr: %s", stderr)
				}
				rep := readFile(t, filepath.Join(out, c.warnFile))
				for _, w := range c.want {
					if !strings.Contains(rep, w) {
						t.Errorf("%s lacks %q", c.warnFile, w)
					}
				}
			}
			if c.check != nil {
				c.check(t, out)
			}
		})
	}
}

// replaceRow replaces the n-th line (1-based) of s by row.
func replaceRow(s string, n int, row string) string {
	lines := strings.SplitAfter(s, "\n")
	lines[n-1] = row + "\n"
	return strings.Join(lines, "")
}

// row returns the n-th line (1-based) of s without its line end.
func row(s string, n int) string {
	return strings.TrimRight(strings.SplitAfter(s, "\n")[n-1], "\r\n")
}

// setField returns a CSV row with field i (0-based) set to v.
func setField(r string, i int, v string) string {
	f := strings.Split(r, ",")
	f[i] = v
	return strings.Join(f, ",")
}

func bom(s string) []byte { return append([]byte("\xef\xbb\xbf"), s...) }

func crlf(s string) []byte { return []byte(strings.ReplaceAll(s, "\n", "\r\n")) }
