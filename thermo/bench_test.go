package thermo

import (
	"testing"
)

func rangeTemps(lo, hi, step float64) []float64 {
	var ts []float64
	for i := 0; ; i++ {
		t := lo + float64(i)*step
		if t > hi+1e-9 {
			break
		}
		ts = append(ts, t)
	}
	return ts
}

// BenchmarkTableCO: 10–6000 K in 1 K steps with linear σ for a 6-term CO
// Dunham fit (target: under 1 s per run on the 2-core machine). Each run
// includes the level enumeration and the NASA-7 fit.
func BenchmarkTableCO(b *testing.B) {
	rec, cs := fitHH(b, hhCO, 0.001, 1)
	temps := rangeTemps(10, 6000, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err := Compute(Problem{Constants: cs, Observed: rec.Observed}, Settings{Temperatures: temps})
		if err != nil {
			b.Fatal(err)
		}
		if len(res.Rows) != 5991 {
			b.Fatal(len(res.Rows))
		}
	}
}

// BenchmarkMonteCarloCO: 1000 draws on 100 temperatures (60–6000 K in 60 K
// steps) for the same fit (target: under 5 s per run).
func BenchmarkMonteCarloCO(b *testing.B) {
	rec, cs := fitHH(b, hhCO, 0.001, 1)
	temps := rangeTemps(60, 6000, 60)
	if len(temps) != 100 {
		b.Fatal(len(temps))
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		_, err := Compute(Problem{Constants: cs, Observed: rec.Observed}, Settings{Temperatures: temps, MonteCarlo: 1000, Seed: 1})
		if err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkTableNitricOxide: 10–6000 K in 1 K steps with linear σ for a ²Π
// term-values fit of 14N16O (bands 1-0 and 2-0, v = 0–2 fitted, the others
// extrapolated; target: under 5 s per run). Each run includes the level
// enumeration (every spin–orbit and Λ-doubling component, with gradients),
// the budget's recomputed alternatives and the NASA-7 fit.
func BenchmarkTableNitricOxide(b *testing.B) {
	o := nitricOxide()
	lines := o.openLines(b, [][2]int{{1, 0}, {2, 0}}, 61, 0.001, 3)
	rec, cs := fitOpenRecord(b, lines, o.state, []string{"B", "D", "A", "gamma", "p", "q"})
	temps := rangeTemps(10, 6000, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err := Compute(Problem{Constants: cs, Observed: rec.Observed}, Settings{Temperatures: temps})
		if err != nil {
			b.Fatal(err)
		}
		if len(res.Rows) != 5991 {
			b.Fatal(len(res.Rows))
		}
		if i == 0 {
			b.ReportMetric(float64(res.System.NumLevels()), "levels")
		}
	}
}
