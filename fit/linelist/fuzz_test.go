package linelist

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"bandwright/internal/csvcell"
)

// FuzzRead: Read never panics; a failed read is a *Error with at least one problem
// naming the file; a successful read written with Write reads back to the same lines,
// text cells passed through csvcell.Neutralise and floats bit for bit.
func FuzzRead(f *testing.F) {
	seeds, _ := filepath.Glob("testdata/*.csv")
	for _, s := range seeds {
		data, err := os.ReadFile(s)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	for _, s := range []string{
		hdr + "12C16O,1,1,0,0,2147.08,0.001\n",
		hdr[:len(hdr)-1] + ",comment,x\n12C16O,1,1,0,0,2147.08,0.001,\"a\r\r\nb\",=1\n",
		hdr[:len(hdr)-1] + ",unit,branch\nD35Cl,1,0,0,1,6e7,3,MHz,P\n",
		// Positions in MHz without a unit, a mix, a duplicate, text that is not UTF-8.
		hdr + "12C16O,1,1,0,0,64368290.7,0.03\n",
		hdr + "12C16O,1,1,0,0,2147.08,0.001\n12C16O,1,2,0,1,64482003.1,0.03\n12C16O,0,1,0,0,115271.2,0.001\n",
		hdr + "12C16O,1,1,0,0,2147.08,0.001\n12C16O,1,1,0,0,2147.08,0.002\n",
		hdr[:len(hdr)-1] + ",comment\n12C16O,1,1,0,0,2147.08,0.001,caf\xe9\n",
		// Open-shell columns.
		hdr[:len(hdr)-1] + ",N_up,N_lo,F_up,F_lo,parity_up,parity_lo,state_up,state_lo\n14N16O,1,3.5,0,2.5,1876.1,0.001,,,1,1,e,e,,\n14N16O,0,1.5,0,0.5,3.1,0.001,2,1,F2,F1,f,f,A,=X\n",
		hdr[:len(hdr)-1] + ",N_up,N_lo,unit\n16O16O,0,1,0,2,56264.774,0.01,1,1,MHz\n",
		hdr[:len(hdr)-1] + ",F_up,F_lo,parity_up,parity_lo\n12C16O,1,1,0,0,2147.08,0.001,,,,\n14N16O,1,3.5,0,2.5,1876.1,0.001,1,1,e,e\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		l1, err := Read(bytes.NewReader(data), "f.csv")
		if err != nil {
			var le *Error
			if !errors.As(err, &le) || len(le.Problems) == 0 || len(le.Problems) > MaxProblems {
				t.Fatalf("error %T %v", err, err)
			}
			for _, p := range le.Problems {
				if p.File != "f.csv" || p.Reason == "" {
					t.Fatalf("problem %+v", p)
				}
			}
			return
		}
		if len(l1.Lines) == 0 {
			t.Fatalf("success with no lines")
		}
		var buf bytes.Buffer
		if err := Write(&buf, l1.Lines, l1.Extra); err != nil {
			// Two pass-through names that NeutraliseCell makes equal ("=a" and "'=a")
			// cannot both be written; Write refuses them rather than write a file that
			// does not read back.
			if strings.Contains(err.Error(), "repeats a column name") {
				return
			}
			t.Fatalf("Write: %v", err)
		}
		l2, err := Read(bytes.NewReader(buf.Bytes()), "f.csv")
		if err != nil {
			t.Fatalf("re-read: %v\nwritten:\n%s", err, buf.Bytes())
		}
		if len(l2.Lines) != len(l1.Lines) || len(l2.Extra) != len(l1.Extra) {
			t.Fatalf("%d lines %d extra, then %d and %d", len(l1.Lines), len(l1.Extra), len(l2.Lines), len(l2.Extra))
		}
		for i, n := range l1.Extra {
			if l2.Extra[i] != csvcell.Neutralise(n) {
				t.Fatalf("extra name %q became %q", n, l2.Extra[i])
			}
		}
		for i := range l1.Lines {
			a, b := l1.Lines[i], l2.Lines[i]
			if a.Species != b.Species || a.VUp != b.VUp || a.JUp != b.JUp || a.VLo != b.VLo || a.JLo != b.JLo ||
				!sameFloat(a.Position, b.Position) || !sameFloat(a.Unc, b.Unc) || a.Unit != b.Unit ||
				csvcell.Neutralise(a.Branch) != b.Branch || csvcell.Neutralise(a.Comment) != b.Comment {
				t.Fatalf("line %d:\n%+v\n%+v", i, a, b)
			}
			if (a.Open == nil) != (b.Open == nil) || (a.Open != nil && !sameOpen(*a.Open, *b.Open)) {
				t.Fatalf("line %d open-shell labels:\n%+v\n%+v", i, a.Open, b.Open)
			}
			for j := range a.Extra {
				if csvcell.Neutralise(a.Extra[j]) != b.Extra[j] {
					t.Fatalf("line %d extra %d: %q became %q", i, j, a.Extra[j], b.Extra[j])
				}
			}
		}
	})
}

// sameOpen compares open-shell labels as Write and Read carry them (state
// labels through csvcell.Neutralise).
func sameOpen(a, b OpenShell) bool {
	a.Up.State, a.Lo.State = csvcell.Neutralise(a.Up.State), csvcell.Neutralise(a.Lo.State)
	return a == b
}

// FuzzReadTransitions: the reader of lists of transitions (predict --lines)
// never panics; what it accepts has the quantum numbers of a line list, and
// CheckStates against a ¹Σ ground state either completes or refuses every
// line with a problem naming the file.
func FuzzReadTransitions(f *testing.F) {
	f.Add([]byte("species,v_up,J_up,v_lo,J_lo\n12C16O,1,1,0,0\n"))
	f.Add([]byte("species,v_up,J_up,v_lo,J_lo,N_up,N_lo\n16O2,0,1,0,0,1,1\n"))
	f.Add([]byte("species,v_up,J_up,v_lo,J_lo,F_up,F_lo,parity_up,parity_lo,state_up\n14N16O,1,3.5,0,2.5,1,1,e,e,A\n"))
	f.Add([]byte("species,v_up,J_up,v_lo,J_lo,position\n12C16O,1,1,0,0,\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		l, err := ReadTransitions(bytes.NewReader(data), "t.csv")
		if err != nil {
			var le *Error
			if !errors.As(err, &le) || len(le.Problems) == 0 {
				t.Fatalf("error %T %v", err, err)
			}
			return
		}
		for _, x := range l.Lines {
			if x.J2Up() < 0 || x.J2Lo() < 0 || x.J2Up() > 2*MaxJ || x.VUp < 0 || x.VUp > MaxV {
				t.Fatalf("accepted %+v", x)
			}
		}
		if err := CheckStates(l, nil); err != nil {
			var le *Error
			if !errors.As(err, &le) || len(le.Problems) == 0 || le.Problems[0].File != "t.csv" {
				t.Fatalf("CheckStates error %T %v", err, err)
			}
		}
	})
}
