// Package parallel runs numbered, independent work items on a bounded number
// of goroutines: the one worker pool of bandwright.
//
// Results do not depend on the number of workers. Items are numbered
// 0 … n−1 and handed out one at a time to whichever worker is free, so the
// order in which items run, and which goroutine runs them, changes from run
// to run; but each item is a call of the same function with its own index.
// As long as the call for item i writes only to places that belong to item i
// (slot i of a slice the caller owns, say) and reads nothing another item
// writes, the caller sees the same results whatever the number of workers,
// bit for bit. Per-worker scratch space (ForScratch) keeps that guarantee
// when the call overwrites the scratch before it reads it, so that no
// information passes from one item to the next.
package parallel

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Workers returns the number of goroutines For and ForScratch start for n
// items when asked for workers: GOMAXPROCS when workers ≤ 0, never more than
// n, at least 1.
func Workers(n, workers int) int {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	return max(1, min(workers, n))
}

// For calls f(i) once for every i in [0, n) on up to workers goroutines
// (workers ≤ 0: GOMAXPROCS) and returns when every call has returned. Calls
// run concurrently; f must be safe for that. With one worker the calls run on
// the calling goroutine in the order 0, 1, …, n−1.
func For(n, workers int, f func(i int)) {
	ForScratch(n, workers, func() struct{} { return struct{}{} }, func(_ struct{}, i int) { f(i) })
}

// ForScratch is For with scratch space per worker: each goroutine calls
// newScratch once, before its first item, and passes the result to every
// f(scratch, i) it runs. No two goroutines share a scratch value, so f may
// write to it without locks. For results that do not depend on the number of
// workers, f must not let anything left in the scratch by an earlier item
// change what it computes for item i.
func ForScratch[S any](n, workers int, newScratch func() S, f func(scratch S, i int)) {
	if n <= 0 {
		return
	}
	w := Workers(n, workers)
	if w == 1 {
		s := newScratch()
		for i := 0; i < n; i++ {
			f(s, i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range w {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s := newScratch()
			for {
				i := int(next.Add(1)) - 1
				if i >= n {
					return
				}
				f(s, i)
			}
		}()
	}
	wg.Wait()
}
