//go:build !unix

package nightly

import "os"

// openInput opens an inbox file for reading.
func openInput(p string) (*os.File, error) { return os.Open(p) }
