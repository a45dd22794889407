package nightly

import (
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"time"

	"github.com/gofrs/flock"

	"bandwright/internal/csvcell"
)

// Names inside the archive.
const (
	LedgerFile  = "ledger.csv"
	HistoryFile = "history.csv"
	ResultsDir  = "results"
	workDir     = ".work"
	claimsDir   = "claims"
	ledgerLock  = ".ledger.lock"
)

// LedgerHeader is the header of ledger.csv.
var LedgerHeader = []string{"input", "sha256", "status", "started", "finished", "output", "message"}

// HistoryHeader is the header of history.csv: one row per constant of every
// ok result, with the drift test made when it was recorded (n_before earlier
// results of the same constant and model with weighted mean mean_before ±
// sigma_mean_before; z in combined σ; drift = "flagged" when |z| exceeded the
// threshold); model is the model and term set the constant belongs to (empty
// for a constant that does not depend on the model).
var HistoryHeader = []string{"sha256", "input", "finished", "species", "name", "value", "sigma", "unit",
	"n_before", "mean_before", "sigma_mean_before", "z", "drift", "model"}

// archive is an open archive folder.
type archive struct {
	dir   string // real path
	shown string // as given, for messages

	mu      sync.Mutex   // in-process part of the ledger lock
	lk      *flock.Flock // ARCHIVE/.ledger.lock
	run     *flock.Flock // ARCHIVE/.lock-shard-K-of-N
	led     *csvLog      // ledger.csv (under lk)
	hist    *csvLog      // history.csv (under lk)
	ledger  ledgerState  // what ledger.csv says (under lk)
	history historyState // what history.csv says (under lk)
	claims  string       // ARCHIVE/.work/claims
	perm    flock.Option // lock file permissions
}

type shaState struct {
	ok, failed int
	output     string // of the ok row
	input      string
	finished   string
}

type ledgerState struct {
	bySHA map[string]*shaState
	okOut map[string]string // output folder of an ok row → sha
}

type aggregate struct {
	w, wx float64
	n     int
}

type historyState struct {
	agg  map[string]*aggregate // species, name, unit, model → sums over earlier results
	shas map[string]bool       // contents that have history rows
	// Results (content hashes) with model-keyed constants of each species,
	// and of each species and model: how often a model was chosen.
	bySpecies      map[string]map[string]bool
	bySpeciesModel map[string]map[string]bool
}

// modelShare returns how many earlier results of species used model, and
// how many had model-keyed constants at all.
func (h *historyState) modelShare(species, model string) (mine, all int) {
	return len(h.bySpeciesModel[species+"\x00"+model]), len(h.bySpecies[species])
}

func addSHA(m map[string]map[string]bool, k, sha string) {
	if m[k] == nil {
		m[k] = map[string]bool{}
	}
	m[k][sha] = true
}

func openArchive(real, shown string) (*archive, error) {
	a := &archive{dir: real, shown: shown, perm: flock.SetPermissions(0o644)}
	for _, d := range []string{ResultsDir, workDir, filepath.Join(workDir, claimsDir)} {
		if err := os.MkdirAll(filepath.Join(real, d), 0o755); err != nil {
			return nil, fmt.Errorf("nightly: the archive %s cannot be written: %w", shown, err)
		}
	}
	a.claims = filepath.Join(real, workDir, claimsDir)
	a.lk = flock.New(filepath.Join(real, ledgerLock), a.perm)
	a.ledger = ledgerState{bySHA: map[string]*shaState{}, okOut: map[string]string{}}
	a.history = newHistoryState()
	return a, nil
}

func (a *archive) close() {
	a.led.close()
	a.hist.close()
	if a.run != nil {
		a.run.Unlock()
	}
}

// lockRun takes the lock of shard k/n for the whole run.
func (a *archive) lockRun(k, n int) error {
	p := filepath.Join(a.dir, fmt.Sprintf(".lock-shard-%d-of-%d", k, n))
	f := flock.New(p, a.perm)
	ok, err := f.TryLock()
	if err != nil {
		return fmt.Errorf("nightly: cannot take the lock %s: %w", p, err)
	}
	if !ok {
		return &LockError{Archive: a.shown, Lock: filepath.Join(a.shown, filepath.Base(p)), Shard: k, Shards: n}
	}
	a.run = f
	return nil
}

// locked runs fn holding the ledger lock (in-process mutex and file lock).
func (a *archive) locked(fn func() error) error {
	a.mu.Lock()
	defer a.mu.Unlock()
	if err := a.lk.Lock(); err != nil {
		return fmt.Errorf("nightly: cannot lock %s: %w", a.lk.Path(), err)
	}
	defer a.lk.Unlock()
	return fn()
}

// open opens (creating with their headers) ledger.csv and history.csv and
// reads them; must be called under the lock.
func (a *archive) open() error {
	var err error
	a.led, err = openCSVLog(filepath.Join(a.dir, LedgerFile), "ledger", LedgerHeader, a.ledgerRow)
	if err != nil {
		return err
	}
	a.hist, err = openCSVLog(filepath.Join(a.dir, HistoryFile), "history", HistoryHeader, a.historyRow)
	if err != nil {
		return err
	}
	if err := a.refresh(); err != nil {
		return olderHistory(filepath.Join(a.dir, HistoryFile), err)
	}
	return nil
}

// olderHistory returns a clearer error than err when path is a history.csv
// of an earlier version (its header lacks the model column).
func olderHistory(path string, err error) error {
	f, ferr := os.Open(path)
	if ferr != nil {
		return err
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.FieldsPerRecord = -1
	rec, rerr := cr.Read()
	if rerr == nil && sameHeader(rec, HistoryHeader[:len(HistoryHeader)-1]) {
		return fmt.Errorf("nightly: %s was written by an earlier version of bandwright (its rows have no model column): move it aside, and bandwright starts a new history", path)
	}
	return err
}

func (a *archive) refresh() error {
	if _, err := a.led.refresh(); err != nil {
		return err
	}
	_, err := a.hist.refresh()
	return err
}

func (a *archive) ledgerRow(rec []string) {
	sha, status := rec[1], rec[2]
	if !isSHA256(sha) {
		a.led.bad++
		return
	}
	s := a.ledger.bySHA[sha]
	if s == nil {
		s = &shaState{}
		a.ledger.bySHA[sha] = s
	}
	switch Status(status) {
	case StatusOK:
		s.ok++
		s.output, s.input, s.finished = rec[5], rec[0], rec[4]
		a.ledger.okOut[rec[5]] = sha
	case StatusFailed:
		s.failed++
	default:
		a.led.bad++
	}
}

func (a *archive) historyRow(rec []string) { a.history.add(rec) }

// newHistoryState returns the state of an empty history.
func newHistoryState() historyState {
	return historyState{agg: map[string]*aggregate{}, shas: map[string]bool{},
		bySpecies: map[string]map[string]bool{}, bySpeciesModel: map[string]map[string]bool{}}
}

// add counts one row of history.csv.
func (h *historyState) add(rec []string) {
	sha := rec[0]
	h.shas[sha] = true
	if rec[13] != "" {
		addSHA(h.bySpecies, rec[3], sha)
		addSHA(h.bySpeciesModel, rec[3]+"\x00"+rec[13], sha)
	}
	v, err1 := strconv.ParseFloat(rec[5], 64)
	s, err2 := strconv.ParseFloat(rec[6], 64)
	if err1 != nil || err2 != nil || !usable(v, s) {
		return
	}
	k := key(rec[3], rec[4], rec[7], rec[13])
	g := h.agg[k]
	if g == nil {
		g = &aggregate{}
		h.agg[k] = g
	}
	w := 1 / (s * s)
	g.w += w
	g.wx += w * v
	g.n++
}

// test is the drift test of constant c against the results of the history
// (see the package documentation).
func (h *historyState) test(c Constant, threshold float64) Drift {
	sp, nm, un, md := csvcell.Neutralise(c.Species), csvcell.Neutralise(c.Name), csvcell.Neutralise(c.Unit), csvcell.Neutralise(c.Model)
	d := Drift{Constant: c, Mean: math.NaN(), SigmaMean: math.NaN(), Z: math.NaN()}
	if g := h.agg[key(sp, nm, un, md)]; g != nil && g.n > 0 {
		d.N = g.n
		d.Mean = g.wx / g.w
		d.SigmaMean = 1 / math.Sqrt(g.w)
		if mine, all := h.modelShare(sp, md); md != "" && 2*mine < all {
			d.Untested = fmt.Sprintf("not tested: model in %d of %d earlier results", mine, all)
		} else if usable(c.Value, c.Sigma) {
			d.Z = (c.Value - d.Mean) / math.Hypot(c.Sigma, d.SigmaMean)
			d.Flagged = math.Abs(d.Z) > threshold
		}
	}
	return d
}

// PreviewDrift returns the drift test of the constants cs against the
// history file of an archive (ARCHIVE/history.csv, read only; a missing file
// is an empty history) as it stands now, with threshold in combined σ (0:
// 5). It is the test the run records for the result unless results of the
// same constants are recorded meanwhile; a job uses it to show the drift flag
// in its own report.
func PreviewDrift(historyPath string, cs []Constant, threshold float64) ([]Drift, error) {
	if threshold == 0 {
		threshold = 5
	}
	h := newHistoryState()
	f, err := os.Open(historyPath)
	switch {
	case errors.Is(err, fs.ErrNotExist):
	case err != nil:
		return nil, fmt.Errorf("nightly: %w", err)
	default:
		defer f.Close()
		st, err := f.Stat()
		if err != nil {
			return nil, fmt.Errorf("nightly: %w", err)
		}
		l := &csvLog{path: historyPath, name: "history", f: f, header: HistoryHeader}
		if _, err := l.scan(0, st.Size(), h.add); err != nil {
			return nil, err
		}
	}
	out := make([]Drift, len(cs))
	for i, c := range cs {
		out[i] = h.test(c, threshold)
	}
	return out, nil
}

func (a *archive) state(sha string) shaState {
	if s := a.ledger.bySHA[sha]; s != nil {
		return *s
	}
	return shaState{}
}

// ledgerRowFor is a ledger row with its text cells neutralised.
func ledgerRowFor(input, sha string, st Status, started, finished time.Time, output, msg string) []string {
	return []string{csvcell.Neutralise(input), sha, string(st), started.Format(time.RFC3339),
		finished.Format(time.RFC3339), csvcell.Neutralise(output), csvcell.Neutralise(msg)}
}

// record appends the ok row of a result (msg: its notes, one line) and then
// its history rows, and returns the drift test of each constant. Must be
// called under the lock.
func (a *archive) record(input, sha string, started, finished time.Time, output, msg string, cs []Constant, threshold float64) ([]Drift, error) {
	if err := a.led.append([][]string{ledgerRowFor(input, sha, StatusOK, started, finished, output, msg)}); err != nil {
		return nil, err
	}
	hook("ledger", input)
	return a.addHistory(input, sha, finished.Format(time.RFC3339), cs, threshold)
}

// addHistory appends the history rows of one result (under the lock).
func (a *archive) addHistory(input, sha, finished string, cs []Constant, threshold float64) ([]Drift, error) {
	if len(cs) == 0 {
		return nil, nil
	}
	if _, err := a.hist.refresh(); err != nil {
		return nil, err
	}
	ds := make([]Drift, len(cs))
	rows := make([][]string, len(cs))
	for i, c := range cs {
		d := a.history.test(c, threshold)
		ds[i] = d
		flag := d.Untested
		if d.Flagged {
			flag = "flagged"
		}
		rows[i] = []string{sha, csvcell.Neutralise(input), finished, csvcell.Neutralise(c.Species), csvcell.Neutralise(c.Name), fmtF(c.Value), fmtF(c.Sigma), csvcell.Neutralise(c.Unit),
			strconv.Itoa(d.N), fmtNaN(d.Mean), fmtNaN(d.SigmaMean), fmtNaN(d.Z), flag, csvcell.Neutralise(c.Model)}
	}
	if err := a.hist.append(rows); err != nil {
		return nil, err
	}
	return ds, nil
}

// claim takes the exclusive claim on a content hash, waiting while another
// worker or run holds it (claims are shared by the contents whose hashes
// start with the same three hex digits, so at most 4096 lock files exist).
func (a *archive) claim(ctx context.Context, sha string) (*flock.Flock, error) {
	f := flock.New(filepath.Join(a.claims, sha[:3]+".lock"), a.perm)
	ok, err := f.TryLockContext(ctx, 25*time.Millisecond)
	if err != nil {
		return nil, err
	}
	if !ok {
		return nil, fmt.Errorf("nightly: claim of %s not obtained", sha[:8])
	}
	return f, nil
}

// tryClaim takes the claim only if it is free at once.
func (a *archive) tryClaim(sha string) (*flock.Flock, bool) {
	f := flock.New(filepath.Join(a.claims, sha[:3]+".lock"), a.perm)
	ok, err := f.TryLock()
	if err != nil || !ok {
		return nil, false
	}
	return f, true
}

func key(species, name, unit, model string) string {
	return species + "\x00" + name + "\x00" + unit + "\x00" + model
}

func usable(v, s float64) bool {
	return !math.IsNaN(v) && !math.IsInf(v, 0) && s > 0 && !math.IsInf(s, 0)
}

func fmtF(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func fmtNaN(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return fmtF(v)
}

func isSHA256(s string) bool {
	if len(s) != 64 {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return false
		}
	}
	return true
}
