package parallel

import (
	"math"
	"runtime"
	"sync/atomic"
	"testing"
)

func TestWorkers(t *testing.T) {
	procs := runtime.GOMAXPROCS(0)
	for _, c := range []struct{ n, workers, want int }{
		{10, 3, 3},
		{2, 8, 2},
		{0, 4, 1},
		{1000, 0, min(1000, procs)},
		{1000, -2, min(1000, procs)},
		{1, 0, 1},
	} {
		if got := Workers(c.n, c.workers); got != c.want {
			t.Errorf("Workers(%d, %d) = %d, want %d", c.n, c.workers, got, c.want)
		}
	}
}

// TestForEveryItemOnce: every index in [0, n) is handed out exactly once,
// whatever the number of workers.
func TestForEveryItemOnce(t *testing.T) {
	for _, n := range []int{0, 1, 2, 7, 100, 5000} {
		for _, workers := range []int{-1, 0, 1, 2, 3, 8, 10000} {
			seen := make([]atomic.Int32, n)
			For(n, workers, func(i int) { seen[i].Add(1) })
			for i := range seen {
				if c := seen[i].Load(); c != 1 {
					t.Fatalf("n=%d workers=%d: item %d ran %d times", n, workers, i, c)
				}
			}
		}
	}
}

// TestForOneWorkerInOrder: one worker runs the items in index order.
func TestForOneWorkerInOrder(t *testing.T) {
	var order []int
	For(20, 1, func(i int) { order = append(order, i) })
	for i, v := range order {
		if v != i {
			t.Fatalf("one worker ran %v, want 0…19 in order", order)
		}
	}
	if len(order) != 20 {
		t.Fatalf("ran %d items, want 20", len(order))
	}
}

// scratch is per-worker space that records whether two goroutines use it at
// once.
type scratch struct {
	busy atomic.Int32
	buf  []float64
}

// TestForScratchOwnedByOneWorker: each goroutine has its own scratch (never
// used by two calls at once), and there are no more scratch values than
// workers.
func TestForScratchOwnedByOneWorker(t *testing.T) {
	for _, workers := range []int{1, 2, 4, 16} {
		var made, clashes atomic.Int32
		ForScratch(2000, workers, func() *scratch {
			made.Add(1)
			return &scratch{buf: make([]float64, 64)}
		}, func(s *scratch, i int) {
			if s.busy.Add(1) != 1 {
				clashes.Add(1)
			}
			for k := range s.buf {
				s.buf[k] = float64(i + k)
			}
			runtime.Gosched()
			s.busy.Add(-1)
		})
		if clashes.Load() != 0 {
			t.Errorf("workers=%d: a scratch value was used by two calls at once (%d times)", workers, clashes.Load())
		}
		if m := int(made.Load()); m < 1 || m > Workers(2000, workers) {
			t.Errorf("workers=%d: %d scratch values made, want 1…%d", workers, m, Workers(2000, workers))
		}
	}
}

// TestResultsIndependentOfWorkers: a floating-point computation that reuses
// its scratch (overwriting it first, as the package doc asks) gives the same
// bits for any number of workers.
func TestResultsIndependentOfWorkers(t *testing.T) {
	const n = 3000
	run := func(workers int) []float64 {
		out := make([]float64, n)
		ForScratch(n, workers, func() []float64 { return make([]float64, 257) }, func(buf []float64, i int) {
			for k := range buf {
				buf[k] = math.Sin(float64(i)*0.37 + float64(k)*1e-3)
			}
			s := 0.0
			for _, v := range buf {
				s += v * v
			}
			out[i] = s
		})
		return out
	}
	want := run(1)
	for _, workers := range []int{0, 2, 3, 7, 64} {
		got := run(workers)
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Fatalf("workers=%d: item %d = %v, one worker %v", workers, i, got[i], want[i])
			}
		}
	}
}
