package nightly

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"
)

// recover cleans up after crashed runs: half-built results are removed,
// complete results without their ok row are adopted, ok rows without their
// history rows get them.
func (r *runner) recover() error {
	r.sweepWork()
	if err := r.adoptOrphans(); err != nil {
		return err
	}
	return r.backfill()
}

// sweepWork removes the snapshots and results under construction left by a
// crashed run. An entry whose content is claimed by a live run is left alone.
func (r *runner) sweepWork() {
	dir := filepath.Join(r.a.dir, workDir)
	entries, err := os.ReadDir(dir)
	if err != nil {
		r.note("nightly: cannot list %s: %v", dir, err)
		return
	}
	for _, e := range entries {
		if e.Name() == claimsDir {
			continue
		}
		if strings.HasPrefix(e.Name(), "."+SummaryName("")) {
			// A summary being written when a run died: summaries are
			// written under the ledger lock, so holding it means stale.
			p := filepath.Join(dir, e.Name())
			r.a.locked(func() error { return os.Remove(p) })
			continue
		}
		sha, _, ok := strings.Cut(e.Name(), "-")
		if !ok || !isSHA256(sha) {
			r.note("nightly: %s is not one of bandwright's; left alone", filepath.Join(dir, e.Name()))
			continue
		}
		c, ok := r.a.tryClaim(sha)
		if !ok {
			continue
		}
		if err := r.diedWhile(filepath.Join(dir, e.Name())); err != nil {
			r.note("nightly: %v", err)
		}
		if err := os.RemoveAll(filepath.Join(dir, e.Name())); err != nil {
			r.note("nightly: cannot remove the half-built %s: %v", filepath.Join(dir, e.Name()), err)
		}
		c.Unlock()
	}
}

// adoptOrphans records the complete results folders that a crashed run
// renamed into place but did not record in the ledger.
func (r *runner) adoptOrphans() error {
	dir := filepath.Join(r.a.dir, ResultsDir)
	entries, err := os.ReadDir(dir)
	if err != nil {
		return fmt.Errorf("nightly: cannot list %s: %w", dir, err)
	}
	for _, e := range entries {
		out := ResultsDir + "/" + e.Name()
		if _, ok := r.a.ledger.okOut[out]; ok || !e.IsDir() {
			continue
		}
		p := filepath.Join(dir, e.Name())
		m, err := ReadManifest(p)
		if err != nil || !isSHA256(m.Input.SHA256) {
			r.note("nightly: %s has no valid %s and no ledger row; it was not made by this program and is left alone", p, ManifestFile)
			continue
		}
		c, ok := r.a.tryClaim(m.Input.SHA256)
		if !ok {
			continue // its run is alive and will record it
		}
		err = r.adopt(out, p, m)
		c.Unlock()
		if err != nil {
			return err
		}
	}
	return nil
}

func (r *runner) adopt(out, p string, m *Manifest) error {
	sha := m.Input.SHA256
	sound := m.Outcome == StatusOK && VerifyFolder(p, m) == nil
	started, err1 := time.Parse(time.RFC3339, m.Started)
	finished, err2 := time.Parse(time.RFC3339, m.Finished)
	sound = sound && err1 == nil && err2 == nil
	discard, recorded := false, false
	var drift []Drift
	err := r.a.locked(func() error {
		if err := r.a.refresh(); err != nil {
			return err
		}
		if _, ok := r.a.ledger.okOut[out]; ok {
			return nil // recorded meanwhile
		}
		if r.a.state(sha).ok > 0 || !sound {
			discard = true
			return nil
		}
		var err error
		drift, err = r.a.record(m.Input.Name, sha, started, finished, out, "", m.Constants, r.o.DriftSigma)
		recorded = err == nil
		return err
	})
	if err != nil {
		return err
	}
	if discard {
		r.note("nightly: removed %s: an incomplete or duplicate result of a crashed run", p)
		return r.discard(p, sha)
	}
	if recorded {
		fo := FileOutcome{Input: m.Input.Name, SHA256: sha, Status: StatusOK, Output: out, Started: started, Finished: finished,
			Constants: m.Constants, Drift: drift, Message: "recovered: completed by a run that was stopped before recording it"}
		r.mu.Lock()
		r.rep.Recovered++
		r.rep.Files = append(r.rep.Files, fo)
		r.markDate(finished)
		r.mu.Unlock()
		r.note("nightly: recovered %s -> %s (completed by a run that stopped before recording it)", shown(m.Input.Name), out)
		r.noteDrift(fo)
	}
	return nil
}

// discard removes a results folder: first renamed out of results/ (one
// atomic step), then deleted. The caller holds the claim of sha.
func (r *runner) discard(p, sha string) error {
	tmp, err := os.MkdirTemp(filepath.Join(r.a.dir, workDir), sha+"-discard-")
	if err != nil {
		return fmt.Errorf("nightly: %w", err)
	}
	if err := os.Rename(p, filepath.Join(tmp, "old")); err != nil {
		os.RemoveAll(tmp)
		return fmt.Errorf("nightly: cannot remove %s: %w", p, err)
	}
	syncPath(filepath.Dir(p))
	return os.RemoveAll(tmp)
}

// backfill writes the history rows of ok results whose run stopped between
// the ledger row and the history rows.
func (r *runner) backfill() error {
	return r.a.locked(func() error {
		if err := r.a.refresh(); err != nil {
			return err
		}
		for sha, st := range r.a.ledger.bySHA {
			if st.ok == 0 || r.a.history.shas[sha] {
				continue
			}
			m, err := ReadManifest(filepath.Join(r.a.dir, filepath.FromSlash(st.output)))
			if err != nil || len(m.Constants) == 0 || m.Input.SHA256 != sha {
				continue
			}
			if _, err := r.a.addHistory(st.input, sha, st.finished, m.Constants, r.o.DriftSigma); err != nil {
				return err
			}
		}
		return nil
	})
}
