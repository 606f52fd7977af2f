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
