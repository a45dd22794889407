package nightly

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
)

// ManifestFile is the name of the manifest in every results folder.
const ManifestFile = "manifest.json"

// ManifestSchema tags manifest.json.
const ManifestSchema = "bandwright.nightly-manifest/1"

// Manifest describes a results folder: what went in, what program and
// pipeline made it, when, with what outcome, and the SHA-256 of every file it
// holds (so a reader can check the folder is complete and untouched).
type Manifest struct {
	Schema         string     `json:"schema"`
	Program        string     `json:"program"`
	Version        string     `json:"version"`
	PipelineSHA256 string     `json:"pipeline_sha256"`
	Shard          string     `json:"shard"`
	Input          FileHash   `json:"input"`
	Inputs         []FileHash `json:"inputs"` // the input, then any other file the job read
	Started        string     `json:"started"`
	Finished       string     `json:"finished"`
	Outcome        Status     `json:"outcome"`
	Files          []FileHash `json:"files"` // every file of the folder except the manifest
	Constants      []Constant `json:"constants"`
	Notes          []string   `json:"notes"`
}

// FileHash is a file (name relative to its folder, '/' separators) with its
// SHA-256 (hex) and size in bytes.
type FileHash struct {
	Name   string `json:"name"`
	SHA256 string `json:"sha256"`
	Size   int64  `json:"size"`
}

// hashTree lists the regular files under dir with their SHA-256, syncing each
// to disk (and each folder) on the way. Symbolic links and other special files
// are refused: a results folder must be self-contained.
func hashTree(dir string, sync bool) ([]FileHash, error) {
	var out []FileHash
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		switch {
		case d.IsDir():
			if sync {
				syncPath(p)
			}
			return nil
		case !d.Type().IsRegular():
			return fmt.Errorf("the pipeline left %s, which is not a regular file", filepath.ToSlash(rel))
		}
		fh, err := hashOne(p, sync)
		if err != nil {
			return err
		}
		fh.Name = filepath.ToSlash(rel)
		out = append(out, fh)
		return nil
	})
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out, err
}

func hashOne(p string, sync bool) (FileHash, error) {
	flag := os.O_RDONLY
	if sync {
		flag = os.O_RDWR // some systems refuse fsync on a read-only descriptor
	}
	f, err := os.OpenFile(p, flag, 0)
	if err != nil {
		return FileHash{}, err
	}
	defer f.Close()
	h := sha256.New()
	n, err := copyBuf(h, f)
	if err != nil {
		return FileHash{}, err
	}
	if sync {
		if err := f.Sync(); err != nil {
			return FileHash{}, err
		}
	}
	return FileHash{SHA256: hex.EncodeToString(h.Sum(nil)), Size: n}, nil
}

func writeManifest(dir string, m *Manifest) error {
	f, err := os.OpenFile(filepath.Join(dir, ManifestFile), os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o644)
	if err != nil {
		if errors.Is(err, fs.ErrExist) {
			return fmt.Errorf("the pipeline wrote a file named %s, which is reserved for the nightly manifest", ManifestFile)
		}
		return err
	}
	enc := json.NewEncoder(f)
	enc.SetIndent("", "  ")
	if err := enc.Encode(m); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	syncPath(dir)
	return nil
}

// ReadManifest reads the manifest of a results folder.
func ReadManifest(dir string) (*Manifest, error) {
	b, err := os.ReadFile(filepath.Join(dir, ManifestFile))
	if err != nil {
		return nil, fmt.Errorf("nightly: %w", err)
	}
	var m Manifest
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, fmt.Errorf("nightly: %s: %w", filepath.Join(dir, ManifestFile), err)
	}
	if m.Schema != ManifestSchema {
		return nil, fmt.Errorf("nightly: %s: schema %q, want %q", filepath.Join(dir, ManifestFile), m.Schema, ManifestSchema)
	}
	return &m, nil
}

// VerifyFolder checks that a results folder holds exactly the files its
// manifest lists, with the same SHA-256.
func VerifyFolder(dir string, m *Manifest) error {
	files, err := hashTree(dir, false)
	if err != nil {
		return fmt.Errorf("nightly: %s: %w", dir, err)
	}
	got := map[string]string{}
	for _, f := range files {
		if f.Name != ManifestFile {
			got[f.Name] = f.SHA256
		}
	}
	if len(got) != len(m.Files) {
		return fmt.Errorf("nightly: %s holds %d files, its manifest lists %d", dir, len(got), len(m.Files))
	}
	for _, f := range m.Files {
		if got[f.Name] != f.SHA256 {
			return fmt.Errorf("nightly: %s: %s is missing or differs from its manifest", dir, f.Name)
		}
	}
	return nil
}

func syncPath(p string) {
	if f, err := os.Open(p); err == nil {
		f.Sync()
		f.Close()
	}
}
