package tsne

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// fftPool is a fixed set of worker goroutines that run numbered tasks.
// Work is split into tasks that do not depend on the number of workers, so
// results are the same for any thread count as long as each task writes
// its own outputs and reductions over tasks happen in task order.
//
// Starting goroutines allocates, so the pool keeps its workers between
// calls; that is what lets an FFT gradient evaluation allocate nothing.
// The workers exit when the owner becomes unreachable (runtime.AddCleanup
// on the owner closes the wake channel).
type fftPool struct {
	workers int
	wake    chan struct{}
	wg      sync.WaitGroup
	fn      func(worker, task int)
	ntask   int
	next    atomic.Int64
}

// newFFTPool starts workers−1 goroutines (the caller is worker 0) and ties
// their lifetime to owner.
func newFFTPool[T any](owner *T, workers int) *fftPool {
	if workers < 1 {
		workers = 1
	}
	p := &fftPool{workers: workers}
	if workers > 1 {
		p.wake = make(chan struct{})
		for w := 1; w < workers; w++ {
			go p.loop(w)
		}
		runtime.AddCleanup(owner, func(ch chan struct{}) { close(ch) }, p.wake)
	}
	return p
}

func (p *fftPool) loop(w int) {
	for range p.wake {
		p.drain(w)
		p.wg.Done()
	}
}

func (p *fftPool) drain(w int) {
	for {
		t := int(p.next.Add(1) - 1)
		if t >= p.ntask {
			return
		}
		p.fn(w, t)
	}
}

// run calls fn(worker, t) for every task t in [0, ntask) and returns when
// all have finished. fn should be a func value stored once (a method value
// created per call would allocate).
func (p *fftPool) run(ntask int, fn func(worker, task int)) {
	if ntask <= 0 {
		return
	}
	helpers := p.workers - 1
	if helpers > ntask-1 {
		helpers = ntask - 1
	}
	p.fn = fn
	p.ntask = ntask
	p.next.Store(0)
	p.wg.Add(helpers)
	for i := 0; i < helpers; i++ {
		p.wake <- struct{}{}
	}
	p.drain(0)
	p.wg.Wait()
	p.fn = nil
}
