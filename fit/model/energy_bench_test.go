package model

import "testing"

// benchDunham is a 15-term Dunham model of five CO isotopologues.
func benchDunham(b *testing.B) (*Dunham, []float64) {
	list := mustIsosB(b, "12C16O", "13C16O", "12C18O", "13C18O", "12C17O")
	m, err := NewDunham(list, DunhamOptions{Terms: []string{"Y10", "Y20", "Y30", "Y40", "Y50", "Y01", "Y11", "Y21", "Y31", "Y02", "Y12", "Y22", "Y03", "Y13", "Y04"}})
	if err != nil {
		b.Fatal(err)
	}
	p := make([]float64, len(m.Params()))
	for i := range p {
		p[i] = 1e-3 * float64(i+1)
	}
	return m, p
}

// benchArgs are (species, v, J) triples of transitions v+1, J+1 ← v, J.
func benchArgs() [][3]int {
	var a [][3]int
	for i := 0; i < 1000; i++ {
		a = append(a, [3]int{i % 5, (i * 7) % 25, (i * 13) % 100})
	}
	return a
}

// BenchmarkDunhamEnergy measures 1000 energies per op, with their gradients
// and without.
func BenchmarkDunhamEnergy(b *testing.B) {
	m, p := benchDunham(b)
	g := make([]float64, len(p))
	args := benchArgs()
	b.Run("grad", func(b *testing.B) {
		for b.Loop() {
			for _, a := range args {
				m.Energy(a[0], a[1], a[2], p, g)
			}
		}
	})
	b.Run("value", func(b *testing.B) {
		for b.Loop() {
			for _, a := range args {
				m.Energy(a[0], a[1], a[2], p, nil)
			}
		}
	})
}

// BenchmarkDunhamTransition measures 1000 transitions per op, with their
// gradients and without.
func BenchmarkDunhamTransition(b *testing.B) {
	m, p := benchDunham(b)
	g := make([]float64, len(p))
	args := benchArgs()
	b.Run("grad", func(b *testing.B) {
		for b.Loop() {
			for _, a := range args {
				m.Transition(a[0], a[1]+1, a[2]+1, a[1], a[2], p, g)
			}
		}
	})
	b.Run("value", func(b *testing.B) {
		for b.Loop() {
			for _, a := range args {
				m.Transition(a[0], a[1]+1, a[2]+1, a[1], a[2], p, nil)
			}
		}
	})
}
