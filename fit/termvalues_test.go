package fit

import (
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/model"
)

// coTermValuesY is 12C16O of Huber & Herzberg (1979, from memory) truncated to
// Y10, Y20, Y01, Y11, Y02: then T_v = G(v) − G(0), B_v = Y01 + Y11(v+½) and
// D_v = −Y02 exactly, so the term-values model describes the lines without error
// and the derived B_e, α_e, ω_e, ω_e x_e must equal the Dunham values
// (common practice: B_v = B_e − α_e(v+½), G(v) = ω_e(v+½) − ω_e x_e(v+½)²).
func coTermValuesY() yset {
	y := hhCO.dunham()
	delete(y, [2]int{3, 0})
	return y
}

// TestTermValuesModel fits term values per level and checks T, B, D, the band
// origins and the derived equilibrium constants.
func TestTermValuesModel(t *testing.T) {
	y := coTermValuesY()
	for _, tc := range []struct {
		name  string
		bands [][2]int
	}{
		{"two levels", [][2]int{{1, 0}}},
		{"three levels", [][2]int{{1, 0}, {2, 1}, {2, 0}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			lines := makeLines("12C16O", "lv.csv", y, irBranches(tc.bands, 30), 1e-4, nil)
			r := mustFit(t, lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{Reject: DefaultReject})
			levels := map[int]bool{}
			for _, b := range tc.bands {
				levels[b[0]], levels[b[1]] = true, true
			}
			for v := range levels {
				wantT := termEnergy(y, v, 0) - termEnergy(y, 0, 0)
				wantB := y[[2]int{0, 1}] + y[[2]int{1, 1}]*(float64(v)+0.5)
				wantD := -y[[2]int{0, 2}]
				checks := []struct {
					id   string
					want float64
				}{{"T", wantT}, {"B", wantB}, {"D", wantD}}
				for _, c := range checks {
					p := paramOf(t, r, model.Param{Name: c.id, V: v, Species: "12C16O"}.ID())
					if !scalar.EqualWithinAbsOrRel(p.Value, c.want, 1e-12, 1e-8) {
						t.Errorf("%s = %.12g, want %.12g", p.ID(), p.Value, c.want)
					}
				}
			}
			if p := paramOf(t, r, "T_v0[12C16O]"); !p.Fixed || p.Value != 0 {
				t.Errorf("T_v0 = %v fixed %v: the lowest level is the energy zero", p.Value, p.Fixed)
			}
			for _, b := range tc.bands {
				name := "nu0_" + strconv.Itoa(b[0]) + "-" + strconv.Itoa(b[1])
				d := derivedOf(t, r.Derived, name, "12C16O")
				tu := paramOf(t, r, model.Param{Name: "T", V: b[0], Species: "12C16O"}.ID()).Value
				tl := paramOf(t, r, model.Param{Name: "T", V: b[1], Species: "12C16O"}.ID()).Value
				if !scalar.EqualWithinRel(d.Value, tu-tl, 1e-14) {
					t.Errorf("%s = %.12g, T′ − T″ = %.12g", name, d.Value, tu-tl)
				}
			}
			be := derivedOf(t, r.Derived, "B_e", "12C16O")
			ae := derivedOf(t, r.Derived, "alpha_e", "12C16O")
			if !scalar.EqualWithinRel(be.Value, y[[2]int{0, 1}], 1e-9) {
				t.Errorf("B_e = %.12g, want Y01 = %.12g", be.Value, y[[2]int{0, 1}])
			}
			if !scalar.EqualWithinRel(ae.Value, -y[[2]int{1, 1}], 1e-7) {
				t.Errorf("alpha_e = %.12g, want −Y11 = %.12g", ae.Value, -y[[2]int{1, 1}])
			}
			if len(levels) >= 3 {
				we := derivedOf(t, r.Derived, "omega_e", "12C16O")
				wx := derivedOf(t, r.Derived, "omega_e_x_e", "12C16O")
				if !scalar.EqualWithinRel(we.Value, y[[2]int{1, 0}], 1e-10) || !scalar.EqualWithinRel(wx.Value, -y[[2]int{2, 0}], 1e-8) {
					t.Errorf("omega_e = %.12g, omega_e_x_e = %.12g; want %.12g, %.12g", we.Value, wx.Value, y[[2]int{1, 0}], -y[[2]int{2, 0}])
				}
			}
		})
	}
}

// TestTermValuesPureRotationOnly: pure-rotation lines within v = 0 and within
// v = 1 never connect the two levels, so T_v1 is undetermined by the data and
// irrelevant to the rotational constants. The fit holds it at 0 with a
// warning, leaves it out of the covariance, recovers B_v and D_v of both
// levels (Huber & Herzberg constants through coTermValuesY), marks T_v1 in the
// record and derives no ω_e from the arbitrary term value; with a band that
// connects the levels it floats again.
func TestTermValuesPureRotationOnly(t *testing.T) {
	y := coTermValuesY()
	lines := makeLines("12C16O", "rot.csv", y, irBranches([][2]int{{0, 0}, {1, 1}, {2, 2}}, 20), 1e-6, nil)
	r := mustFit(t, lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{Reject: DefaultReject})
	for _, v := range []int{1, 2} {
		tv := paramOf(t, r, model.Param{Name: "T", V: v, Species: "12C16O"}.ID())
		if !tv.Fixed || tv.Value != 0 || tv.Sigma != 0 {
			t.Errorf("%s = %v ± %v, fixed %v; want held at 0", tv.ID(), tv.Value, tv.Sigma, tv.Fixed)
		}
		wantB := y[[2]int{0, 1}] + y[[2]int{1, 1}]*(float64(v)+0.5)
		if b := paramOf(t, r, model.Param{Name: "B", V: v, Species: "12C16O"}.ID()); !scalar.EqualWithinAbsOrRel(b.Value, wantB, 1e-12, 1e-9) {
			t.Errorf("%s = %.12g, want %.12g", b.ID(), b.Value, wantB)
		}
	}
	if len(r.Unconnected) != 2 || r.Cov.SymmetricDim() != 6 {
		t.Errorf("unconnected %v, covariance of %d parameters; want T_v1, T_v2 out of a 6-parameter covariance (B, D of three levels)", r.Unconnected, r.Cov.SymmetricDim())
	}
	var warned int
	for _, w := range r.Warnings {
		if strings.HasPrefix(w, "T_v1[12C16O] held at 0: no line connects v=1 to v=0 of 12C16O") || strings.HasPrefix(w, "T_v2[12C16O] held at 0") {
			warned++
		}
	}
	if warned != 2 {
		t.Errorf("warnings %q: want one for each of T_v1 and T_v2", r.Warnings)
	}
	for _, d := range r.Derived {
		if d.Name == "omega_e" || strings.HasPrefix(d.Name, "nu0") {
			t.Errorf("derived %s = %v from term values that are not energies", d.Name, d.Value)
		}
	}
	c, err := NewRecord(r).Constants()
	if err != nil {
		t.Fatal(err)
	}
	if !c.Unconnected(0, 1) || !c.Unconnected(0, 2) || c.Unconnected(0, 0) {
		t.Errorf("record: unconnected v=0 %v, v=1 %v, v=2 %v; want v=1 and v=2", c.Unconnected(0, 0), c.Unconnected(0, 1), c.Unconnected(0, 2))
	}
	// A band 2-1 connects v=1 and v=2: T_v2 floats relative to T_v1, which
	// alone is held.
	lines = append(lines, makeLines("12C16O", "rot.csv", y, irBranches([][2]int{{2, 1}}, 20), 1e-6, nil)...)
	r = mustFit(t, lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}}, Settings{Reject: DefaultReject})
	if t2 := paramOf(t, r, "T_v2[12C16O]"); t2.Fixed || !scalar.EqualWithinAbsOrRel(t2.Value, termEnergy(y, 2, 0)-termEnergy(y, 1, 0), 1e-9, 1e-9) {
		t.Errorf("T_v2 = %v (fixed %v), want G(2) − G(1) = %v", t2.Value, t2.Fixed, termEnergy(y, 2, 0)-termEnergy(y, 1, 0))
	}
	if len(r.Unconnected) != 1 || r.Params[r.Unconnected[0]].ID() != "T_v1[12C16O]" {
		t.Errorf("unconnected %v, want T_v1 alone", r.Unconnected)
	}
}
