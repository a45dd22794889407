package main

// The catalogue of bad inputs: one table per kind of file a user gives
// bandwright, each case with the exit code and a message that names the file,
// the row and the field. Every failing case must leave no output and the input
// byte for byte as it was (see catalogue in helpers_test.go).

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// TestCatalogueLineList: line lists given to `bandwright fit`.
func TestCatalogueLineList(t *testing.T) {
	base := baseLines
	r2, r3 := row(base, 2), row(base, 3)
	withCol := func(name string, val func(i int) string) string {
		var b strings.Builder
		for i, l := range strings.Split(strings.TrimSuffix(base, "\n"), "\n") {
			if i == 0 {
				b.WriteString(l + "," + name + "\n")
			} else {
				b.WriteString(l + "," + val(i) + "\n")
			}
		}
		return b.String()
	}
	// toMHz converts the position and unc of every n-th data row to MHz
	// (1 cm-1 = 29 979.2458 MHz), with or without saying so in a unit column.
	toMHz := func(n int, unitCol bool) string {
		var b strings.Builder
		for i, l := range strings.Split(strings.TrimSuffix(base, "\n"), "\n") {
			f := strings.Split(l, ",")
			if i == 0 {
				if unitCol {
					l += ",unit"
				}
				b.WriteString(l + "\n")
				continue
			}
			unit := "cm-1"
			if i%n == 0 {
				var pos, unc float64
				fmt.Sscan(f[5], &pos)
				fmt.Sscan(f[6], &unc)
				f[5], f[6] = fmt.Sprintf("%.4f", pos*29979.2458), fmt.Sprintf("%.4g", unc*29979.2458)
				unit = "MHz"
			}
			l = strings.Join(f, ",")
			if unitCol {
				l += "," + unit
			}
			b.WriteString(l + "\n")
		}
		return b.String()
	}
	semicolons := strings.NewReplacer(",", ";", ".", ",").Replace(base)
	allBad := base
	for i := 2; i <= 83; i++ {
		allBad = replaceRow(allBad, i, setField(row(allBad, i), 6, "0"))
	}
	long := replaceRow(base, 3, setField(r3, 8, strings.Repeat("x", 2<<20)))

	cases := []catCase{
		{name: "empty file", input: nil, code: 1, want: []string{"lines.csv: no lines: the file is empty"}},
		{name: "header only", input: []byte(row(base, 1) + "\n"), code: 1, want: []string{"lines.csv:1: no lines: the file has a header only"}},
		{name: "comments only", input: []byte("# nothing yet\n# more\n"), code: 1, want: []string{"lines.csv: no lines: the file is empty"}},
		{name: "byte-order mark", input: bom(base), code: 0},
		{name: "CRLF line ends", input: crlf(base), code: 0},
		{name: "semicolons and decimal commas", input: []byte(semicolons), code: 1,
			want: []string{"lines.csv:1: looks like semicolon-separated; bandwright reads comma-separated with a dot decimal separator"}},
		{name: "decimal comma quoted", input: []byte(replaceRow(base, 2, setField(r2, 5, `"2147,0812"`))), code: 1,
			want: []string{`lines.csv:2: position: not a number: "2147,0812" (decimal comma?`}},
		{name: "decimal comma unquoted", input: []byte(replaceRow(base, 2, setField(r2, 5, "2147,0812"))), code: 1,
			want: []string{"lines.csv:2: row has 10 fields, header has 9 (quote text that contains commas; numbers take a dot as decimal separator)"}},
		{name: "duplicated row", input: []byte(base + r2 + "\n"), code: 0, warnFile: "fit.md",
			want: []string{"lines.csv:84: duplicate line: the same species, quantum numbers and position as row 2"}},
		{name: "NaN", input: []byte(replaceRow(base, 2, setField(r2, 5, "NaN"))), code: 1, want: []string{"lines.csv:2: position: must be a finite number, got NaN"}},
		{name: "Inf", input: []byte(replaceRow(base, 3, setField(r3, 6, "+Inf"))), code: 1, want: []string{"lines.csv:3: unc: must be a finite number, got +Inf"}},
		{name: "huge number", input: []byte(replaceRow(base, 3, setField(r3, 6, "1e999"))), code: 1, want: []string{"lines.csv:3: unc: 1e999 is out of the range of a 64-bit float"}},
		{name: "zero uncertainty", input: []byte(replaceRow(base, 2, setField(r2, 6, "0"))), code: 1, want: []string{"lines.csv:2: unc: must be > 0, got 0"}},
		{name: "negative uncertainty", input: []byte(replaceRow(base, 2, setField(r2, 6, "-0.001"))), code: 1, want: []string{"lines.csv:2: unc: must be > 0, got -0.001"}},
		{name: "every row bad", input: []byte(allBad), code: 1, want: []string{"bandwright fit: ", "lines.csv: 82 problems", "lines.csv:2: unc: must be > 0, got 0", "lines.csv: ... and 79 more rows with the same problem in unc (rows 5–83)"}},
		{name: "absurd J", input: []byte(replaceRow(base, 2, setField(setField(r2, 2, "99999"), 4, "99998"))), code: 1,
			want: []string{"lines.csv:2: J_up: 99999 exceeds the limit J <= 1000 (a column mix-up?)"}},
		{name: "absurd v", input: []byte(replaceRow(base, 2, setField(r2, 1, "250"))), code: 1, want: []string{"lines.csv:2: v_up: 250 exceeds the limit v <= 100"}},
		{name: "negative v", input: []byte(replaceRow(base, 2, setField(r2, 3, "-1"))), code: 1, want: []string{"lines.csv:2: v_lo: must be >= 0, got -1"}},
		{name: "half-integer J", input: []byte(replaceRow(base, 2, setField(setField(r2, 2, "1.5"), 4, "0.5"))), code: 1, want: []string{"lines.csv:2: J_up: J = 1.5 is a half-integer, but state X ¹Σ⁺ has integer J (without --states"}},
		{name: "Delta J of 3", input: []byte(replaceRow(base, 2, setField(r2, 2, "3"))), code: 1, want: []string{"lines.csv:2: J_up: J_up - J_lo = +3 is outside the selection rules"}},
		{name: "unknown isotopologue", input: []byte(replaceRow(base, 2, setField(r2, 0, "12C99O"))), code: 1, want: []string{`lines.csv:2: species: unknown isotopologue "12C99O"`}},
		{name: "mixed units without a unit column", input: []byte(toMHz(3, false)), code: 1,
			want: []string{"lines.csv:", ": position: ", "in the same band (12C16O 1-0): the file seems to mix cm-1 and MHz; add a unit column (cm-1 or MHz)"}},
		{name: "all MHz without a unit column", input: []byte(toMHz(1, false)), code: 1,
			want: []string{"lines.csv:2: position: ", "cm-1 is beyond the dissociation energy of every diatomic molecule", "add a unit column (cm-1 or MHz)"}},
		{name: "mixed units with a unit column", input: []byte(toMHz(3, true)), code: 0},
		{name: "unknown columns kept", input: []byte(withCol("observer", func(i int) string { return fmt.Sprintf("obs-%d", i) })), code: 0,
			check: func(t *testing.T, out string) {
				res := readFile(t, filepath.Join(out, "residuals.csv"))
				if !strings.Contains(res, "observer") || !strings.Contains(res, "obs-17") {
					t.Errorf("residuals.csv lost the pass-through column")
				}
			}},
		{name: "very long line", input: []byte(long), code: 0,
			check: func(t *testing.T, out string) {
				if res := readFile(t, filepath.Join(out, "residuals.csv")); !strings.Contains(res, strings.Repeat("x", 2<<20)) {
					t.Errorf("the 2 MB comment was not passed through")
				}
			}},
		{name: "very many fields", input: []byte(replaceRow(base, 3, r3+strings.Repeat(",", 100000))), code: 1,
			want: []string{"lines.csv:3: row has 100009 fields, header has 9"}},
		{name: "invalid UTF-8 in a comment", input: []byte(replaceRow(base, 3, setField(r3, 8, "caf\xe9"))), code: 1,
			want: []string{"lines.csv:3: comment: not UTF-8 text: byte 0xE9 at character 4 (save the file as UTF-8)"}},
		{name: "invalid UTF-8 in a species", input: []byte(replaceRow(base, 3, setField(r3, 0, "12C\xff16O"))), code: 1,
			want: []string{"lines.csv:3: species: not UTF-8 text"}},
		{name: "binary file", input: []byte("\x00\x01\x02PK\x03\x04\xff\xfe"), code: 1, want: []string{"lines.csv:1: "}},
		// 16O nuclei have spin 0: a ¹Σg⁺ state of 16O2 has no odd-J levels.
		{name: "levels a 1Sigma-g+ state of 16O2 does not have", input: []byte(strings.ReplaceAll(base, "12C16O", "16O16O")), code: 1,
			want: []string{"lines.csv:2: 16O16O: the lines reach odd-J levels", "which a ¹Σg⁺ state of 16O16O does not have"}},
		{name: "a cm-1 position labelled MHz", input: []byte(replaceRow(withCol("unit", func(i int) string { return "cm-1" }), 5, row(base, 5)+",MHz")), code: 1,
			want: []string{"lines.csv:5: position: ", " MHz is 3.3", "times the median of the other lines of its band (12C16O 1-0, 41 lines): is the row's unit right"}},
		{name: "subnormal uncertainty", input: []byte(replaceRow(base, 3, setField(r3, 6, "1e-320"))), code: 1,
			want: []string{"lines.csv:3: unc: 1e-320 is below the resolution of a 64-bit float at the position"}},
		{name: "uncertainty of 1e152", input: []byte(replaceRow(base, 3, setField(r3, 6, "1e152"))), code: 1,
			want: []string{"lines.csv:3: unc: 1e+152 is not smaller than the position"}},
		{name: "hexadecimal float", input: []byte(replaceRow(base, 2, setField(r2, 5, "0x1.0c6p+11"))), code: 1,
			want: []string{`lines.csv:2: position: not a number: "0x1.0c6p+11" (write numbers in decimal notation`}},
		{name: "digit separators", input: []byte(replaceRow(base, 2, setField(r2, 5, "0x2_147p0"))), code: 1,
			want: []string{`lines.csv:2: position: not a number: "0x2_147p0" (write numbers in decimal notation`}},
		{name: "a million pass-through columns", input: []byte(manyColumns(base, 1000000, true)), code: 1,
			want: []string{"lines.csv:1: the header has 1000009 columns; bandwright reads at most 1000"}},
		{name: "990 pass-through columns", input: []byte(manyColumns(base, 990, false)), code: 0},
		{name: "CR-only line ends", input: []byte(strings.ReplaceAll(base, "\n", "\r")), code: 1,
			want: []string{"lines.csv: the lines end in a carriage return alone (classic Mac OS line breaks); save the file with LF or CR LF line breaks"}},
		{name: "a line above 16 MiB", input: []byte(replaceRow(base, 3, setField(r3, 8, strings.Repeat("x", 17<<20)))), code: 1,
			want: []string{"lines.csv:3: the line is longer than 16 MiB"}},
	}
	catalogue(t, "lines.csv", cases, nil, func(dir, file, out string) []string {
		return []string{"fit", file, "--out", out}
	})
}

// TestCataloguePeakList: peak lists given to `bandwright assign`.
func TestCataloguePeakList(t *testing.T) {
	base := readFile(t, peaksFile) // two comment lines, the header on line 3, peaks from line 4
	hdr, r4, r5 := row(base, 3), row(base, 4), row(base, 5)
	semicolons := strings.NewReplacer(",", ";", ".", ",").Replace(base)
	mixed := base
	for _, n := range []int{5, 9, 13} {
		f := strings.Split(row(mixed, n), ",")
		var pos float64
		fmt.Sscan(f[0], &pos)
		f[0], f[1], f[3] = fmt.Sprintf("%.3f", pos*29979.2458), "0.1", ""
		mixed = replaceRow(mixed, n, strings.Join(f, ","))
	}
	// The same without the unit column (the fourth).
	var nb strings.Builder
	for _, l := range strings.SplitAfter(mixed, "\n") {
		if f := strings.Split(l, ","); len(f) == 5 {
			l = strings.Join(append(f[:3:3], f[4]), ",")
		}
		nb.WriteString(l)
	}
	noUnit := nb.String()
	cases := []catCase{
		{name: "empty file", input: nil, code: 1, want: []string{"peaks.csv: no peaks: the file is empty"}},
		{name: "header only", input: []byte(hdr + "\n"), code: 1, want: []string{"peaks.csv:1: no peaks: the file has a header only"}},
		{name: "byte-order mark", input: bom(base), code: 0},
		{name: "CRLF line ends", input: crlf(base), code: 0},
		{name: "semicolons and decimal commas", input: []byte(semicolons), code: 1, want: []string{"peaks.csv:3: looks like semicolon-separated"}},
		{name: "decimal comma quoted", input: []byte(replaceRow(base, 4, setField(r4, 0, `"20,842693"`))), code: 1,
			want: []string{`peaks.csv:4: position: not a number: "20,842693" (decimal comma?`}},
		{name: "duplicated row", input: []byte(base + r5 + "\n"), code: 0, warnFile: "assign.md",
			want: []string{"peaks.csv:35: position: duplicate peak: the same position as row 5"}},
		{name: "NaN", input: []byte(replaceRow(base, 4, setField(r4, 0, "NaN"))), code: 1, want: []string{"peaks.csv:4: position: must be a finite number, got NaN"}},
		{name: "Inf", input: []byte(replaceRow(base, 5, setField(r5, 2, "Inf"))), code: 1, want: []string{"peaks.csv:5: intensity: must be a finite number, got Inf"}},
		{name: "zero uncertainty", input: []byte(replaceRow(base, 4, setField(r4, 1, "0"))), code: 1, want: []string{"peaks.csv:4: unc: must be > 0, got 0"}},
		{name: "negative uncertainty", input: []byte(replaceRow(base, 4, setField(r4, 1, "-0.005"))), code: 1, want: []string{"peaks.csv:4: unc: must be > 0, got -0.005"}},
		{name: "negative position", input: []byte(replaceRow(base, 4, setField(r4, 0, "-20.84"))), code: 1, want: []string{"peaks.csv:4: position: must be > 0, got -20.84"}},
		{name: "absurd position", input: []byte(replaceRow(base, 4, setField(r4, 0, "3e9"))), code: 1,
			want: []string{"peaks.csv:4: position: 3e9 cm-1 is beyond the dissociation energy of every diatomic molecule"}},
		{name: "mixed units, unit column says cm-1", input: []byte(mixed), code: 1,
			want: []string{"peaks.csv:5: position: ", "is the row's unit MHz? say so in its unit column"}},
		{name: "mixed units without a unit", input: []byte(noUnit), code: 1,
			want: []string{"peaks.csv:5: position: ", "if the peaks are in MHz, add a unit column (cm-1 or MHz) or give --unit MHz"}},
		{name: "unknown columns kept", input: []byte(base), code: 0,
			check: func(t *testing.T, out string) {
				if l := readFile(t, filepath.Join(out, "lines.csv")); !strings.Contains(row(l, 1), "truth") || !strings.Contains(l, "1H35Cl 0-0 R(0)") {
					t.Errorf("lines.csv lost the truth column")
				}
			}},
		{name: "very long line", input: []byte(replaceRow(base, 5, setField(r5, 4, strings.Repeat("y", 2<<20)))), code: 0},
		{name: "invalid UTF-8", input: []byte(replaceRow(base, 5, setField(r5, 4, "caf\xe9"))), code: 1,
			want: []string{"peaks.csv:5: truth: not UTF-8 text: byte 0xE9 at character 4"}},
		{name: "hexadecimal float", input: []byte(replaceRow(base, 4, setField(r4, 0, "0x1.5p4"))), code: 1,
			want: []string{`peaks.csv:4: position: not a number: "0x1.5p4" (write numbers in decimal notation`}},
		{name: "uncertainty of 1e152", input: []byte(replaceRow(base, 4, setField(r4, 1, "1e152"))), code: 1,
			want: []string{"peaks.csv:4: unc: 1e+152 is not smaller than the position"}},
		{name: "opposite signs of intensity", input: []byte(replaceRow(base, 5, setField(r5, 2, "-0.03"))), code: 1,
			want: []string{"peaks.csv:5: intensity: -0.03 has the opposite sign of the intensities above (row 4)"}},
	}
	catalogue(t, "peaks.csv", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "start.toml"), []byte(readFile(t, startFile)))
	}, func(dir, file, out string) []string {
		return []string{"assign", file, "--start", filepath.Join(dir, "start.toml"), "--bands", "0-0", "--spectrum", "rotation", "--out", out}
	})
}

// TestCatalogueStartFile: starting constants given to `bandwright assign --start`.
func TestCatalogueStartFile(t *testing.T) {
	base := readFile(t, startFile) // B_e of 1H35Cl on line 6
	set := func(key, val string) string {
		lines := strings.Split(base, "\n")
		for i, l := range lines {
			if strings.HasPrefix(l, key+" = ") {
				lines[i] = key + " = " + val
				break
			}
		}
		return strings.Join(lines, "\n")
	}
	cases := []catCase{
		{name: "empty file", input: nil, code: 1, want: []string{"start.toml: species: no [[species]] table"}},
		{name: "comments only", input: []byte("# to do\n"), code: 1, want: []string{"start.toml: species: no [[species]] table"}},
		{name: "byte-order mark", input: bom(base), code: 0},
		{name: "CRLF line ends", input: crlf(base), code: 0},
		{name: "decimal comma", input: []byte(set("B_e", "10,60")), code: 1, want: []string{"start.toml:6: ", "(decimal comma? numbers take a dot as decimal separator"}},
		{name: "semicolon", input: []byte(set("B_e", "10.60;")), code: 1, want: []string{"start.toml:6: "}},
		{name: "duplicated species", input: []byte(base + "\n" + base), code: 1, want: []string{"start.toml:15: species[3].name: 1H35Cl is listed twice (also as species 1)"}},
		{name: "duplicated key", input: []byte(strings.Replace(base, "B_e = 10.60\n", "B_e = 10.60\nB_e = 10.61\n", 1)), code: 1, want: []string{"start.toml:7: ", "already been defined"}},
		{name: "NaN", input: []byte(set("B_e", "nan")), code: 1, want: []string{"start.toml:6: 1H35Cl.B_e: must be a finite number"}},
		{name: "Inf", input: []byte(set("omega_e", "inf")), code: 1, want: []string{"start.toml:4: 1H35Cl.omega_e: must be a finite number"}},
		{name: "zero rotational constant", input: []byte(set("B_e", "0")), code: 1, want: []string{"start.toml:6: 1H35Cl.B_e: must be > 0, got 0"}},
		{name: "negative rotational constant", input: []byte(set("B_e", "-10.6")), code: 1, want: []string{"start.toml:6: 1H35Cl.B_e: must be > 0, got -10.6"}},
		{name: "absurd isotope", input: []byte(strings.Replace(base, `"1H35Cl"`, `"1H999Cl"`, 1)), code: 1, want: []string{"start.toml:3: species[1].name: unknown isotopologue \"1H999Cl\""}},
		{name: "absurd constants", input: []byte(set("B_e", "90")), code: 2, want: []string{"bandwright assign: ", "peaks.csv: no band could be locked onto the peaks", "1H35Cl 0-0"}},
		{name: "rotational constant above H2's", input: []byte(set("B_e", "1e3")), code: 1,
			want: []string{"start.toml:6: 1H35Cl.B_e: 1000 cm-1 is above the largest rotational constant of any molecule"}},
		{name: "omega_e = 1e308", input: []byte(set("omega_e", "1e308")), code: 1,
			want: []string{"start.toml:4: 1H35Cl.omega_e: 1e+308 cm-1 is beyond any constant of a diatomic molecule"}},
		{name: "unknown key", input: []byte(strings.Replace(base, "B_e = 10.60\n", "B_e = 10.60\ncolour = \"blue\"\n", 1)), code: 1, want: []string{"start.toml:7: species.colour: unknown key"}},
		{name: "very long line", input: []byte(base + "# " + strings.Repeat("z", 2<<20) + "\n"), code: 0},
		{name: "too large", input: []byte(base + strings.Repeat("# "+strings.Repeat("z", 1<<20)+"\n", 5)), code: 1, want: []string{"start.toml: the file is larger than 4 MiB, the limit for a start file"}},
		{name: "dotted tables 20 000 deep", input: []byte(base + "[" + strings.Repeat("a.", 20000) + "z]\n"), code: 1,
			want: []string{"start.toml:12: nested more than 64 levels deep"}},
		{name: "dotted key 65 deep", input: []byte(strings.Repeat("a.", 64) + "z = 1\n" + base), code: 1,
			want: []string{"start.toml:1: nested more than 64 levels deep"}},
		{name: "invalid UTF-8", input: []byte(strings.Replace(base, `"1H35Cl"`, "\"1H35Cl\xff\"", 1)), code: 1, want: []string{"start.toml:3: ", "invalid UTF-8"}},
	}
	catalogue(t, "start.toml", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "peaks.csv"), []byte(readFile(t, peaksFile)))
	}, func(dir, file, out string) []string {
		return []string{"assign", filepath.Join(dir, "peaks.csv"), "--start", file, "--bands", "0-0", "--spectrum", "rotation", "--out", out}
	})
}

// coStates is an electronic-states file for 12C16O: the ground state with the dissociation
// energy D0 ≈ 89 460 cm-1 (Huber & Herzberg 1979, from memory) and the a³Π state
// at T_e ≈ 48 687 cm-1 (same source, from memory) as the shifted ground manifold.
const coStates = `species = "12C16O"
dissociation_energy = 89460.0
[[state]]
label = "X"
term_energy = 0.0
spin_multiplicity = 1
lambda = 0
[[state]]
label = "a"
term_energy = 48687.0
spin_multiplicity = 3
lambda = 1
`

// TestCatalogueStatesFile: electronic-states files given to `bandwright thermo --states`.
func TestCatalogueStatesFile(t *testing.T) {
	base := coStates
	set := func(key, val string) string { return strings.Replace(base, key+" = ", key+" = "+val+" # was ", 1) }
	cases := []catCase{
		{name: "empty file", input: nil, code: 1, want: []string{"states.toml: state: no [[state]] given"}},
		{name: "byte-order mark", input: bom(base), code: 0},
		{name: "CRLF line ends", input: crlf(base), code: 0},
		{name: "decimal comma", input: []byte(strings.Replace(base, "89460.0", "89460,0", 1)), code: 1, want: []string{"states.toml:2: ", "(decimal comma?"}},
		{name: "duplicated state", input: []byte(base + "[[state]]\nlabel = \"X\"\nterm_energy = 0.0\nspin_multiplicity = 1\nlambda = 0\n"), code: 1,
			want: []string{"states.toml:15: state 3 (X): term_energy: 0 is already the term energy of state 1"}},
		{name: "NaN", input: []byte(set("dissociation_energy", "nan")), code: 1, want: []string{"states.toml:2: dissociation_energy: NaN cm-1 must be a finite number > 0"}},
		{name: "Inf", input: []byte(strings.Replace(base, "48687.0", "inf", 1)), code: 1, want: []string{"states.toml:10: state 2 (a): term_energy: +Inf must be a finite number"}},
		{name: "negative energy", input: []byte(strings.Replace(base, "48687.0", "-48687.0", 1)), code: 1, want: []string{"states.toml:10: state 2 (a): term_energy: -48687 must be a finite number ≥ 0 cm-1"}},
		{name: "zero dissociation energy", input: []byte(set("dissociation_energy", "0.0")), code: 1, want: []string{"states.toml:2: dissociation_energy: 0 cm-1 must be a finite number > 0"}},
		{name: "absurd lambda", input: []byte(strings.Replace(base, "lambda = 1\n", "lambda = 1000000\n", 1)), code: 1, want: []string{"states.toml:12: state 2 (a): lambda: 1000000 must be within 0…10"}},
		{name: "absurd multiplicity", input: []byte(strings.Replace(base, "spin_multiplicity = 3", "spin_multiplicity = 0", 1)), code: 1, want: []string{"states.toml:11: state 2 (a): spin_multiplicity: 0 must be within 1…20"}},
		{name: "unknown key", input: []byte(base + "colour = 3\n"), code: 1, want: []string{"states.toml:13: unknown key \"state.colour\""}},
		{name: "wrong species", input: []byte(strings.Replace(base, "12C16O", "13C16O", 1)), code: 1, want: []string{"states.toml:1: species: the electronic-states file is for 13C16O, but", "constants.json has 12C16O"}},
		{name: "very long line", input: []byte(base + "# " + strings.Repeat("z", 2<<20) + "\n"), code: 0},
		{name: "too large", input: []byte(base + "# " + strings.Repeat("z", 5<<20) + "\n"), code: 1,
			want: []string{"states.toml: the file is larger than 4 MiB, the limit for an electronic-states file"}},
		{name: "nested inline tables", input: []byte(base + "x = " + strings.Repeat("{a = ", 8000) + "1" + strings.Repeat("}", 8000) + "\n"), code: 1,
			want: []string{"states.toml:13: nested more than 64 levels deep"}},
		{name: "invalid UTF-8", input: []byte(strings.Replace(base, `label = "a"`, "label = \"a\xe9\"", 1)), code: 1, want: []string{"states.toml:9: state.label: invalid UTF-8"}},
		{name: "dissociation energy of 1e-9", input: []byte(strings.Replace(base, "89460.0", "1e-9", 1)), code: 0, warnFile: "thermo.json",
			want: []string{"the dissociation energy D0 = 1e-09 cm-1 lies below the first vibrationally excited level"}},
		{name: "constants path outside", input: []byte(base + "constants = \"../../../no-such/a-state.json\"\n"), code: 1,
			want: []string{"states.toml: state 2 (a): constants: ", "no-such/a-state.json", "no such file or directory"}},
	}
	catalogue(t, "states.toml", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "constants.json"), record(t))
	}, func(dir, file, out string) []string {
		return []string{"thermo", filepath.Join(dir, "constants.json"), "--states", file, "--temperatures", "298.15,1000", "--out", out}
	})
}

// basePipeline is a pipeline file for line lists with every section.
const basePipeline = `name = "co-cell"
input = "lines"
[fit]
model = "dunham"
terms = ["Y10", "Y20", "Y01", "Y11", "Y02"]
reject = 3.0
[thermo]
temperatures = [298.15, 1000.0]
composition = "natural"
[report]
formats = ["md"]
`

// TestCataloguePipelineFile: pipeline files given to `bandwright run --pipeline`.
func TestCataloguePipelineFile(t *testing.T) {
	base := basePipeline
	cases := []catCase{
		{name: "empty file", input: nil, code: 1, want: []string{"pipeline.toml: the file is empty"}},
		{name: "comments only", input: []byte("# to do\n"), code: 1, want: []string{"pipeline.toml: the file is empty"}},
		{name: "byte-order mark", input: bom(base), code: 0},
		{name: "CRLF line ends", input: crlf(base), code: 0},
		{name: "decimal comma", input: []byte(strings.Replace(base, "reject = 3.0", "reject = 3,0", 1)), code: 1, want: []string{"pipeline.toml:6: ", "(decimal comma?"}},
		{name: "duplicated key", input: []byte(strings.Replace(base, "reject = 3.0\n", "reject = 3.0\nreject = 4.0\n", 1)), code: 1, want: []string{"pipeline.toml:7: ", "already been defined"}},
		{name: "duplicated section", input: []byte(base + "[fit]\nround = true\n"), code: 1, want: []string{"pipeline.toml:12: ", "already been defined"}},
		{name: "NaN", input: []byte(strings.Replace(base, "reject = 3.0", "reject = nan", 1)), code: 1, want: []string{"pipeline.toml:6: fit.reject: must be a finite number ≥ 0"}},
		{name: "Inf", input: []byte(strings.Replace(base, "298.15, 1000.0", "298.15, inf", 1)), code: 1, want: []string{"pipeline.toml:8: thermo.temperatures: entry 2: +Inf is not a finite number"}},
		{name: "negative", input: []byte(strings.Replace(base, "reject = 3.0", "reject = -3.0", 1)), code: 1, want: []string{"pipeline.toml:6: fit.reject: must be a finite number ≥ 0"}},
		{name: "absurd temperature", input: []byte(strings.Replace(base, "298.15, 1000.0", "298.15, 1e9", 1)), code: 1, want: []string{"pipeline.toml:8: thermo.temperatures: entry 2: 1e+09 K is outside 1…100000 K"}},
		{name: "unknown key", input: []byte(strings.Replace(base, "model = ", "modle = ", 1)), code: 1, want: []string{"pipeline.toml:4: unknown key fit.modle"}},
		{name: "unknown term", input: []byte(strings.Replace(base, `"Y02"]`, `"Y02", "Z1"]`, 1)), code: 1, want: []string{`pipeline.toml:5: fit.terms: "Z1" is not a Dunham term (write Y<k><l>, e.g. Y10, Y01, Y11)`}},
		{name: "unknown model", input: []byte(strings.Replace(base, `model = "dunham"`, `model = "spline"`, 1)), code: 1, want: []string{"pipeline.toml:4: fit.model: \"spline\""}},
		{name: "very long line", input: []byte(base + "# " + strings.Repeat("z", 2<<20) + "\n"), code: 0},
		{name: "too large", input: []byte(base + "# " + strings.Repeat("z", 5<<20) + "\n"), code: 1,
			want: []string{"pipeline.toml: the file is larger than 4 MiB, the limit for a pipeline file"}},
		{name: "absurd Monte Carlo", input: []byte(strings.Replace(base, "composition = ", "mc = 1000000000\ncomposition = ", 1)), code: 1,
			want: []string{"pipeline.toml:9: thermo.mc: Monte Carlo draws 1000000000: give 0 (off) or 2…1000000"}},
		{name: "unknown pressure", input: []byte(strings.Replace(base, "composition = ", "pressure = \"5 parsecs\"\ncomposition = ", 1)), code: 1,
			want: []string{`pipeline.toml:9: thermo.pressure: "5 parsecs": choose 1bar or 1atm`}},
		{name: "unknown composition", input: []byte(strings.Replace(base, `"natural"`, `"weird"`, 1)), code: 1,
			want: []string{`pipeline.toml:9: thermo.composition: composition "weird": choose isotopologue or natural`}},
		{name: "unknown nuclear spin", input: []byte(strings.Replace(base, "composition = ", "nuclear_spin = \"x\"\ncomposition = ", 1)), code: 1,
			want: []string{`pipeline.toml:9: thermo.nuclear_spin: nuclear-spin convention "x"`}},
		{name: "NASA limits reversed", input: []byte(strings.Replace(base, "composition = ", "nasa_limits = \"6000:200\"\ncomposition = ", 1)), code: 1,
			want: []string{"pipeline.toml:9: thermo.nasa_limits: NASA-7 ranges 6000–1000–200 K: need 0 < low < breakpoint < high"}},
		{name: "8 000 nested inline tables", input: []byte(strings.Replace(base, "[report]", "x = "+strings.Repeat("{a = ", 8000)+"1"+strings.Repeat("}", 8000)+"\n[report]", 1)), code: 1,
			want: []string{"pipeline.toml:10: nested more than 64 levels deep"}},
		{name: "invalid UTF-8", input: []byte(strings.Replace(base, `"co-cell"`, "\"co-c\xe9ll\"", 1)), code: 1, want: []string{"pipeline.toml:1: ", "invalid UTF-8"}},
	}
	catalogue(t, "pipeline.toml", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "lines.csv"), []byte(baseLines))
	}, func(dir, file, out string) []string {
		return []string{"run", filepath.Join(dir, "lines.csv"), "--pipeline", file, "--out", out}
	})
}

// TestCatalogueConstantsRecord: constants records given to `bandwright thermo`
// and `bandwright predict`.
func TestCatalogueConstantsRecord(t *testing.T) {
	base := record(t)
	edit := func(f func(m map[string]any)) []byte {
		var m map[string]any
		if err := json.Unmarshal(base, &m); err != nil {
			t.Fatal(err)
		}
		f(m)
		b, err := json.MarshalIndent(m, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	param := func(m map[string]any, name string) map[string]any {
		for _, p := range m["parameters"].([]any) {
			if p := p.(map[string]any); p["name"] == name {
				return p
			}
		}
		t.Fatalf("no %s", name)
		return nil
	}
	idx := func(m map[string]any, name string) int { // place in the covariance
		k := 0
		for _, p := range m["parameters"].([]any) {
			p := p.(map[string]any)
			if p["name"] == name {
				return k
			}
			if p["fixed"] != true {
				k++
			}
		}
		t.Fatalf("no %s", name)
		return -1
	}
	cov := func(m map[string]any) [][]any {
		var out [][]any
		for _, r := range m["covariance"].([]any) {
			out = append(out, r.([]any))
		}
		return out
	}
	var oneLine bytes.Buffer
	if err := json.Compact(&oneLine, base); err != nil {
		t.Fatal(err)
	}
	y01 := strings.Index(string(base), `"name": "Y01"`)
	if y01 < 0 {
		t.Fatal("no Y01 in the record")
	}
	at := func(s string) string { // line of the first s after Y01, for messages
		i := y01 + strings.Index(string(base[y01:]), s)
		return fmt.Sprintf("constants.json:%d:", bytes.Count(base[:i], []byte("\n"))+1)
	}
	valueLine := at(`"value"`)
	cases := []catCase{
		{name: "empty file", input: nil, code: 1, want: []string{"constants.json: not a constants record: the file is empty"}},
		{name: "byte-order mark", input: bom(string(base)), code: 0},
		{name: "CRLF line ends", input: crlf(string(base)), code: 0},
		{name: "one long line", input: oneLine.Bytes(), code: 0},
		{name: "cut short", input: base[:len(base)/2], code: 1, want: []string{"constants.json: not a constants record: the file ends in the middle of the JSON (cut short?)"}},
		{name: "decimal comma", input: bytes.Replace(base, []byte(`"value": `), []byte(`"value": 1,`), 1), code: 1, want: []string{"constants.json:", "not a constants record: invalid character"}},
		{name: "NaN", input: editValue(base, y01, "NaN"), code: 1, want: []string{valueLine, "not a constants record: invalid character 'N'"}},
		{name: "duplicated key", input: editValue(base, y01, `1.93, "value": 1.94`), code: 1, want: []string{valueLine, "parameters[2].value: the key is given twice"}},
		{name: "negative sigma", input: edit(func(m map[string]any) { param(m, "Y01")["sigma"] = -1e-6 }), code: 1, want: []string{"constants.json: parameters: Y01: value and sigma must be finite (sigma ≥ 0)"}},
		{name: "negative variance", input: edit(func(m map[string]any) {
			c, i := cov(m), idx(m, "Y01")
			c[i][i] = -c[i][i].(float64)
		}), code: 1, want: []string{"constants.json: covariance: the variance of Y01 is negative"}},
		{name: "correlation beyond 1", input: edit(func(m map[string]any) {
			c, i, j := cov(m), idx(m, "Y01"), idx(m, "Y11")
			x := 1.2 * math.Sqrt(c[i][i].(float64)*c[j][j].(float64))
			c[i][j], c[j][i] = x, x
		}), code: 1, want: []string{"constants.json: covariance: the correlation of Y01 and Y11 is 1.2, outside −1…1"}},
		{name: "absurd indices", input: edit(func(m map[string]any) { param(m, "Y01")["l"] = 7.0 }), code: 1, want: []string{"constants.json: parameters: Y01: k = 0, l = 7 do not match the name"}},
		{name: "unit", input: edit(func(m map[string]any) { m["unit"] = "MHz" }), code: 1, want: []string{`constants.json: unit: "MHz"`}},
		{name: "unknown field", input: edit(func(m map[string]any) { m["comment"] = "ignored by this version" }), code: 0},
		{name: "invalid UTF-8", input: bytes.Replace(base, []byte(`"model": "dunham"`), []byte("\"model\": \"dunh\xe4m\""), 1), code: 1, want: []string{"constants.json:", ": not UTF-8 text: byte 0xE4"}},
		{name: "future schema", input: bytes.Replace(base, []byte("bandwright.constants/2"), []byte("bandwright.constants/3"), 1), code: 1,
			want: []string{`constants.json: schema: "bandwright.constants/3" was written by a newer bandwright; this version reads "bandwright.constants/2"`}},
		{name: "two records", input: append(append([]byte{}, base...), base...), code: 1, want: []string{"constants.json:", "more follows the record's closing brace"}},
		{name: "nested 100 000 deep", input: bytes.Replace(base, []byte(`"model":`), []byte(`"x": `+strings.Repeat(`{"a":`, 100000)+"1"+strings.Repeat("}", 100000)+`, "model":`), 1), code: 1,
			want: []string{"constants.json:", ": not a constants record: nested more than 64 levels deep"}},
	}
	t.Run("thermo", func(t *testing.T) {
		catalogue(t, "constants.json", cases, nil, func(dir, file, out string) []string {
			return []string{"thermo", file, "--temperatures", "298.15,1000", "--mc", "20", "--out", out}
		})
	})
	t.Run("predict", func(t *testing.T) {
		catalogue(t, "constants.json", cases, nil, func(dir, file, out string) []string {
			return []string{"predict", file, "--bands", "1-0", "--out", out + ".csv"}
		})
	})
}

// manyColumns adds n pass-through columns to the header of a line list, and
// to every row unless headerOnly.
func manyColumns(base string, n int, headerOnly bool) string {
	var b strings.Builder
	for i, l := range strings.Split(strings.TrimSuffix(base, "\n"), "\n") {
		b.WriteString(l)
		for k := range n {
			if i > 0 && headerOnly {
				break
			}
			if i == 0 {
				fmt.Fprintf(&b, ",x%d", k)
			} else {
				b.WriteString(",1")
			}
		}
		b.WriteByte('\n')
	}
	return b.String()
}

// editValue replaces the number after the first "value": following offset from.
func editValue(b []byte, from int, with string) []byte {
	i := from + bytes.Index(b[from:], []byte(`"value": `)) + len(`"value": `)
	j := i + bytes.IndexAny(b[i:], ",\n")
	out := append([]byte{}, b[:i]...)
	out = append(out, with...)
	return append(out, b[j:]...)
}

// o2States is an electronic-states file for 16O2 X³Σg⁻ with a starting value
// of B (the lead's recollection of B0 = 43100.4 MHz in cm-1, from memory).
const o2States = `species = "16O2"
[[state]]
label = "X"
term_energy = 0.0
spin_multiplicity = 3
lambda = 0
symmetry = "g-"
[state.start]
B = 1.4377
`

// o2LineList are the 60 GHz fine-structure lines of 16O2 (MHz) as the lead
// recalls them (from memory), given by N and J: the N+ and N− lines of
// N = 1 … 19 without the N = 1, J = 1 ← 0 line.
func o2LineList() string {
	lines := [][3]float64{
		{1, 56264.774, 0}, {3, 58446.588, 62486.255}, {5, 59590.982, 60306.056}, {7, 60434.778, 59164.204},
		{9, 61150.559, 58323.875}, {11, 61800.154, 57612.485}, {13, 62411.220, 56968.209},
		{15, 62997.982, 56363.393}, {17, 63568.525, 55783.810}, {19, 64127.776, 55221.371},
	}
	var b strings.Builder
	b.WriteString("species,v_up,J_up,v_lo,J_lo,N_up,N_lo,F_up,F_lo,parity_up,parity_lo,state_up,state_lo,position,unc,unit\n")
	for _, l := range lines {
		n := int(l[0])
		fmt.Fprintf(&b, "16O2,0,%d,0,%d,%d,%d,,,,,,,%.3f,0.02,MHz\n", n, n+1, n, n, l[1])
		if l[2] > 0 {
			fmt.Fprintf(&b, "16O2,0,%d,0,%d,%d,%d,,,,,,,%.3f,0.02,MHz\n", n, n-1, n, n, l[2])
		}
	}
	return b.String()
}

// TestCatalogueOpenShellLines: open-shell line lists given to `bandwright fit
// --states`: each bad level is refused naming the file, the row and the field.
func TestCatalogueOpenShellLines(t *testing.T) {
	base := o2LineList()
	r2 := row(base, 2)
	cases := []catCase{
		{name: "good", input: []byte(base), code: 0},
		{name: "N and J against S", input: []byte(replaceRow(base, 2, setField(r2, 5, "4"))), code: 1, want: []string{"lines.csv:2: N_up: N = 4 and J = 1 do not couple with S = 1"}},
		{name: "F and N disagree", input: []byte(replaceRow(base, 2, setField(r2, 7, "3"))), code: 1, want: []string{"lines.csv:2: N_up: N = 1, J = 1 and F3 disagree"}},
		{name: "wrong parity", input: []byte(replaceRow(base, 2, setField(r2, 9, "e"))), code: 1, want: []string{"lines.csv:2: parity_up: the F2 level with J = 1 has parity f in X ³Σg⁻, not e"}},
		{name: "unknown state", input: []byte(replaceRow(base, 2, setField(r2, 11, "b"))), code: 1, want: []string{`lines.csv:2: state_up: no state is labelled "b" in the electronic-states file (its states: X)`}},
		{name: "half-integer J", input: []byte(replaceRow(base, 2, setField(setField(r2, 2, "1.5"), 4, "2.5"))), code: 1, want: []string{"lines.csv:2: J_up: J = 1.5 is a half-integer, but state X ³Σg⁻ has integer J"}},
		{name: "bad parity label", input: []byte(replaceRow(base, 2, setField(r2, 10, "+"))), code: 1, want: []string{`lines.csv:2: parity_lo: "+" is not a parity label: write e or f`}},
		{name: "Delta J of 2", input: []byte(replaceRow(base, 2, setField(r2, 4, "3"))), code: 1, want: []string{"lines.csv:2: J_up: J_up - J_lo = -2 is outside the selection rules of open-shell and electronic spectra"}},
	}
	catalogue(t, "lines.csv", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "o2.toml"), []byte(o2States))
	}, func(dir, file, out string) []string {
		return []string{"fit", file, "--states", filepath.Join(dir, "o2.toml"), "--model", "term-values", "--terms", "B,lambda,lambda_D,gamma,gamma_D", "--fix", "D=4.84e-6", "--out", out}
	})
}

// TestCatalogueStartValues: the [state.start] table of an electronic-states
// file given to `bandwright fit --states`.
func TestCatalogueStartValues(t *testing.T) {
	base := o2States
	cases := []catCase{
		{name: "good", input: []byte(base), code: 0},
		{name: "unknown constant", input: []byte(base + "Y01 = 1.4\n"), code: 1, want: []string{"o2.toml:10: state 1 (X): start.Y01: not a constant (starting values are given for T, B, D"}},
		{name: "not finite", input: []byte(strings.Replace(base, "B = 1.4377", "B = nan", 1)), code: 1, want: []string{"o2.toml:9: state 1 (X): start.B: NaN must be a finite number (cm-1)"}},
		{name: "label with a space", input: []byte(strings.Replace(base, `label = "X"`, `label = "X 1"`, 1)), code: 1, want: []string{`o2.toml:3: state 1: label: "X 1": a label is non-empty, without spaces`}},
	}
	catalogue(t, "o2.toml", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "lines.csv"), []byte(o2LineList()))
	}, func(dir, file, out string) []string {
		return []string{"fit", filepath.Join(dir, "lines.csv"), "--states", file, "--model", "term-values", "--terms", "B,lambda,lambda_D,gamma,gamma_D", "--fix", "D=4.84e-6", "--out", out}
	})
}

// TestCatalogueTransitions: lists of transitions given to `bandwright predict
// --lines` (positions optional).
func TestCatalogueTransitions(t *testing.T) {
	base := "species,v_up,J_up,v_lo,J_lo\n12C16O,1,1,0,0\n12C16O,1,0,0,1\n"
	cases := []catCase{
		{name: "good", input: []byte(base), code: 0},
		{name: "with positions", input: []byte("species,v_up,J_up,v_lo,J_lo,position,unc\n12C16O,1,1,0,0,2147.08,0.001\n"), code: 0},
		{name: "missing column", input: []byte("species,v_up,J_up,v_lo\n12C16O,1,1,0\n"), code: 1, want: []string{"search.csv:1: J_lo: required column missing"}},
		{name: "species not in the record", input: []byte(base + "13C16O,1,1,0,0\n"), code: 1, want: []string{"search.csv:4: species: 13C16O is not in the constants record"}},
		{name: "half-integer J", input: []byte(base + "12C16O,1,1.5,0,0.5\n"), code: 1, want: []string{"search.csv:4: J_up: J = 1.5 is a half-integer, but state X ¹Σ⁺ has integer J"}},
		{name: "parity on a 1Sigma level", input: []byte("species,v_up,J_up,v_lo,J_lo,parity_up\n12C16O,1,1,0,0,e\n"), code: 1, want: []string{"search.csv:2: parity_up: a level of X ¹Σ⁺ takes no parity label"}},
	}
	catalogue(t, "search.csv", cases, func(t *testing.T, dir string) {
		writeFile(t, filepath.Join(dir, "constants.json"), record(t))
	}, func(dir, file, out string) []string {
		return []string{"predict", filepath.Join(dir, "constants.json"), "--lines", file, "--unit", "GHz", "--out", out}
	})
}

// TestCatalogueFlags: values on the command line that no run can honour are
// refused with exit code 1 and a message naming the flag, and nothing is
// written.
func TestCatalogueFlags(t *testing.T) {
	dir := t.TempDir()
	writeFile(t, filepath.Join(dir, "peaks.csv"), []byte(readFile(t, peaksFile)))
	writeFile(t, filepath.Join(dir, "start.toml"), []byte(readFile(t, startFile)))
	writeFile(t, filepath.Join(dir, "p.toml"), []byte("input = \"peaks\"\n[assign]\nstart = \"start.toml\"\nbands = [\"0-0\"]\nspectrum = \"rotation\"\ntemperature = 0.0\n"))
	assignArgs := []string{"assign", filepath.Join(dir, "peaks.csv"), "--start", filepath.Join(dir, "start.toml"), "--bands", "0-0", "--spectrum", "rotation"}
	for _, c := range []struct {
		name string
		args []string
		want string
	}{
		{"temperature 0", append(append([]string{}, assignArgs...), "--temperature", "0", "--out", filepath.Join(dir, "o1")),
			"assign: --temperature 0: give the sample temperature in K, > 0 (leave the flag out for 296 K)"},
		{"temperature 0 in a pipeline file", []string{"run", filepath.Join(dir, "peaks.csv"), "--pipeline", filepath.Join(dir, "p.toml"), "--out", filepath.Join(dir, "o2")},
			"p.toml:6: assign.temperature: 0 K must lie within 1…100000 K (leave the key out for 296 K)"},
		{"the root as output folder", append(append([]string{}, assignArgs...), "--out", "/"),
			"--out /: the output folder is replaced as a whole, so it cannot be a file system's root"},
	} {
		t.Run(c.name, func(t *testing.T) {
			before := snapshot(t, dir)
			code, _, stderr := runCLI(c.args...)
			if code != 1 || !strings.Contains(stderr, c.want) {
				t.Errorf("exit %d: %s\nwant %q", code, stderr, c.want)
			}
			if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
				t.Errorf("changed: %v", d)
			}
		})
	}
}

// TestPoorFitStopsTheChain: a chain whose fit has s far above 1 (one line
// assigned to the wrong J with a tiny uncertainty, rejection off) stops
// before thermo with exit code 2 and names the line; accept_poor_fit = true
// lets it go on.
func TestPoorFitStopsTheChain(t *testing.T) {
	dir := t.TempDir()
	r9 := row(baseLines, 9)
	f := strings.Split(r9, ",")
	f[2] = fmt.Sprint(atoi(t, f[2]) + 2) // J_up and J_lo two higher: the same branch, the wrong line
	f[4] = fmt.Sprint(atoi(t, f[4]) + 2)
	writeFile(t, filepath.Join(dir, "lines.csv"), []byte(replaceRow(baseLines, 9, strings.Join(f, ","))))
	pipe := strings.Replace(basePipeline, "reject = 3.0", "reject = 0.0", 1)
	writeFile(t, filepath.Join(dir, "p.toml"), []byte(pipe))
	writeFile(t, filepath.Join(dir, "accept.toml"), []byte(strings.Replace(pipe, "reject = 0.0", "reject = 0.0\naccept_poor_fit = true", 1)))
	before := snapshot(t, dir)
	code, _, stderr := runCLI("run", filepath.Join(dir, "lines.csv"), "--pipeline", filepath.Join(dir, "p.toml"), "--out", filepath.Join(dir, "out"))
	if code != 2 || !strings.Contains(stderr, "the fit is too poor to go on to thermo: its dimensionless standard deviation s = ") ||
		!strings.Contains(stderr, "the worst line is "+filepath.Join(dir, "lines.csv")+":9 ") || !strings.Contains(stderr, "accept_poor_fit = true") {
		t.Errorf("exit %d: %s", code, stderr)
	}
	if d := diffSnapshots(before, snapshot(t, dir)); len(d) > 0 {
		t.Errorf("changed: %v", d)
	}
	if code, _, stderr := runCLI("run", filepath.Join(dir, "lines.csv"), "--pipeline", filepath.Join(dir, "accept.toml"), "--out", filepath.Join(dir, "out")); code != 0 {
		t.Errorf("accepted: exit %d: %s", code, stderr)
	}
}

func atoi(t *testing.T, s string) int {
	t.Helper()
	var n int
	if _, err := fmt.Sscan(s, &n); err != nil {
		t.Fatal(err)
	}
	return n
}
