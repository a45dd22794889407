package linelist

import (
	"bytes"
	"encoding/csv"
	"io"
	"runtime"
	"strconv"
	"strings"
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

// BenchmarkReadMemory measures the memory a read needs per MB of input, for the
// README's promises: line lists of about 1, 10 and 100 MB, and a 10 MB list
// with 900 pass-through columns. alloc-MB/MB is what the read allocates in
// all, live-MB/MB what stays in use with the result held (after a collection).
func BenchmarkReadMemory(b *testing.B) {
	wide := func(mb int) []byte {
		var buf bytes.Buffer
		buf.WriteString("species,v_up,J_up,v_lo,J_lo,position,unc")
		for k := range 900 {
			buf.WriteString(",x" + strconv.Itoa(k))
		}
		buf.WriteByte('\n')
		row := "12C16O,1,1,0,0,2147.081,0.0005" + strings.Repeat(",1", 900) + "\n"
		for buf.Len() < mb<<20 {
			buf.WriteString(row)
		}
		return buf.Bytes()
	}
	for _, c := range []struct {
		name string
		data []byte
	}{
		{"1MB", genLines(1 << 20 / 48)},
		{"10MB", genLines(10 << 20 / 48)},
		{"100MB", genLines(100 << 20 / 48)},
		{"10MB-900-columns", wide(10)},
	} {
		b.Run(c.name, func(b *testing.B) {
			mb := float64(len(c.data)) / (1 << 20)
			var alloc, live float64
			for b.Loop() {
				runtime.GC()
				var m0, m1 runtime.MemStats
				runtime.ReadMemStats(&m0)
				l, err := Read(bytes.NewReader(c.data), "bench.csv")
				if err != nil {
					b.Fatal(err)
				}
				runtime.ReadMemStats(&m1)
				alloc = float64(m1.TotalAlloc-m0.TotalAlloc) / (1 << 20)
				runtime.GC()
				runtime.ReadMemStats(&m1)
				live = (float64(m1.HeapAlloc) - float64(m0.HeapAlloc)) / (1 << 20)
				runtime.KeepAlive(l)
			}
			b.ReportMetric(alloc/mb, "alloc-MB/MB")
			b.ReportMetric(live/mb, "live-MB/MB")
		})
	}
}
