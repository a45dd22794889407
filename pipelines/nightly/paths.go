package nightly

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
)

// realDir resolves a folder's absolute path with symbolic links evaluated.
func realDir(p, what string) (string, error) {
	abs, err := filepath.Abs(p)
	if err != nil {
		return "", fmt.Errorf("nightly: %s %s: %w", what, p, err)
	}
	real, err := filepath.EvalSymlinks(abs)
	if err != nil {
		return "", fmt.Errorf("nightly: %s %s: %w", what, p, err)
	}
	st, err := os.Stat(real)
	if err != nil {
		return "", fmt.Errorf("nightly: %s %s: %w", what, p, err)
	}
	if !st.IsDir() {
		return "", fmt.Errorf("nightly: %s %s is not a folder", what, p)
	}
	return real, nil
}

// resolve returns the absolute path of p with the links of its longest
// existing prefix evaluated (p itself need not exist).
func resolve(p string) (string, error) {
	abs, err := filepath.Abs(p)
	if err != nil {
		return "", err
	}
	rest := ""
	for cur := abs; ; {
		if real, err := filepath.EvalSymlinks(cur); err == nil {
			return filepath.Join(real, rest), nil
		}
		parent := filepath.Dir(cur)
		if parent == cur {
			return abs, nil
		}
		rest = filepath.Join(filepath.Base(cur), rest)
		cur = parent
	}
}

// within reports whether p is root or inside it (both absolute and clean).
func within(root, p string) bool {
	if p == root {
		return true
	}
	rel, err := filepath.Rel(root, p)
	if err != nil {
		return false
	}
	return rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator)) && !filepath.IsAbs(rel)
}
