//go:build ignore

// generate.go writes bandwright's bundled demo: an INVENTED measurement. The
// "Larkspur Ridge gas-cell laboratory" does not exist; its FTIR spectrum of a
// hot carbon-monoxide cell is simulated here from published constants, so the
// demo exercises the whole chain (assign → fit → thermo → report) with known
// answers.
//
// The spectrum: 12C16O and 13C16O (natural abundance) at 700 K, bands 1-0 and
// 2-1, from the Huber & Herzberg (1979) constants of 12C16O X¹Σ⁺ (from memory:
// ωe 2169.81358, ωexe 13.28831, ωeye 0.010511, Be 1.93128087, αe 0.01750441,
// De 6.12147e-6 cm⁻¹) with Dunham mass scaling and AME2020 masses, spoiled
// like a real peak list by package assign/synth: position and intensity
// noise, a detection limit, 5 % of the lines lost and spurious peaks. The
// column "truth" carries the true assignment so the result can be checked.
// The starting constants are deliberately off, as a spectroscopist's first
// guess would be.
//
// Run from the repository root:   go run ./testdata/demo/generate.go
package main

import (
	"fmt"
	"os"
	"path/filepath"

	"bandwright/assign/synth"
)

const start = `# INVENTED DEMO — starting constants for the fictional Larkspur Ridge CO cell.
# A first guess in equilibrium notation (Huber & Herzberg 1979 values, from
# memory, deliberately perturbed: omega_e by +1.5 cm-1, B_e by +0.1 %).
[[species]]
name = "12C16O"
omega_e = 2171.3
omega_e_x_e = 13.3
omega_e_y_e = 0.0105
B_e = 1.9332
alpha_e = 0.01785
D_e = 6.0e-6
abundance = 0.9865

[[species]]
name = "13C16O"     # constants follow from 12C16O by the Dunham mass scaling
abundance = 0.0108
`

const pipeline = `# INVENTED DEMO — the pipeline the fictional Larkspur Ridge laboratory runs
# after each CO cell session.
name = "larkspur-co-cell (invented demo)"
input = "peaks"

[assign]
start = "start.toml"
bands = ["1-0", "2-1"]
spectrum = "ir"
temperature = 700.0

[fit]
# no model or terms: bandwright chooses them (F-test) and says what it chose
reject = 3.0

[thermo]
range = "100:3000:100"
composition = "natural"
mc = 200
seed = 20261201

[report]
formats = ["html", "md"]
`

func main() {
	dir := filepath.Join("testdata", "demo")
	spec := synth.Spec{Reference: "12C16O", Terms: synth.CO,
		Species:  []synth.Species{{Label: "12C16O", Abundance: 0.98654}, {Label: "13C16O", Abundance: 0.01084}},
		Bands:    [][2]int{{1, 0}, {2, 1}},
		Spectrum: "ir", Temperature: 700, Threshold: 2e-4, Unc: 2e-4, UncMax: 4e-3,
		IntensityNoise: 0.1, Missing: 0.05, Spurious: 0.10, Resolution: 0.004, Seed: 20261201}
	peaks, err := synth.Generate(spec)
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	f, err := os.Create(filepath.Join(dir, "peaks.csv"))
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	fmt.Fprintln(f, "# INVENTED DEMO DATA — not a measurement. Larkspur Ridge gas-cell laboratory (fictional): FTIR peak list of a CO cell at 700 K.")
	fmt.Fprintln(f, "# Simulated by testdata/demo/generate.go from Huber & Herzberg (1979) CO constants; the truth column holds the true assignment.")
	if err := synth.WriteCSV(f, peaks, "", true); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	f.Close()
	for name, text := range map[string]string{"start.toml": start, "pipeline.toml": pipeline} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
	}
	fmt.Printf("peaks.csv: %d peaks; start.toml; pipeline.toml\n", len(peaks))
}
