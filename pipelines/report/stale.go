package report

import (
	"encoding/json"
	"path/filepath"

	"bandwright/constants"
)

// staleStages compares the provenance the stage files record with the files
// of the folder: thermo.json and nasa7.json name the SHA-256 of the
// constants record they were computed from, constants.json the SHA-256 of
// the line lists the fit read. A stage run again alone (fit re-run into a
// folder that kept the old thermo files, say) leaves files made from other
// inputs; mixing them in one report would present numbers that do not go
// together. It returns one sentence per stale stage and whether the thermo
// files are stale (their section is then left out).
func staleStages(contents map[string][]byte, f *folder) (notes []string, thermoStale bool) {
	hashes := map[string]string{}
	for _, fi := range f.files {
		hashes[fi.name] = fi.sha256
	}
	cons := hashes[constants.ConstantsFile]
	for _, name := range []string{constants.ThermoJSONFile, constants.NASA7File} {
		b, ok := contents[name]
		if !ok {
			continue
		}
		var doc struct {
			Provenance constants.Provenance `json:"provenance"`
		}
		if json.Unmarshal(b, &doc) != nil || len(doc.Provenance.Inputs) == 0 {
			continue
		}
		if from := doc.Provenance.Inputs[0].SHA256; from != "" && from != cons {
			thermoStale = true
			notes = append(notes, sprintf("%s was computed from another constants record (SHA-256 %s) than this folder's constants.json (%s): the thermo stage is stale, and its section is left out; run bandwright thermo again on this constants.json.",
				name, short(from), short(cons)))
		}
	}
	if lines, ok := hashes[constants.LinesFile]; ok {
		for _, in := range f.record.Provenance.Inputs {
			if filepath.Base(in.Path) == constants.LinesFile && in.SHA256 != "" && in.SHA256 != lines {
				notes = append(notes, sprintf("lines.csv of this folder (SHA-256 %s) is not the line list the fit read (%s): the assign stage was run again after the fit; fit it again.", short(lines), short(in.SHA256)))
			}
		}
	}
	return notes, thermoStale
}

func short(sha string) string {
	if len(sha) > 12 {
		return sha[:12] + "…"
	}
	return sha
}
