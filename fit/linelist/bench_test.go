package linelist

import (
	"bytes"
	"encoding/csv"
	"io"
	"strconv"
	"testing"

	"github.com/gocarina/gocsv"
)

// genLines makes an n-line list of 12C16O-like infrared lines: P and R branches of the
// bands v -> v-1, v = 1..10, J_lo = 0..99, positions from the term values
// E(v,J) = we(v+1/2) - wexe(v+1/2)^2 + Bv J(J+1) - De [J(J+1)]^2, Bv = Be - ae(v+1/2),
// with the X1Sigma+ constants of docs/references.md (Huber & Herzberg 1979, from memory).
// Only the shape of the data matters to the benchmark.
func genLines(n int) []byte {
	const we, wexe, be, ae, de = 2169.81358, 13.28831, 1.93128087, 0.01750441, 6.12147e-6
	term := func(v, j int) float64 {
		x := float64(v) + 0.5
		jj := float64(j * (j + 1))
		return we*x - wexe*x*x + (be-ae*x)*jj - de*jj*jj
	}
	var b bytes.Buffer
	b.Grow(n * 48)
	b.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc,branch\n")
	var num []byte
	for i := 0; i < n; i++ {
		k := i % 1990
		v := 1 + k/199
		jLo := (k % 199) / 2
		jUp, br := jLo+1, "R"
		if k%2 == 1 {
			jUp, br = jLo-1, "P"
			if jUp < 0 {
				jUp, br = jLo+1, "R"
			}
		}
		b.WriteString("12C16O,")
		b.WriteString(strconv.Itoa(v))
		b.WriteByte(',')
		b.WriteString(strconv.Itoa(jUp))
		b.WriteByte(',')
		b.WriteString(strconv.Itoa(v - 1))
		b.WriteByte(',')
		b.WriteString(strconv.Itoa(jLo))
		b.WriteByte(',')
		num = strconv.AppendFloat(num[:0], term(v, jUp)-term(v-1, jLo), 'f', 6, 64)
		b.Write(num)
		b.WriteString(",0.0005,")
		b.WriteString(br)
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// BenchmarkRead reads generated line lists of 100,000 and 1,000,000 lines.
func BenchmarkRead(b *testing.B) {
	for _, n := range []int{100_000, 1_000_000} {
		data := genLines(n)
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				l, err := Read(bytes.NewReader(data), "bench.csv")
				if err != nil {
					b.Fatal(err)
				}
				if len(l.Lines) != n {
					b.Fatalf("%d lines", len(l.Lines))
				}
			}
		})
	}
}

// BenchmarkWrite writes 100,000 lines.
func BenchmarkWrite(b *testing.B) {
	l, err := Read(bytes.NewReader(genLines(100_000)), "bench.csv")
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := Write(io.Discard, l.Lines, l.Extra); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkGocsvRows decodes the rows of 100,000 lines into string fields through gocsv's
// reflection (gocsv.Unmarshaller), without any validation: the cost that made Read take
// rows from encoding/csv directly (see mapHeader).
func BenchmarkGocsvRows(b *testing.B) {
	data := genLines(100_000)
	b.ReportAllocs()
	for b.Loop() {
		r := csv.NewReader(bytes.NewReader(data))
		um, err := gocsv.NewUnmarshaller(r, headerRow{})
		if err != nil {
			b.Fatal(err)
		}
		if err := um.RenormalizeHeaders(func(h []string) []string {
			out := make([]string, len(h))
			for i := range h {
				out[i] = headerKey(h[i])
			}
			return out
		}); err != nil {
			b.Fatal(err)
		}
		n := 0
		for {
			_, err := um.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			n++
		}
		if n != 100_000 {
			b.Fatalf("%d rows", n)
		}
	}
}
