package nightly

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"github.com/google/renameio/v2"
)

// ReferenceDir is the folder of the archive's reference constants records.
const ReferenceDir = "reference"

// ReferenceKey names the reference record of a set of species: the sorted
// isotopologue labels joined by "+" ("12C16O+13C16O"). Labels are letters and
// digits only, so the key is a safe file name.
func ReferenceKey(species []string) string {
	s := append([]string(nil), species...)
	sort.Strings(s)
	return strings.Join(s, "+")
}

// safeKey reports whether a reference key is a plain file name of letters,
// digits and "+".
func safeKey(k string) bool {
	if k == "" || len(k) > 200 {
		return false
	}
	for _, c := range k {
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '+') {
			return false
		}
	}
	return true
}

// adoptReference makes the record offer (in the results folder out, relative
// to the archive) the archive's reference for its species set when there is
// none yet: written to a temporary file and renamed into place, so a reader
// sees the whole record or none. Must be called under the ledger lock.
func (a *archive) adoptReference(out string, offer *ReferenceOffer) error {
	if offer == nil || !safeKey(offer.Key) {
		return nil
	}
	dst := filepath.Join(a.dir, ReferenceDir, offer.Key+".json")
	if _, err := os.Lstat(dst); err == nil {
		return nil
	}
	src := filepath.Join(a.dir, filepath.FromSlash(out), filepath.FromSlash(offer.Path))
	b, err := os.ReadFile(src)
	if err != nil {
		return fmt.Errorf("nightly: the reference record offered by %s cannot be read: %w", out, err)
	}
	if err := os.MkdirAll(filepath.Join(a.dir, ReferenceDir), 0o755); err != nil {
		return fmt.Errorf("nightly: the archive %s cannot be written: %w", a.shown, err)
	}
	if err := renameio.WriteFile(dst, b, 0o644); err != nil {
		return fmt.Errorf("nightly: writing the reference %s: %w", dst, err)
	}
	return nil
}
