// Package par runs loops of independent work on a few goroutines, in two
// forms:
//
//   - Chunks (and Each, its one-item form) for one-off loops: it splits
//     [0, n) into fixed chunks, starts its goroutines, runs and returns.
//   - Pool for loops run again and again, such as the optimiser's gradient
//     and KL evaluations: its Run allocates nothing once the pool exists.
//
// Both split the work into chunks or tasks whose boundaries depend only on
// the problem size, never on the number of threads, and hand them out one
// at a time. The caller writes each chunk's results to slots of its own and
// reduces them in index order afterwards, so the result's bits do not
// depend on the thread count or the schedule. The worker number passed to
// the loop body names a goroutine for per-worker scratch space; which
// worker takes a chunk varies from call to call, so scratch must not carry
// results.
package par

import (
	"runtime"
	"sync"
	"sync/atomic"
	"time"
)

// Threads resolves a thread count: threads < 1 means runtime.GOMAXPROCS(0).
func Threads(threads int) int {
	if threads < 1 {
		return runtime.GOMAXPROCS(0)
	}
	return threads
}

// Workers returns the number of goroutines Chunks uses for n items in
// chunks of size chunk: at least 1, at most the number of chunks.
func Workers(n, chunk, threads int) int {
	return max(1, min(Threads(threads), numChunks(n, chunk)))
}

func numChunks(n, chunk int) int {
	if n <= 0 {
		return 0
	}
	return (n + chunk - 1) / chunk
}

// Chunks calls fn(w, lo, hi) for the fixed chunks [lo, hi) of [0, n) of
// size chunk (the last may be shorter), on up to threads goroutines
// (threads < 1 means GOMAXPROCS); w ∈ [0, Workers(n, chunk, threads)) names
// the goroutine. With one worker the chunks run in order on the caller's
// goroutine. It panics if chunk < 1. Each call starts its goroutines, so
// it allocates; loops run once per optimiser iteration use a Pool.
func Chunks(n, chunk, threads int, fn func(w, lo, hi int)) {
	if chunk < 1 {
		panic("par: chunk size below 1")
	}
	nc := numChunks(n, chunk)
	workers := Workers(n, chunk, threads)
	if workers == 1 {
		for c := 0; c < nc; c++ {
			fn(0, c*chunk, min((c+1)*chunk, n))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			for {
				c := int(next.Add(1) - 1)
				if c >= nc {
					return
				}
				fn(w, c*chunk, min((c+1)*chunk, n))
			}
		}(w)
	}
	wg.Wait()
}

// Each runs f(i) for every i in [0, n) on up to threads goroutines
// (threads < 1 means GOMAXPROCS), handing out one item at a time: Chunks
// with chunks of one item. f must write only to per-item outputs.
func Each(n, threads int, f func(i int)) {
	Chunks(n, 1, threads, func(_, i, _ int) { f(i) })
}

// Pool runs numbered tasks on up to a fixed number of goroutines, the
// caller's included, and allocates nothing per Run. Create it once with
// NewPool and reuse it; a Pool is not safe for concurrent use (several
// pools may run at once).
//
// The helper goroutines are shared by every Pool in the process. A helper
// that finishes a task polls for the next one for up to helperSpin before
// it parks, because an optimiser hands out work several times per
// iteration and waking a parked goroutine costs more than the chunks of a
// small problem take (measurements in internal/scripts/bench/README.md).
// Parked helpers stay parked between calls, so steady-state loops allocate
// nothing and no goroutine outlives its usefulness by more than a park.
type Pool struct {
	threads int
	next    atomic.Int64
	n       int64
	body    func(worker, task int)
	wg      sync.WaitGroup
	pending atomic.Int32
	// helpers[w-1] runs worker w's share of a Run.
	helpers []helperTask
}

// helperTask is a unit of work handed to an idle helper goroutine: run it,
// then mark it done (wg.Done, then pending −1).
type helperTask struct {
	run     func()
	wg      *sync.WaitGroup
	pending *atomic.Int32
}

// NewPool returns a pool for up to threads goroutines (threads < 1 means
// GOMAXPROCS).
func NewPool(threads int) *Pool {
	p := &Pool{threads: Threads(threads)}
	p.helpers = make([]helperTask, p.threads-1)
	for i := range p.helpers {
		w := i + 1
		p.helpers[i] = helperTask{run: func() { p.drain(w) }, wg: &p.wg, pending: &p.pending}
	}
	return p
}

// Threads returns the pool's number of goroutines; worker numbers passed to
// a Run's body are below it.
func (p *Pool) Threads() int { return p.threads }

func (p *Pool) drain(w int) {
	for {
		t := p.next.Add(1) - 1
		if t >= p.n {
			return
		}
		p.body(w, int(t))
	}
}

// Run calls body(worker, t) for every task t in [0, n) and returns when all
// have finished; worker ∈ [0, min(Threads(), n)) and worker 0 is the
// caller. body must be a func value created once (a method value or
// closure made per call allocates) for Run to allocate nothing.
func (p *Pool) Run(n int, body func(worker, task int)) {
	if n <= 0 {
		return
	}
	t := min(p.threads, n)
	if t <= 1 {
		for c := 0; c < n; c++ {
			body(0, c)
		}
		return
	}
	p.body = body
	p.n = int64(n)
	p.next.Store(0)
	p.wg.Add(t - 1)
	p.pending.Store(int32(t - 1))
	for i := 0; i < t-1; i++ {
		startTask(&p.helpers[i])
	}
	p.drain(0)
	// Poll briefly before blocking: the helpers usually finish their last
	// task within microseconds of the caller.
	start := time.Now()
	for i := 1; p.pending.Load() > 0; i++ {
		if i%64 == 0 && time.Since(start) > helperSpin {
			break
		}
	}
	p.wg.Wait()
	p.body = nil
}

// helperTasks is unbuffered: a send succeeds only when a helper is parked,
// otherwise a new helper is started. helperSlot holds a task for a helper
// that is polling.
var (
	helperTasks    = make(chan *helperTask)
	helperSlot     atomic.Pointer[helperTask]
	helperSpinners atomic.Int32
)

// helperSpin bounds how long an idle helper, or a caller waiting for its
// helpers, polls before blocking.
const helperSpin = 50 * time.Microsecond

func startTask(t *helperTask) {
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

func helperLoop(t *helperTask) {
	for {
		t.run()
		t.wg.Done()
		t.pending.Add(-1)
		t = nextTask()
	}
}

// nextTask polls helperSlot for up to helperSpin, then parks.
func nextTask() *helperTask {
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
