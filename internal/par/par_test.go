package par

import (
	"sync/atomic"
	"testing"
)

// TestEachVisitsEveryItemOnce: every index in [0, n) is handed out exactly
// once, for any thread count including the GOMAXPROCS default and more
// threads than items (common practice for a work-sharing loop).
func TestEachVisitsEveryItemOnce(t *testing.T) {
	for _, n := range []int{0, 1, 7, 1000} {
		for _, threads := range []int{0, 1, 3, 2000} {
			hits := make([]atomic.Int32, n)
			Each(n, threads, func(i int) { hits[i].Add(1) })
			for i := range hits {
				if h := hits[i].Load(); h != 1 {
					t.Fatalf("n=%d threads=%d: item %d run %d times", n, threads, i, h)
				}
			}
		}
	}
}

// TestChunksCoverInFixedChunks: Chunks hands out the chunks [c·size,
// min((c+1)·size, n)) exactly once each, whatever the thread count, with
// worker numbers below Workers (common practice for a chunked loop).
func TestChunksCoverInFixedChunks(t *testing.T) {
	for _, n := range []int{0, 1, 31, 32, 33, 1000} {
		for _, size := range []int{1, 32, 1024} {
			for _, threads := range []int{0, 1, 3, 2000} {
				hits := make([]atomic.Int32, n)
				nw := Workers(n, size, threads)
				var bad atomic.Int32
				Chunks(n, size, threads, func(w, lo, hi int) {
					if w < 0 || w >= nw || lo%size != 0 || hi != min(lo+size, n) {
						bad.Add(1)
					}
					for i := lo; i < hi; i++ {
						hits[i].Add(1)
					}
				})
				if b := bad.Load(); b != 0 {
					t.Fatalf("n=%d size=%d threads=%d: %d chunks with a bad worker or bounds", n, size, threads, b)
				}
				for i := range hits {
					if h := hits[i].Load(); h != 1 {
						t.Fatalf("n=%d size=%d threads=%d: item %d run %d times", n, size, threads, i, h)
					}
				}
			}
		}
	}
}
