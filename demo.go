// Package bandwright holds the data bundled into the program: the invented
// demo scenarios of testdata/demo (see their README.md files), embedded so that
// `bandwright demo` needs no checkout. The code lives in the sub-packages: fit,
// assign, thermo and pipelines.
package bandwright

import "embed"

// Demo holds the invented demo scenarios of testdata/demo (their generators
// stay out): the CO cell's peak list and the NO cell's line list.
//
//go:embed testdata/demo/peaks.csv testdata/demo/start.toml testdata/demo/pipeline.toml testdata/demo/README.md
//go:embed testdata/demo/nitric-oxide/lines.csv testdata/demo/nitric-oxide/states.toml testdata/demo/nitric-oxide/pipeline.toml testdata/demo/nitric-oxide/README.md
var Demo embed.FS
