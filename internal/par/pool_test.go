package par

import (
	"fmt"
	"sync"
	"sync/atomic"
	"testing"
	"time"
)

// TestPoolHandOff: every task runs exactly once per call, also
// with several runners handing work to the shared helpers at once and
// with pauses long enough for the helpers to stop polling and park
// (common practice for a hand-rolled worker pool: count every unit of
// work).
func TestPoolHandOff(t *testing.T) {
	const runners, calls, chunks = 4, 3000, 7
	var wg sync.WaitGroup
	errs := make(chan error, runners)
	for g := 0; g < runners; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			r := NewPool(3)
			count := make([]int32, chunks)
			body := func(_, c int) { count[c]++ } // one goroutine per task and call
			for call := 0; call < calls; call++ {
				r.Run(chunks, body)
				if call%500 == 0 {
					time.Sleep(time.Millisecond) // helpers park
				}
			}
			for c, v := range count {
				if v != calls {
					errs <- fmt.Errorf("pool %d: task %d ran %d times, want %d", g, c, v, calls)
					return
				}
			}
		}(g)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
}

// TestPoolAllocatesNothing: a Run with a func value made once allocates
// nothing, with helpers (the optimiser's loop relies on it; common
// practice, checked with testing.AllocsPerRun).
func TestPoolAllocatesNothing(t *testing.T) {
	p := NewPool(3)
	out := make([]int, 64)
	body := func(_, c int) { out[c] = c }
	p.Run(len(out), body) // start the helpers
	if a := testing.AllocsPerRun(200, func() { p.Run(len(out), body) }); a != 0 {
		t.Errorf("got %v allocs per Run, want 0", a)
	}
}

// TestPoolWorkerRange: worker numbers stay below min(Threads(), n), so
// per-worker scratch sized by Threads() is enough.
func TestPoolWorkerRange(t *testing.T) {
	for _, threads := range []int{1, 2, 5} {
		p := NewPool(threads)
		for _, n := range []int{1, 3, 100} {
			var bad atomic.Int32
			p.Run(n, func(w, _ int) {
				if w < 0 || w >= min(p.Threads(), n) {
					bad.Add(1)
				}
			})
			if b := bad.Load(); b != 0 {
				t.Errorf("threads=%d n=%d: %d tasks got a worker out of range", threads, n, b)
			}
		}
	}
}
