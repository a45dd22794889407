package pipelines

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"

	"bandwright/internal/failure"
	"bandwright/internal/textcheck"
)

// The input files of every stage are identified in its provenance by their
// SHA-256; a stage hashes them before and after reading, and refuses an input
// that changed in between.

// HashFiles returns the SHA-256 (hex) of each file.
func HashFiles(paths []string) ([]string, error) {
	out := make([]string, len(paths))
	for i, p := range paths {
		h, err := HashFile(p)
		if err != nil {
			return nil, err
		}
		out[i] = h
	}
	return out, nil
}

// HashFile returns the SHA-256 (hex) of a file's content.
func HashFile(p string) (string, error) {
	if why := textcheck.NotRegular(p); why != "" {
		return "", failure.Errorf(failure.BadInput, "pipelines: %s %s", p, why)
	}
	f, err := os.Open(p)
	if err != nil {
		return "", fmt.Errorf("pipelines: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("pipelines: %s: %w", p, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// checkUnchanged refuses inputs whose content is no longer that of hashes
// (HashFiles before they were read): a file still being written would give
// results that belong to no version of it.
func checkUnchanged(paths, hashes []string) error {
	after, err := HashFiles(paths)
	if err != nil {
		return err
	}
	for i := range after {
		if after[i] != hashes[i] {
			return fmt.Errorf("pipelines: %s changed while it was being read; run again when it is complete", paths[i])
		}
	}
	return nil
}
