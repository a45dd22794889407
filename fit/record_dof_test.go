package fit

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit/model"
)

// TestRecordWithoutDegreesOfFreedom: a fit with as many lines as parameters has
// no dimensionless standard deviation; its record says null (JSON has no NaN)
// and reads back as NaN.
func TestRecordWithoutDegreesOfFreedom(t *testing.T) {
	// One pure-rotation line of 12C16O, J = 1-0 at 2B ≈ 3.8451 cm-1 (Huber &
	// Herzberg 1979, from memory), fitted with B alone.
	lines := makeLines("12C16O", "one.csv", yset{{0, 1}: 1.92253}, []trans{{0, 1, 0, 0}}, 1e-3, newRNG(1))
	r := mustFit(t, lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B"}}, Settings{Reject: DefaultReject})
	if r.Stats.DOF != 0 || !math.IsNaN(r.Stats.Sigma) {
		t.Fatalf("dof %d, s %v", r.Stats.DOF, r.Stats.Sigma)
	}
	var buf bytes.Buffer
	if err := NewRecord(r).Write(&buf); err != nil {
		t.Fatalf("write: %v", err)
	}
	if !strings.Contains(buf.String(), `"sigma_dimensionless": null`) {
		t.Errorf("record:\n%s", buf.String())
	}
	rec, err := constants.Read(&buf, "one.json")
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(rec.Stats.Sigma) || rec.Stats.DOF != 0 {
		t.Errorf("read back: %+v", rec.Stats)
	}
	var sum bytes.Buffer
	if err := WriteSummary(&sum, Problem{Lines: lines, Model: r.Model}, r, NewRecord(r)); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(sum.String(), "NaN") || !strings.Contains(sum.String(), "undefined (no degrees of freedom)") {
		t.Errorf("fit.md:\n%s", sum.String())
	}
}
