// Package bandwright holds the data bundled into the program: the invented
// demo scenario of testdata/demo (see its README.md), embedded so that
// `bandwright demo` needs no checkout. The code lives in the sub-packages: fit,
// assign, thermo and pipelines.
package bandwright

import "embed"

// Demo holds testdata/demo: the invented demo scenario and its generator.
//
//go:embed testdata/demo/peaks.csv testdata/demo/start.toml testdata/demo/pipeline.toml testdata/demo/README.md
var Demo embed.FS
