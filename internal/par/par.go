// Package par runs independent items of work on a few goroutines.
package par

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Each runs f(i) for every i in [0, n) on up to threads goroutines
// (threads < 1 means runtime.GOMAXPROCS(0)), handing out one item at a
// time; with one goroutine the items run in order on the caller's. f must
// write only to per-item outputs, so that the result does not depend on
// the schedule.
func Each(n, threads int, f func(i int)) {
	if threads < 1 {
		threads = runtime.GOMAXPROCS(0)
	}
	workers := max(1, min(threads, n))
	if workers == 1 {
		for i := 0; i < n; i++ {
			f(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1) - 1)
				if i >= n {
					return
				}
				f(i)
			}
		}()
	}
	wg.Wait()
}
