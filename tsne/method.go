package tsne

import (
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
	"time"
)

// Method names a gradient implementation.
type Method string

// The gradient methods. MethodAuto lets Choose pick from the number of
// points.
const (
	MethodAuto      Method = "auto"
	MethodExact     Method = "exact"
	MethodBarnesHut Method = "barnes-hut"
	MethodFFT       Method = "fft"
)

// ParseMethod checks a method name given by a user. The empty string means
// MethodAuto.
func ParseMethod(s string) (Method, error) {
	switch m := Method(s); m {
	case "", MethodAuto:
		return MethodAuto, nil
	case MethodExact, MethodBarnesHut, MethodFFT:
		return m, nil
	}
	return "", fmt.Errorf("tsne: unknown gradient method %q (want auto, exact, barnes-hut or fft)", s)
}

// newGradient builds the Gradient implementation for a concrete method.
func newGradient(m Method, theta float64, threads int) (Gradient, error) {
	switch m {
	case MethodExact:
		return NewExact(threads), nil
	case MethodBarnesHut:
		return NewBarnesHut(theta, threads), nil
	case MethodFFT:
		return NewFFT(threads), nil
	}
	return nil, fmt.Errorf("tsne: unknown gradient method %q (want auto, exact, barnes-hut or fft)", m)
}

// resolveThreads maps 0 (or a negative count) to runtime.GOMAXPROCS(0).
func resolveThreads(t int) int {
	if t <= 0 {
		return runtime.GOMAXPROCS(0)
	}
	return t
}

// Parallel loops in this package split their work into chunks whose
// boundaries depend only on the problem size, never on the number of
// threads, and every chunk writes its own slots of the output. Reductions
// then add the per-row or per-chunk partial results sequentially in index
// order, so results are bit-identical for any thread count.

// chunkRows is the number of rows per chunk in the row-parallel loops.
const chunkRows = 64

// numChunks returns the number of fixed-size chunks covering n rows.
func numChunks(n, size int) int { return (n + size - 1) / size }

// chunkTask is a unit of work handed to an idle helper goroutine: run it,
// then mark it done (wg.Done, then pending −1).
type chunkTask struct {
	run     func()
	wg      *sync.WaitGroup
	pending *atomic.Int32
}

// Helpers that finish a task poll helperSlot for up to helperSpin before
// they park on helperTasks, because the optimiser hands out work twice per
// iteration and waking a parked goroutine costs more (measured about 13 µs
// per hand-off of two 7 µs chunks before this polling) than the chunks of a
// small problem take. helperTasks is unbuffered: a send succeeds only when
// a helper is parked, otherwise a new helper is started. Helpers stay
// parked between calls so that steady-state parallel loops allocate
// nothing.
var (
	helperTasks    = make(chan *chunkTask)
	helperSlot     atomic.Pointer[chunkTask]
	helperSpinners atomic.Int32
)

// helperSpin bounds how long an idle helper, or a caller waiting for its
// helpers, polls before blocking.
const helperSpin = 50 * time.Microsecond

func startTask(t *chunkTask) {
	if helperSpinners.Load() > 0 && helperSlot.CompareAndSwap(nil, t) {
		// A polling helper takes it, unless every helper stopped polling
		// in the meantime; then take it back (if still there) and hand
		// it over below. A helper decrements helperSpinners before its
		// last look at the slot, so a task left there is always found.
		if helperSpinners.Load() > 0 || !helperSlot.CompareAndSwap(t, nil) {
			return
		}
	}
	select {
	case helperTasks <- t:
	default:
		go helperLoop(t)
	}
}

func helperLoop(t *chunkTask) {
	for {
		t.run()
		t.wg.Done()
		t.pending.Add(-1)
		t = nextTask()
	}
}

// nextTask polls helperSlot for up to helperSpin, then parks.
func nextTask() *chunkTask {
	helperSpinners.Add(1)
	start := time.Now()
	for i := 1; ; i++ {
		if helperSlot.Load() != nil {
			if t := helperSlot.Swap(nil); t != nil {
				helperSpinners.Add(-1)
				return t
			}
		}
		if i%64 == 0 {
			if time.Since(start) > helperSpin {
				break
			}
			runtime.Gosched()
		}
	}
	helperSpinners.Add(-1)
	if t := helperSlot.Swap(nil); t != nil {
		return t
	}
	return <-helperTasks
}

// chunkRunner runs body(chunk) for chunk = 0 … n−1 on up to threads
// goroutines (the caller's included). Create it once with newChunkRunner and
// reuse it; run allocates nothing. A chunkRunner is not safe for concurrent
// use.
type chunkRunner struct {
	threads int
	next    atomic.Int64
	n       int64
	body    func(chunk int)
	wg      sync.WaitGroup
	pending atomic.Int32
	task    chunkTask
}

func newChunkRunner(threads int) *chunkRunner {
	r := &chunkRunner{threads: resolveThreads(threads)}
	r.task = chunkTask{run: r.loop, wg: &r.wg, pending: &r.pending}
	return r
}

func (r *chunkRunner) loop() {
	for {
		c := r.next.Add(1) - 1
		if c >= r.n {
			return
		}
		r.body(int(c))
	}
}

// run calls body for every chunk index in [0, n) and returns when all are
// done. body must be a func value created once (not a fresh closure per
// call) to keep run allocation-free.
func (r *chunkRunner) run(n int, body func(chunk int)) {
	if n <= 0 {
		return
	}
	t := min(r.threads, n)
	if t <= 1 {
		for c := 0; c < n; c++ {
			body(c)
		}
		return
	}
	r.body = body
	r.n = int64(n)
	r.next.Store(0)
	r.wg.Add(t - 1)
	r.pending.Store(int32(t - 1))
	for i := 1; i < t; i++ {
		startTask(&r.task)
	}
	r.loop()
	// Poll briefly before blocking: the helpers usually finish their last
	// chunk within microseconds of the caller.
	start := time.Now()
	for i := 1; r.pending.Load() > 0; i++ {
		if i%64 == 0 && time.Since(start) > helperSpin {
			break
		}
	}
	r.wg.Wait()
	r.body = nil
}
