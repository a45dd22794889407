package fit

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/constants"
	"bandwright/fit/model"
)

// recordCases are fits whose records must survive a write and a read: a
// Dunham fit of two isotopologues with a breakdown term and a fixed term, a
// term-values fit, and a calibrated fit (κ in the covariance, dropped on reading).
func recordCases(t *testing.T) map[string]*Result {
	y := hhHCl.dunham()
	rng := newRNG(71)
	yD := massScaled(y, reducedMass(t, "1H35Cl"), reducedMass(t, "2H35Cl"))
	yD[[2]int{0, 1}] *= 1 + 2e-4
	hcl := append(makeLines("1H35Cl", "h.csv", y, hhHCl.transitions(), 1e-3, rng), makeLines("2H35Cl", "h.csv", yD, hhHCl.transitions(), 1e-3, rng)...)
	renumber(hcl)
	co, _ := noisyCO(72, 1e-3)
	co2 := makeLines("12C16O", "b.csv", hhCO.dunham(), irBranches([][2]int{{1, 0}}, 20), 1e-3, rng)
	return map[string]*Result{
		"dunham": mustFit(t, hcl, ModelSpec{Kind: model.KindDunham, Terms: []string{"Y10", "Y20", "Y30", "Y01", "Y11", "Y02"}, BOBTerms: []string{"Y01"},
			Fixes: []model.Fix{{Name: "Y12", V: -1, Value: -1e-6}}}, Settings{Reject: DefaultReject}),
		"term-values": mustFit(t, co, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{Reject: DefaultReject}),
		"calibrate":   mustFit(t, append(co, co2...), ModelSpec{Kind: model.KindDunham, Terms: hhCO.dunham().terms()}, Settings{Reject: DefaultReject, Calibrate: true}),
	}
}

// TestRecordRoundTrip: NewRecord → Write → ReadRecord → Constants gives the
// same energies (with gradients) and the covariance of the model parameters.
func TestRecordRoundTrip(t *testing.T) {
	for name, r := range recordCases(t) {
		t.Run(name, func(t *testing.T) {
			var buf bytes.Buffer
			if err := NewRecord(r).Write(&buf); err != nil {
				t.Fatal(err)
			}
			rec, err := constants.Read(bytes.NewReader(buf.Bytes()), "constants.json")
			if err != nil {
				t.Fatal(err)
			}
			if rec.Schema != constants.Schema || rec.CovarianceConvention != constants.CovarianceConvention {
				t.Errorf("schema %q, convention %q", rec.Schema, rec.CovarianceConvention)
			}
			c, err := rec.Constants()
			if err != nil {
				t.Fatal(err)
			}
			if len(c.Free) != len(r.Free) {
				t.Fatalf("%d free parameters read back, %d fitted", len(c.Free), len(r.Free))
			}
			for a := range c.Free {
				for b := range c.Free {
					if !scalar.EqualWithinRel(c.Cov.At(a, b), r.Cov.At(a, b), 1e-15) {
						t.Errorf("cov(%d,%d) = %g, fit %g", a, b, c.Cov.At(a, b), r.Cov.At(a, b))
					}
				}
			}
			p := model.Values(r.Params)
			np := len(p)
			g := make([]float64, np)
			gf := make([]float64, len(c.Free))
			for s, sp := range r.Model.Species() {
				if c.Model.Species()[s] != sp {
					t.Fatalf("species %v, fit %v", c.Model.Species(), r.Model.Species())
				}
				for _, vj := range [][2]int{{0, 0}, {1, 7}, {2, 20}} {
					if !r.Model.HasLevel(s, vj[0]) {
						continue
					}
					want := r.Model.Energy(s, vj[0], vj[1], p, g)
					got := c.Energy(s, vj[0], vj[1], gf)
					if !scalar.EqualWithinRel(got, want, 1e-15) {
						t.Errorf("%s E(%d,%d) = %.16g, fit %.16g", sp, vj[0], vj[1], got, want)
					}
					for k, j := range r.Free {
						if !scalar.EqualWithinAbsOrRel(gf[k], g[j], 1e-300, 1e-15) {
							t.Errorf("%s ∂E/∂%s = %g, fit %g", sp, r.Params[j].ID(), gf[k], g[j])
						}
					}
				}
			}
			// WithFree and FreeValues invert each other.
			x := c.FreeValues()
			x[0] *= 1.01
			if got := c.WithFree(x).FreeValues()[0]; got != x[0] || c.FreeValues()[0] == x[0] {
				t.Error("WithFree changed the original or did not set the value")
			}
		})
	}
}

// TestRecordRefusals: a newer schema is refused with a message saying so, a
// foreign schema and a covariance of the wrong size are refused.
func TestRecordRefusals(t *testing.T) {
	r := recordCases(t)["term-values"]
	var buf bytes.Buffer
	if err := NewRecord(r).Write(&buf); err != nil {
		t.Fatal(err)
	}
	edit := func(f func(m map[string]any)) []byte {
		var m map[string]any
		if err := json.Unmarshal(buf.Bytes(), &m); err != nil {
			t.Fatal(err)
		}
		f(m)
		b, err := json.Marshal(m)
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	for _, tc := range []struct {
		name string
		data []byte
		want []string
	}{
		{"newer", edit(func(m map[string]any) { m["schema"] = "bandwright.constants/99" }), []string{"c.json", "schema", "newer"}},
		{"older", edit(func(m map[string]any) { m["schema"] = "bandwright.constants/0" }), []string{"c.json", "schema", "older"}},
		{"foreign", edit(func(m map[string]any) { m["schema"] = "something/1" }), []string{"c.json", "not a bandwright constants record"}},
		{"cov rows", edit(func(m map[string]any) {
			cv := m["covariance"].([]any)
			m["covariance"] = cv[:len(cv)-1]
		}), []string{"c.json", "covariance"}},
		{"cov columns", edit(func(m map[string]any) {
			cv := m["covariance"].([]any)
			row := cv[1].([]any)
			cv[1] = append(row, 0.0)
		}), []string{"c.json", "covariance", "row 2"}},
		{"not json", []byte("{"), []string{"c.json", "not a constants record"}},
		{"unknown model", edit(func(m map[string]any) { m["model"] = "spline" }), []string{"c.json", "spline"}},
	} {
		_, err := constants.Read(bytes.NewReader(tc.data), "c.json")
		if err == nil {
			t.Errorf("%s: accepted", tc.name)
			continue
		}
		if !strings.HasPrefix(err.Error(), "constants: ") {
			t.Errorf("%s: %q does not start with the package name", tc.name, err)
		}
		for _, w := range tc.want {
			if !strings.Contains(err.Error(), w) {
				t.Errorf("%s: %q does not mention %q", tc.name, err, w)
			}
		}
	}
}
