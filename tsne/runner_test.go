package tsne

import (
	"fmt"
	"sync"
	"testing"
	"time"
)

// TestChunkRunnerHandOff: every chunk runs exactly once per call, also
// with several runners handing work to the shared helpers at once and
// with pauses long enough for the helpers to stop polling and park
// (common practice for a hand-rolled worker pool: count every unit of
// work).
func TestChunkRunnerHandOff(t *testing.T) {
	const runners, calls, chunks = 4, 3000, 7
	var wg sync.WaitGroup
	errs := make(chan error, runners)
	for g := 0; g < runners; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			r := newChunkRunner(3)
			count := make([]int32, chunks)
			body := func(c int) { count[c]++ } // one goroutine per chunk and call
			for call := 0; call < calls; call++ {
				r.run(chunks, body)
				if call%500 == 0 {
					time.Sleep(time.Millisecond) // helpers park
				}
			}
			for c, v := range count {
				if v != calls {
					errs <- fmt.Errorf("runner %d: chunk %d ran %d times, want %d", g, c, v, calls)
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
