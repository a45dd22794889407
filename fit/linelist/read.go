package linelist

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"strconv"
	"strings"

	"bandwright/fit/species"
	"bandwright/internal/textcheck"
)

// Limits on quantum numbers. Larger values are taken for a column mix-up: no bound
// level of a diatomic ground state comes near them.
const (
	MaxV = 100
	MaxJ = 1000
)

// Limits that tell positions in MHz written without a unit from positions in cm⁻¹
// (see the package doc, Units).
const (
	// MaxWavenumber bounds a position in cm⁻¹: no transition within one electronic
	// state of a diatomic molecule reaches it, since the most strongly bound
	// diatomic, CO, has a dissociation energy D0 of about 89 500 cm⁻¹ (11.1 eV;
	// Huber & Herzberg 1979, from memory).
	MaxWavenumber = 1e5
	// MaxRotationalConstant bounds the rotational constant implied by a pure-rotation
	// line in cm⁻¹, ν/(x_up − x_lo): the largest of any molecule is that of H2,
	// B_e = 60.85 cm⁻¹ (Huber & Herzberg 1979, from memory).
	MaxRotationalConstant = 100.0
	// MixedUnitRatio is the spread, largest over smallest, of the reduced positions of
	// one band beyond which a file without a unit column is taken to mix cm⁻¹ and MHz
	// (1 cm⁻¹ = 29 979.2458 MHz; a band's own spread is below a factor 3).
	MixedUnitRatio = 1000.0
)

// column indexes the standard columns.
type column int

const (
	colSpecies column = iota
	colVUp
	colJUp
	colVLo
	colJLo
	colPosition
	colUnc
	colUnit
	colBranch
	colComment
	colNUp // the open-shell columns (openshell.go)
	colNLo
	colFUp
	colFLo
	colParityUp
	colParityLo
	colStateUp
	colStateLo
	nColumns
	nRequired = colUnit // the columns before unit are required
)

// columnNames are the standard column names as written by Write and named in messages.
var columnNames = [nColumns]string{"species", "v_up", "J_up", "v_lo", "J_lo", "position", "unc", "unit", "branch", "comment",
	"N_up", "N_lo", "F_up", "F_lo", "parity_up", "parity_lo", "state_up", "state_lo"}

// headerRow is the struct onto which gocsv maps the header names; its csv tags are the
// header keys (lower-case) of the standard columns, in column order. See mapHeader.
type headerRow struct {
	Species  string `csv:"species"`
	VUp      string `csv:"v_up"`
	JUp      string `csv:"j_up"`
	VLo      string `csv:"v_lo"`
	JLo      string `csv:"j_lo"`
	Position string `csv:"position"`
	Unc      string `csv:"unc"`
	Unit     string `csv:"unit"`
	Branch   string `csv:"branch"`
	Comment  string `csv:"comment"`
	NUp      string `csv:"n_up"`
	NLo      string `csv:"n_lo"`
	FUp      string `csv:"f_up"`
	FLo      string `csv:"f_lo"`
	ParUp    string `csv:"parity_up"`
	ParLo    string `csv:"parity_lo"`
	StateUp  string `csv:"state_up"`
	StateLo  string `csv:"state_lo"`
}

// headerKey is the form in which column names are compared: zero-width characters
// (U+200B, U+200C, U+200D, U+FEFF) removed, surrounding white space trimmed, lower case.
func headerKey(s string) string {
	if strings.ContainsAny(s, "\u200B\u200C\u200D\uFEFF") {
		s = strings.Map(func(r rune) rune {
			switch r {
			case '\u200B', '\u200C', '\u200D', '\uFEFF':
				return -1
			}
			return r
		}, s)
	}
	return strings.ToLower(strings.TrimSpace(s))
}

// Rows serves fixed rows to gocsv (it implements gocsv.CSVReader): the header
// mapping (IndexColumns) feeds gocsv a header and one row of column indices through it.
type Rows struct{ Rows [][]string }

// Read returns the next row, io.EOF after the last.
func (s *Rows) Read() ([]string, error) {
	if len(s.Rows) == 0 {
		return nil, io.EOF
	}
	r := s.Rows[0]
	s.Rows = s.Rows[1:]
	return r, nil
}

// ReadAll returns the remaining rows.
func (s *Rows) ReadAll() ([][]string, error) {
	r := s.Rows
	s.Rows = nil
	return r, nil
}

// mapHeader finds the column index of each standard column from the header keys
// (see IndexColumns); absent columns get -1.
func mapHeader(keys []string) ([nColumns]int, error) {
	var idx [nColumns]int
	cols, err := IndexColumns[headerRow](keys)
	if err != nil {
		return idx, err
	}
	copy(idx[:], cols)
	return idx, nil
}

// speciesResult caches one species.Parse outcome.
type speciesResult struct {
	label string
	err   error
}

// reader accumulates lines from one or more files.
type reader struct {
	list      List
	noUnitCol map[string]bool // files (by name) without a unit column
	extraKeys map[string]int  // header key -> index in list.Extra
	species   map[string]speciesResult
	failed    bool     // some file had a problem: lines are no longer kept
	slab      []string // storage carved into Line.Extra slices
	openSlab  []OpenShell
	// transitions: position and unc are optional (ReadTransitions).
	transitions bool
}

func newReader() *reader {
	return &reader{extraKeys: make(map[string]int), species: make(map[string]speciesResult), noUnitCol: make(map[string]bool)}
}

// Read reads a line list from r; name (a path or any label) is used in messages and in
// Line.File. Problems are returned as one *Error listing all of them (up to MaxProblems).
func Read(r io.Reader, name string) (*List, error) {
	rd := newReader()
	c := &collector{file: name}
	rd.read(r, c)
	if err := merge(c); err != nil {
		return nil, err
	}
	if err := rd.checkUnits(c); err != nil {
		return nil, err
	}
	rd.finish()
	return &rd.list, nil
}

// ReadTransitions reads a list of transitions to predict: a line list whose
// position and unc columns may be missing and are not read (only the quantum
// numbers, species, unit, branch and comment are), with the same checks of
// the levels otherwise.
func ReadTransitions(r io.Reader, name string) (*List, error) {
	rd := newReader()
	rd.transitions = true
	c := &collector{file: name}
	rd.read(r, c)
	if err := merge(c); err != nil {
		return nil, err
	}
	rd.finish()
	return &rd.list, nil
}

// ReadFile reads the line list in the file at path. The file is opened read-only and
// never modified.
func ReadFile(path string) (*List, error) { return ReadFiles(path) }

// ReadFiles reads several line lists and concatenates them in the order given; every
// Line remembers its file. The problems of all files are collected into one *Error
// (up to MaxProblems per file). Naming the same file twice, under any path, is an error.
// Pass-through columns are merged by name (List.Extra); a line whose file lacks a column
// has an empty value there.
func ReadFiles(paths ...string) (*List, error) {
	if len(paths) == 0 {
		return nil, errors.New("linelist: no line-list files given")
	}
	rd := newReader()
	cs := make([]*collector, len(paths))
	infos := make([]fs.FileInfo, len(paths))
	for i, p := range paths {
		c := &collector{file: p}
		cs[i] = c
		if why := textcheck.NotRegular(p); why != "" {
			c.add(0, "", "%s", why)
			rd.failed = true
			continue
		}
		f, err := os.Open(p)
		if err != nil {
			reason := textcheck.OpenReason(err)
			c.addErr(0, "", reason, err)
			rd.failed = true
			continue
		}
		fi, err := f.Stat()
		if err == nil {
			infos[i] = fi
			for j := 0; j < i; j++ {
				if infos[j] != nil && os.SameFile(infos[j], fi) {
					c.add(0, "", "the same file is given twice (also as file %d, %s)", j+1, paths[j])
					rd.failed = true
					err = errDuplicate
					break
				}
			}
		}
		if err != errDuplicate {
			rd.read(f, c)
		}
		f.Close()
	}
	if err := merge(cs...); err != nil {
		return nil, err
	}
	if err := rd.checkUnits(cs...); err != nil {
		return nil, err
	}
	rd.finish()
	return &rd.list, nil
}

var errDuplicate = errors.New("duplicate")

// finish pads the Extra values of lines read before later files added columns.
func (rd *reader) finish() {
	n := len(rd.list.Extra)
	for i := range rd.list.Lines {
		l := &rd.list.Lines[i]
		if len(l.Extra) < n {
			ex := make([]string, n)
			copy(ex, l.Extra)
			l.Extra = ex
		}
	}
}

// file holds the state of reading one file.
type file struct {
	rd      *reader
	c       *collector
	col     [nColumns]int
	names   []string // header names as written (trimmed), for messages
	nFields int
	extra   []int // column index of each pass-through column
	extraAt []int // its index in List.Extra
}

// read reads one file into rd, reporting problems to c.
func (rd *reader) read(r io.Reader, c *collector) {
	defer func() {
		if c.any() {
			rd.failed = true
		}
	}()
	hint := sizeHint(r)
	if hint > MaxFileBytes {
		c.add(0, "", "%v", tooLarge)
		return
	}
	if hint < 0 {
		r = &capped{r: r, left: MaxFileBytes}
	}
	f := &file{rd: rd, c: c}
	t := readHeader(r, c, "no lines: the file is empty")
	if t == nil || !f.header(t) {
		return
	}
	cr, hline := t.CSV, t.Line

	rows, lastErrLine := 0, -1
	bodyStart := cr.InputOffset()
	for {
		if rows == estimateAfter && hint > 0 {
			rd.reserve(rows, hint, bodyStart, cr.InputOffset())
		}
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if !errors.As(err, &pe) {
				c.readError(err)
				return
			}
			if pe.Line == lastErrLine { // no progress: do not loop
				return
			}
			lastErrLine = pe.Line
			c.readError(err)
			rows++
			continue
		}
		rows++
		row, _ := cr.FieldPos(0)
		if len(rec) != f.nFields {
			if len(rec) > f.nFields {
				c.add(row, "", "row has %d fields, header has %d (quote text that contains commas; numbers take a dot as decimal separator)", len(rec), f.nFields)
			} else {
				c.add(row, "", "row has %d fields, header has %d", len(rec), f.nFields)
			}
			continue
		}
		l, ok := f.line(rec, row)
		if ok && !rd.failed && !c.any() {
			rd.list.Lines = append(rd.list.Lines, l)
		}
	}
	if rows == 0 {
		c.add(hline, "", "no lines: the file has a header only")
	}
}

// slabCells is the number of pass-through cells allocated at once for the
// lines that follow (one allocation for many lines rather than one per line).
const slabCells = 16384

// capped reads at most left bytes of r, then fails with a *TooLargeError:
// the size limit of an input whose size is not known in advance.
type capped struct {
	r    io.Reader
	left int64
}

func (c *capped) Read(p []byte) (int, error) {
	if c.left <= 0 {
		var one [1]byte
		n, err := c.r.Read(one[:])
		if n > 0 {
			return 0, tooLarge
		}
		return 0, err
	}
	if int64(len(p)) > c.left {
		p = p[:c.left]
	}
	n, err := c.r.Read(p)
	c.left -= int64(n)
	return n, err
}

// estimateAfter is the number of rows after which Read estimates the number of rows of
// the whole input from its size and reserves room for the lines at once: growing the
// slice by append alone allocates about five times its final size (Go grows large slices
// by a factor 1.25) and the copying dominated the time of a read.
const estimateAfter = 1000

// sizeHint returns the number of bytes left in r when r can tell (a regular file, a
// bytes.Reader, strings.Reader or bytes.Buffer), and -1 otherwise.
func sizeHint(r io.Reader) int64 {
	switch v := r.(type) {
	case interface{ Len() int }:
		return int64(v.Len())
	case *os.File:
		fi, err := v.Stat()
		if err != nil || !fi.Mode().IsRegular() {
			return -1
		}
		off, err := v.Seek(0, io.SeekCurrent)
		if err != nil {
			return -1
		}
		return fi.Size() - off
	}
	return -1
}

// reserve grows the capacity of the line slice to hold the rows the rest of the input
// is expected to have, estimated from the rows read so far between byte offsets start
// and now of an input of size bytes (less after the byte-order mark, which is not
// counted). Over-estimates are bounded by that ratio; an under-estimate leaves the rest
// to append.
func (rd *reader) reserve(rows int, size, start, now int64) {
	if rd.failed || now <= start || size <= now {
		return
	}
	est := float64(rows) * float64(size-start) / float64(now-start)
	want := len(rd.list.Lines) - rows + int(est*1.02) + 16
	if want <= cap(rd.list.Lines) || est > 1e9 {
		return
	}
	grown := make([]Line, len(rd.list.Lines), want)
	copy(grown, rd.list.Lines)
	rd.list.Lines = grown
}

// header maps the header t onto the standard columns; it returns false when rows
// cannot be read.
func (f *file) header(t *Table) bool {
	c := f.c
	h, keys, line := t.Header, t.Keys, t.Line
	f.nFields = len(h)
	f.names = t.Names
	col, err := mapHeader(keys)
	if err != nil {
		c.addErr(line, "", "cannot map the header: "+err.Error(), err)
		return false
	}
	f.col = col
	if col[colUnit] < 0 {
		f.rd.noUnitCol[c.file] = true
	}
	var missing []string
	for cl := column(0); cl < nRequired; cl++ {
		if col[cl] < 0 && !(f.rd.transitions && (cl == colPosition || cl == colUnc)) {
			missing = append(missing, columnNames[cl])
		}
	}
	if t.reportMissing(c, missing) {
		return false
	}
	claimed := make([]bool, len(h))
	for _, i := range col {
		if i >= 0 {
			claimed[i] = true
		}
	}
	rd := f.rd
	for i, k := range keys {
		if claimed[i] || k == "" {
			continue
		}
		at, ok := rd.extraKeys[k]
		if !ok {
			at = len(rd.list.Extra)
			rd.extraKeys[k] = at
			rd.list.Extra = append(rd.list.Extra, textCell(strings.TrimSpace(h[i])))
		}
		f.extra = append(f.extra, i)
		f.extraAt = append(f.extraAt, at)
	}
	return true
}

// line validates one record and converts it.
func (f *file) line(rec []string, row int) (Line, bool) {
	c := f.c
	n0 := len(c.probs) + c.omitted
	l := Line{File: c.file, Row: row}
	for i, cell := range rec {
		if why := textcheck.InvalidUTF8(cell); why != "" {
			c.add(row, f.fieldName(i), "%s", why)
		}
	}
	if len(c.probs)+c.omitted != n0 {
		return l, false
	}

	if i := f.col[colSpecies]; i >= 0 {
		l.Species = f.species(rec[i], row)
	}
	quantaOK := f.quanta(rec, row, &l)
	dJ := l.JUp - l.JLo

	if !f.rd.transitions {
		l.Position, l.Unc = f.positionAndUnc(rec, row)
	}

	if i := f.col[colUnit]; i >= 0 {
		if t := strings.TrimSpace(rec[i]); t == "" {
			l.Unit = DefaultUnit
		} else if u, err := ParseUnit(t); err == nil {
			l.Unit = u
		} else {
			c.add(row, "unit", "unknown unit %q: use %s", t, UnitChoices)
		}
	}

	if i := f.col[colBranch]; i >= 0 {
		if t := strings.TrimSpace(rec[i]); t != "" {
			l.Branch = f.branch(t, row, &l, quantaOK, dJ)
		}
	}

	if i := f.col[colComment]; i >= 0 {
		l.Comment = textCell(strings.TrimSpace(rec[i]))
	}

	if len(f.extra) > 0 {
		n := len(f.rd.list.Extra)
		if len(f.rd.slab) < n {
			f.rd.slab = make([]string, n*max(1, slabCells/n))
		}
		ex := f.rd.slab[:n:n]
		f.rd.slab = f.rd.slab[n:]
		for k, i := range f.extra {
			ex[f.extraAt[k]] = textCell(rec[i])
		}
		l.Extra = ex
	}
	return l, len(c.probs)+c.omitted == n0
}

// quanta reads the vibrational and rotational quantum numbers of a row (and
// its open-shell labels, openShell) into l and checks a ¹Σ line's ΔJ and that
// its upper level lies above the lower one; it reports whether all four
// quantum numbers were read.
func (f *file) quanta(rec []string, row int, l *Line) bool {
	var qok [4]bool
	var j2 [2]int
	l.VUp, qok[0] = f.quantum(rec, colVUp, row, MaxV)
	j2[0], qok[1] = f.angular(rec, colJUp, row)
	l.VLo, qok[2] = f.quantum(rec, colVLo, row, MaxV)
	j2[1], qok[3] = f.angular(rec, colJLo, row)
	quantaOK := qok[0] && qok[1] && qok[2] && qok[3]
	l.JUp, l.JLo = j2[0]/2, j2[1]/2
	f.openShell(rec, row, l, j2, qok[1] && qok[3])
	dJ := l.JUp - l.JLo
	if !quantaOK || l.Open != nil {
		return quantaOK
	}
	switch {
	case dJ < -2 || dJ > 2:
		f.c.add(row, "J_up", "J_up - J_lo = %+d is outside the selection rules of every supported spectrum (infrared dJ = ±1, Raman 0, ±2, pure rotation ±1)", dJ)
	case l.VUp == l.VLo && dJ == 0:
		f.c.add(row, "v_up", "upper level (v=%d, J=%d) equals the lower level: a zero-frequency transition", l.VUp, l.JUp)
	case l.VUp < l.VLo || (l.VUp == l.VLo && dJ < 0):
		f.c.add(row, "v_up", "upper level (v=%d, J=%d) lies below the lower level (v=%d, J=%d): are upper and lower swapped?", l.VUp, l.JUp, l.VLo, l.JLo)
	}
	return quantaOK
}

// branch reads a branch cell t: a letter O … S checked against ΔJ = dJ (when
// the quantum numbers were read), or for an open-shell line the notation of
// Branch.
func (f *file) branch(t string, row int, l *Line, quantaOK bool, dJ int) string {
	bdJ, known := BranchDeltaJ(t)
	if b, err := ParseBranch(t); !known && l.Open != nil && err == nil {
		bdJ, known = b.DeltaJ, true
	}
	switch {
	case !known && l.Open != nil:
		f.c.add(row, "branch", "unknown branch %q: write the ΔJ letter O, P, Q, R or S, with the ΔN letter in front and the F′F″ indices behind where they differ (pQ12, R1)", t)
	case !known:
		f.c.add(row, "branch", "unknown branch %q: use O, P, Q, R or S", t)
	case quantaOK && bdJ != dJ:
		f.c.add(row, "branch", "branch %s needs J_up - J_lo = %+d, but J_up - J_lo = %+d", t, bdJ, dJ)
	}
	if t == BranchLetter(bdJ) {
		t = BranchLetter(bdJ) // share the constant rather than keep the record's text
	}
	return t
}

// positionAndUnc reads the position and its uncertainty, each > 0, the
// uncertainty smaller than the position and above the float resolution at it.
func (f *file) positionAndUnc(rec []string, row int) (pos, unc float64) {
	pos = f.positive(rec, colPosition, row)
	unc = f.positive(rec, colUnc, row)
	if pos > 0 && unc > 0 {
		if why := UncProblem(pos, unc); why != "" {
			f.c.add(row, "unc", "%s", why)
		}
	}
	return pos, unc
}

// fieldName returns the name of column i for messages: the canonical spelling of a
// standard column, the header name of any other.
func (f *file) fieldName(i int) string {
	for cl, j := range f.col {
		if j == i {
			return columnNames[cl]
		}
	}
	if i < len(f.names) && f.names[i] != "" {
		return f.names[i]
	}
	return fmt.Sprintf("column %d", i+1)
}

// textCell normalises the line breaks inside a text cell to "\n" (encoding/csv turns a
// quoted "\r\n" into "\n" only at the end of a physical line).
func textCell(s string) string {
	if strings.IndexByte(s, '\r') < 0 {
		return s
	}
	return strings.ReplaceAll(strings.ReplaceAll(s, "\r\n", "\n"), "\r", "\n")
}

// species parses a species cell through the cache.
func (f *file) species(cell string, row int) string {
	t := strings.TrimSpace(cell)
	if t == "" {
		f.c.add(row, "species", "missing value")
		return ""
	}
	res, ok := f.rd.species[t]
	if !ok {
		iso, err := species.Parse(t)
		res = speciesResult{label: iso.Label, err: err}
		f.rd.species[strings.Clone(t)] = res
	}
	if res.err != nil {
		f.c.addErr(row, "species", strings.TrimPrefix(res.err.Error(), "species: "), res.err)
		return ""
	}
	return res.label
}

// number parses a numeric cell; it reports a problem and returns false when the cell
// is empty, not a number, or not finite.
func (f *file) number(cell string, cl column, row int) (float64, string, bool) {
	t := strings.TrimSpace(cell)
	name := columnNames[cl]
	if t == "" {
		f.c.add(row, name, "missing value")
		return 0, t, false
	}
	x, err := textcheck.ParseDecimal(t)
	if err != nil {
		switch {
		case errors.Is(err, strconv.ErrRange):
			f.c.add(row, name, "%s is out of the range of a 64-bit float", t)
		case strings.Contains(t, ","):
			if _, err2 := strconv.ParseFloat(strings.ReplaceAll(t, ",", "."), 64); err2 == nil {
				f.c.add(row, name, "not a number: %q (decimal comma? bandwright reads comma-separated with a dot decimal separator)", t)
				break
			}
			fallthrough
		default:
			f.c.add(row, name, "not a number: %q%s", t, textcheck.DecimalHint(t))
		}
		return 0, t, false
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		f.c.add(row, name, "must be a finite number, got %s", t)
		return 0, t, false
	}
	return x, t, true
}

// positive reads a position or uncertainty, which must be > 0.
func (f *file) positive(rec []string, cl column, row int) float64 {
	i := f.col[cl]
	if i < 0 {
		return 0
	}
	x, t, ok := f.number(rec[i], cl, row)
	if ok && !(x > 0) {
		f.c.add(row, columnNames[cl], "must be > 0, got %s", t)
	}
	return x
}

// quantum reads a vibrational or rotational quantum number: an integer in [0, max]
// (an integral value written as a float, "3.0", is accepted).
func (f *file) quantum(rec []string, cl column, row int, max int) (int, bool) {
	i := f.col[cl]
	if i < 0 {
		return 0, false
	}
	name := columnNames[cl]
	t := strings.TrimSpace(rec[i])
	n, err := strconv.Atoi(t)
	if err != nil {
		x, t, ok := f.number(rec[i], cl, row)
		if !ok {
			return 0, false
		}
		if x != math.Trunc(x) {
			f.c.add(row, name, "must be an integer, got %s", t)
			return 0, false
		}
		switch {
		case x < 0:
			n = -1
		case x > float64(max):
			n = max + 1
		default:
			n = int(x)
		}
	}
	switch {
	case n < 0:
		f.c.add(row, name, "must be >= 0, got %s", t)
		return 0, false
	case n > max:
		what := "J"
		if cl == colVUp || cl == colVLo {
			what = "v"
		}
		f.c.add(row, name, "%s exceeds the limit %s <= %d (a column mix-up?)", t, what, max)
		return 0, false
	}
	return n, true
}
