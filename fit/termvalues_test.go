package fit

import (
	"errors"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"bandwright/fit/model"
	"bandwright/internal/failure"
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

// TestTermValuesPureRotationOnly: pure-rotation lines within v = 0 and within v = 1
// never connect the two levels, so T_v1 is undetermined; the error must name
// it and be of kind failure.CannotCompute (exit code 2).
func TestTermValuesPureRotationOnly(t *testing.T) {
	y := coTermValuesY()
	lines := makeLines("12C16O", "rot.csv", y, irBranches([][2]int{{0, 0}, {1, 1}}, 20), 1e-6, nil)
	m, err := BuildModel(lines, ModelSpec{Kind: model.KindTermValues, Terms: []string{"B", "D"}})
	if err != nil {
		t.Fatal(err)
	}
	_, err = Fit(Problem{Lines: lines, Model: m}, Settings{Reject: DefaultReject})
	var ue *UndeterminedError
	if !errors.As(err, &ue) {
		t.Fatalf("err = %v, want *UndeterminedError", err)
	}
	if failure.KindOf(err) != failure.CannotCompute {
		t.Errorf("kind %v, want failure.CannotCompute", failure.KindOf(err))
	}
	if len(ue.Groups) != 1 || len(ue.Groups[0]) != 1 || ue.Groups[0][0] != "T_v1[12C16O]" {
		t.Errorf("undetermined groups %v, want [[T_v1[12C16O]]]", ue.Groups)
	}
	if !strings.Contains(err.Error(), "T_v1[12C16O]") || !strings.HasPrefix(err.Error(), "fit: ") {
		t.Errorf("message %q", err)
	}
}
