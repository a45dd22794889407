package report

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"bandwright/constants"
	"bandwright/fit/linelist"
)

// stageFiles lists, per stage, the files a report looks for, in the order the
// provenance section lists them.
var stageFiles = []struct {
	stage string
	files []string
}{
	{"assign", []string{constants.AssignReportFile, constants.LinesFile, constants.UnassignedFile}},
	{"fit", []string{constants.ConstantsFile, constants.ResidualsFile, constants.FitReportFile}},
	{"thermo", []string{constants.ThermoCSVFile, constants.ThermoJSONFile, constants.NASA7File}},
}

// folder is what a report was built from: the stage outputs found in one
// output folder.
type folder struct {
	dir       string
	record    *constants.Record
	residuals []residual // nil when residuals.csv is absent
	thermo    *thermoTable
	lines     []linelist.Line // lines.csv of the assign stage
	linesErr  string          // why lines.csv could not be summarised
	unassign  *genericCSV
	assignMD  []byte
	files     []fileInfo // the stage files present, with size and SHA-256
	stale     []string   // stages made from other inputs than this folder's (see staleStages)
	// staleThermo: the thermo files were made from another constants record
	// and are left out.
	staleThermo bool
}

// fileInfo is one file present in the folder.
type fileInfo struct {
	stage, name string
	size        int64
	sha256      string
}

func (f *folder) has(name string) bool {
	for _, fi := range f.files {
		if fi.name == name {
			return true
		}
	}
	return false
}

// readFolder reads every stage output present in dir. constants.json is
// required; every other file is optional.
func readFolder(dir string) (*folder, error) {
	st, err := os.Stat(dir)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return nil, fmt.Errorf("report: %s: no such folder", dir)
		}
		return nil, fmt.Errorf("report: %w", err)
	}
	if !st.IsDir() {
		return nil, fmt.Errorf("report: %s is not a folder (give the output folder of a bandwright run)", dir)
	}
	f := &folder{dir: dir}
	contents := map[string][]byte{}
	for _, sf := range stageFiles {
		for _, name := range sf.files {
			b, err := os.ReadFile(filepath.Join(dir, name))
			if errors.Is(err, fs.ErrNotExist) {
				continue
			}
			if err != nil {
				return nil, fmt.Errorf("report: %s: %w", name, err)
			}
			h := sha256.Sum256(b)
			f.files = append(f.files, fileInfo{stage: sf.stage, name: name, size: int64(len(b)), sha256: hex.EncodeToString(h[:])})
			contents[name] = b
		}
	}
	cb, ok := contents[constants.ConstantsFile]
	if !ok {
		return nil, fmt.Errorf("report: %s has no %s: a report needs the output of the fit stage (run bandwright fit --out %s, or give the folder that holds constants.json)", dir, constants.ConstantsFile, dir)
	}
	rec, err := constants.Read(bytes.NewReader(cb), constants.ConstantsFile)
	if err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	f.record = rec
	if b, ok := contents[constants.ResidualsFile]; ok {
		if f.residuals, err = readResiduals(b, constants.ResidualsFile); err != nil {
			return nil, err
		}
	}
	if b, ok := contents[constants.ThermoCSVFile]; ok {
		if f.thermo, err = readThermo(b, constants.ThermoCSVFile); err != nil {
			return nil, err
		}
	}
	if b, ok := contents[constants.LinesFile]; ok {
		l, err := linelist.Read(bytes.NewReader(b), constants.LinesFile)
		if err != nil {
			// The assign stage wrote it; a line list the fit could not read is
			// reported in its section rather than stopping the whole report.
			f.linesErr = err.Error()
		} else {
			f.lines = l.Lines
		}
	}
	if b, ok := contents[constants.UnassignedFile]; ok {
		if f.unassign, err = readGenericCSV(b, constants.UnassignedFile); err != nil {
			return nil, err
		}
	}
	f.assignMD = contents[constants.AssignReportFile]
	if f.stale, f.staleThermo = staleStages(contents, f); f.staleThermo {
		f.thermo = nil
	}
	return f, nil
}

// residual is one row of residuals.csv (written by fit.WriteResiduals).
type residual struct {
	file           string
	row            int
	species        string
	vUp, vLo       int
	jUp, jLo       float64 // J, a half-integer for levels of even multiplicity
	stUp, stLo     string  // electronic states (state_up, state_lo; empty: the ground state)
	branch, unit   string
	obs, unc, calc float64
	oc, norm       float64
	used           bool
	note, comment  string
	csvRow         int // line number in residuals.csv
	fileIndex      int // index of file among the distinct input files
}

// readResiduals reads residuals.csv as written by fit.WriteResiduals.
func readResiduals(b []byte, name string) ([]residual, error) {
	t, err := readCSV(b, name)
	if err != nil {
		return nil, err
	}
	if err := t.require("file", "row", "species", "v_up", "J_up", "v_lo", "J_lo", "unit", "obs", "unc", "calc", "o_minus_c", "o_minus_c_over_unc", "status"); err != nil {
		return nil, err
	}
	out := make([]residual, 0, len(t.rows))
	files := map[string]int{}
	for i := range t.rows {
		var r residual
		var err error
		r.csvRow = t.lineNo[i]
		r.file = t.cell(i, "file")
		r.species = t.cell(i, "species")
		r.branch = t.cell(i, "branch")
		r.stUp, r.stLo = t.cell(i, "state_up"), t.cell(i, "state_lo")
		r.unit = t.cell(i, "unit")
		r.note = t.cell(i, "note")
		r.comment = t.cell(i, "comment")
		for _, q := range []struct {
			col string
			dst *int
		}{{"row", &r.row}, {"v_up", &r.vUp}, {"v_lo", &r.vLo}} {
			if *q.dst, err = t.int(i, q.col); err != nil {
				return nil, err
			}
		}
		for _, q := range []struct {
			col string
			dst *float64
		}{{"J_up", &r.jUp}, {"J_lo", &r.jLo}, {"obs", &r.obs}, {"unc", &r.unc}, {"calc", &r.calc}, {"o_minus_c", &r.oc}, {"o_minus_c_over_unc", &r.norm}} {
			if *q.dst, err = t.float(i, q.col); err != nil {
				return nil, err
			}
		}
		switch s := strings.ToLower(t.cell(i, "status")); s {
		case "used":
			r.used = true
		case "rejected":
		default:
			return nil, fmt.Errorf("report: %s: row %d: status: %q is neither used nor rejected", name, r.csvRow, t.cell(i, "status"))
		}
		k, ok := files[r.file]
		if !ok {
			k = len(files)
			files[r.file] = k
		}
		r.fileIndex = k
		out = append(out, r)
	}
	return out, nil
}

// thermoTable is thermo.csv: one row per temperature.
type thermoTable struct {
	comments []string
	cols     []string             // the quantity columns present, in thermoColumns order
	v        map[string][]float64 // column (lower case) → values per row
	n        int
}

// thermoColumns are the columns of thermo.csv, fixed by the thermo stage.
var thermoColumns = []string{"T_K",
	"Q", "Q_sigma", "Q_sigma_model", "Q_sigma_total", "Cp", "Cp_sigma", "Cp_sigma_model", "Cp_sigma_total",
	"S", "S_sigma", "S_sigma_model", "S_sigma_total", "H_minus_H0", "H_minus_H0_sigma", "H_minus_H0_sigma_model", "H_minus_H0_sigma_total",
	"H_minus_H298", "H_minus_H298_sigma", "H_minus_H298_sigma_model", "H_minus_H298_sigma_total",
	"gef", "gef_sigma", "gef_sigma_model", "gef_sigma_total", "share_outside_data", "Q_closed_form", "Q_closed_form_error",
	"Q_sigma_mc", "Cp_sigma_mc", "S_sigma_mc", "H_minus_H0_sigma_mc", "H_minus_H298_sigma_mc", "gef_sigma_mc"}

func (t *thermoTable) get(col string) []float64 { return t.v[strings.ToLower(col)] }

// readThermo reads thermo.csv. T_K, Q and Cp are required; the other columns
// are shown when present.
func readThermo(b []byte, name string) (*thermoTable, error) {
	t, err := readCSV(b, name)
	if err != nil {
		return nil, err
	}
	if err := t.require("T_K", "Q", "Cp"); err != nil {
		return nil, err
	}
	th := &thermoTable{comments: t.comments, v: map[string][]float64{}, n: len(t.rows)}
	for _, c := range thermoColumns {
		if !t.has(c) {
			continue
		}
		th.cols = append(th.cols, c)
		vals := make([]float64, len(t.rows))
		for i := range t.rows {
			if vals[i], err = t.float(i, c); err != nil {
				return nil, err
			}
		}
		th.v[strings.ToLower(c)] = vals
	}
	return th, nil
}

// genericCSV is a CSV file shown as it is (unassigned peaks).
type genericCSV struct {
	head     []string
	rows     [][]string
	comments []string
}

func readGenericCSV(b []byte, name string) (*genericCSV, error) {
	t, err := readCSV(b, name)
	if err != nil {
		return nil, err
	}
	return &genericCSV{head: t.head, rows: t.rows, comments: t.comments}, nil
}
