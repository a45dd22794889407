package assign

import (
	"strings"
	"testing"

	"bandwright/constants"
	"bandwright/fit/model"
	"bandwright/fit/states"
)

// TestStartRefusesOpenShell: assign handles ¹Σ ground states only; a
// constants record of an open-shell state is refused with a message that
// says so.
func TestStartRefusesOpenShell(t *testing.T) {
	x := states.State{Label: "X", Multiplicity: 2, Lambda: 1}
	m, err := model.NewTermValuesStates([]states.State{x}, []model.LevelSpec{{Species: "14N16O", V: []int{0, 1}}}, []string{"B", "A"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	c := &constants.Set{Model: m, Params: m.Params(), Values: model.Values(m.Params())}
	_, err = StartFromConstants(c, "no.json", nil)
	if err == nil || !strings.Contains(err.Error(), "no.json describes the electronic states X ²Π") || !strings.Contains(err.Error(), "¹Σ ground state only") {
		t.Errorf("error %v", err)
	}
}
