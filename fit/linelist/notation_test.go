package linelist

import (
	"reflect"
	"strings"
	"testing"
)

// TestBandNotation: a band is written as it is typed after --bands, and read
// back; the branch letters follow ΔJ = J′ − J″ (O −2, P −1, Q 0, R +1, S +2;
// common practice).
func TestBandNotation(t *testing.T) {
	bands, err := ParseBands(" 1-0, 2 - 1,,0-0 ")
	if err != nil {
		t.Fatal(err)
	}
	if want := []Band{{VUp: 1}, {VUp: 2, VLo: 1}, {}}; !reflect.DeepEqual(bands, want) {
		t.Fatalf("ParseBands: %v, want %v", bands, want)
	}
	var labels []string
	for _, b := range bands {
		labels = append(labels, b.String())
	}
	if got := strings.Join(labels, ","); got != "1-0,2-1,0-0" {
		t.Errorf("labels %q", got)
	}
	for _, bad := range []string{"", "1", "1-x", "-1-0", "101-0", "1–0"} {
		if _, err := ParseBands(bad); err == nil || !strings.HasPrefix(err.Error(), "linelist: ") {
			t.Errorf("ParseBands(%q): %v", bad, err)
		}
	}
	if got := TransitionLabel(1, 11, 0, 12); got != "1-0 P(12)" {
		t.Errorf("TransitionLabel P(12) = %q", got)
	}
	if got := TransitionLabel(0, 3, 0, 1); got != "0-0 S(1)" {
		t.Errorf("TransitionLabel S(1) = %q", got)
	}
	for dJ := -3; dJ <= 3; dJ++ {
		l := BranchLetter(dJ)
		back, ok := BranchDeltaJ(strings.ToLower(l))
		if (l != "") != ok || (ok && back != dJ) {
			t.Errorf("ΔJ %d: letter %q, back %d %v", dJ, l, back, ok)
		}
	}
}

// TestBandsOfElectronicStates: bands with state labels read back as written.
func TestBandsOfElectronicStates(t *testing.T) {
	bands, err := ParseBands("A:0-0, A:1-X:0 ,1-0")
	if err != nil {
		t.Fatal(err)
	}
	want := []Band{{StateUp: "A"}, {VUp: 1, StateUp: "A", StateLo: "X"}, {VUp: 1}}
	if !reflect.DeepEqual(bands, want) {
		t.Fatalf("got %+v, want %+v", bands, want)
	}
	for i, s := range []string{"A:0-0", "A:1-X:0", "1-0"} {
		if bands[i].String() != s {
			t.Errorf("%+v written %q, want %q", bands[i], bands[i].String(), s)
		}
	}
	for _, bad := range []string{"A:-0", "A0-0", "A:x-0"} {
		if _, err := ParseBands(bad); err == nil {
			t.Errorf("ParseBands(%q) accepted", bad)
		}
	}
}
