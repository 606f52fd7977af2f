package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"runtime"
	"slices"
	"sync"
	"time"

	"golang.org/x/sync/errgroup"

	"plumb/internal/dataset"
	"plumb/tsne"
)

// Options controls how a sweep runs. None of them changes a result.
type Options struct {
	// Dir is the study directory (created if absent).
	Dir string
	// Input describes the input for study.json (see NewInput).
	Input Input
	// Version is the tool version written into every file.
	Version string
	// Shard selects this process's slice of the runs (zero value: all).
	Shard Shard
	// Jobs is the number of runs optimised at once and Threads the threads
	// inside each. If both are 0, DefaultParallelism picks them; if one is
	// 0 it is GOMAXPROCS divided by the other (at least 1).
	Jobs, Threads int
	// Force makes a directory holding another plan or input follow this
	// sweep instead of refusing it (see MismatchError).
	Force bool
	// RetryFailed redoes runs recorded as failed; by default they count
	// as finished.
	RetryFailed bool
	// Lock is the caller's lock on the study (LockStudy with the same
	// Shard, exclusive with Force); if it is nil, Execute takes one itself
	// for its duration. When every run is finished a shared lock is
	// upgraded (Lock.Upgrade) to rebuild runs.parquet.
	Lock *Lock
	// Events, if not nil, receives what the sweep does (shared work,
	// finished and failed runs). It is called from one goroutine at a time.
	Events func(Event)
}

// EventKind says what an Event reports.
type EventKind int

// Event kinds.
const (
	// EventInfo: a message about the plan or shared work.
	EventInfo EventKind = iota
	// EventRunDone: a run finished and its files are written.
	EventRunDone
	// EventRunFailed: a run failed (Err says why) and was recorded.
	EventRunFailed
	// EventRunProgress: a run in flight reached iteration Iter of Iters
	// (sent every ProgressEvery iterations).
	EventRunProgress
)

// ProgressEvery is the iteration interval of EventRunProgress.
const ProgressEvery = 50

// Event is a report from a running sweep.
type Event struct {
	Kind    EventKind
	Message string
	Run     *Run
	Err     error
	// Done, Failed and Todo count this shard's runs to do in this process
	// (already finished ones excluded); Elapsed is the time since the runs
	// started.
	Done, Failed, Todo int
	Elapsed            time.Duration
	// Iter and Iters: the iteration reached by Run (EventRunProgress).
	Iter, Iters int
}

// Stats counts the work a sweep did; tests use it to prove the sharing.
type Stats struct {
	// NeighborBuilds is the number of times neighbour lists were searched
	// (0 or 1 per sweep), with NeighborK neighbours per point.
	NeighborBuilds, NeighborK int
	// AffinityBuilds counts the affinity matrices built, by perplexity.
	AffinityBuilds map[float64]int
	// PCAInits counts PCA initialisations computed (0 or 1, plus one per
	// subsample with a PCA-initialised run).
	PCAInits int
	// Subsamples counts the subsamples drawn (one per seed and fraction
	// below 1 with runs to do); their neighbour lists are derived from the
	// one shared search, and SubsampleResearched counts the points of all
	// of them that had to be searched again (see subsetNeighbors).
	// SubsampleAffinities counts the affinity matrices built for them.
	Subsamples, SubsampleResearched, SubsampleAffinities int
	// Planned runs in the plan, InShard in this shard; Skipped were found
	// finished; Done and Failed were run now; Stopped were interrupted.
	Planned, InShard, Skipped, Done, Failed, Stopped int
}

// Result is the outcome of Execute.
type Result struct {
	Stats Stats
	// Jobs and Threads are the parallelism used.
	Jobs, Threads int
	// Complete is true when every run of the plan, in every shard, is
	// finished; runs.parquet was then rebuilt.
	Complete bool
	// RunsTable is true if runs.parquet was (re)written.
	RunsTable bool
	// Canceled is true when the context was cancelled before all runs of
	// the shard finished.
	Canceled bool
	// Busy is true when every run is finished but other processes still
	// held the study, so this shard left runs.parquet and scoring to them
	// (or to Score).
	Busy    bool
	Elapsed time.Duration
}

// upgradeWait is how long a shard that finds every run finished waits for
// the other shards to let go of the study before it leaves the shared
// tables to them.
var upgradeWait = 5 * time.Second

// SmallN is the largest n for which DefaultParallelism runs one
// single-threaded run per core; beyond it runs are multi-threaded.
const SmallN = 20000

// DefaultParallelism returns jobs × threads for n points, pending runs and
// cores: for n ≤ SmallN one run per core, each single-threaded (runs are
// independent, so this scales best); for larger n one run at a time using
// every core (so memory stays at one run's workspace). Jobs never exceeds
// pending.
func DefaultParallelism(n, pending, cores int) (jobs, threads int) {
	if cores < 1 {
		cores = 1
	}
	if n > SmallN {
		return 1, cores
	}
	jobs = min(cores, max(pending, 1))
	return jobs, 1
}

func parallelism(opt Options, n, pending int) (int, int) {
	cores := runtime.GOMAXPROCS(0)
	jobs, threads := opt.Jobs, opt.Threads
	switch {
	case jobs <= 0 && threads <= 0:
		return DefaultParallelism(n, pending, cores)
	case jobs <= 0:
		jobs = max(1, cores/threads)
	case threads <= 0:
		threads = max(1, cores/jobs)
	}
	return jobs, threads
}

// Validate checks the plan against the data before any work (Execute calls
// it before it creates anything): the largest perplexity must suit n, the
// data must have variance (NoVariance: points that are all identical have
// no structure to show, every input distance is zero and the distance
// scores are undefined), and a plan with PCA initialisation needs at least
// 2 features. Errors are *dataset.InputError naming the input file.
func Validate(p *Plan, ds *dataset.Dataset) error {
	if err := ds.CheckPerplexity(p.MaxPerplexity()); err != nil {
		return err
	}
	if NoVariance(ds.X, ds.N, ds.D) {
		return &dataset.InputError{File: ds.Source, Msg: fmt.Sprintf(
			"all %d points are identical (the features have no variance), so t-SNE has no structure to show", ds.N)}
	}
	for _, f := range p.Fractions() {
		if f >= 1 {
			continue
		}
		m := SubsampleSize(ds.N, f)
		if m >= ds.N {
			return &dataset.InputError{File: ds.Source, Msg: fmt.Sprintf(
				"subsample %s of %d points keeps all of them (⌈F·n⌉ = n); use a smaller fraction, or 1", formatFloat(f), ds.N)}
		}
		if float64(m-1) < 3*p.MaxPerplexity() {
			return &dataset.InputError{File: ds.Source, Msg: fmt.Sprintf(
				"subsample %s keeps %d of %d points, too few for perplexity %g: t-SNE needs n − 1 ≥ 3·perplexity", formatFloat(f), m, ds.N, p.MaxPerplexity())}
		}
	}
	if ds.D < 2 && slices.Contains(p.Init, "pca") {
		return &dataset.InputError{File: ds.Source, Msg: fmt.Sprintf(
			"PCA initialisation needs at least 2 feature columns, got %d (use random initialisation)", ds.D)}
	}
	return nil
}

// NoVariance reports whether the n×d row-major data x have no variance up
// to rounding: total variance Σ_c var(x_·c) ≤ (1e-12 · max|x|)². Column
// means are computed with one correction pass (m += Σ(x − m)/n, the
// "corrected two-pass" algorithm of Chan, Golub & LeVeque 1983), so
// identical rows give exactly zero; the relative tolerance absorbs the
// rounding of values such as 5.1 that are not exact in binary (the same
// rule as tsne.PCAInit).
func NoVariance(x []float64, n, d int) bool {
	if n < 1 || d < 1 || len(x) < n*d {
		return true // no data (or fewer values than n×d): no variance to speak of
	}
	scale, total := 0.0, 0.0
	for c := 0; c < d; c++ {
		m := 0.0
		for i := 0; i < n; i++ {
			v := x[i*d+c]
			m += v
			scale = max(scale, math.Abs(v))
		}
		m /= float64(n)
		corr := 0.0
		for i := 0; i < n; i++ {
			corr += x[i*d+c] - m
		}
		m += corr / float64(n)
		ss := 0.0
		for i := 0; i < n; i++ {
			t := x[i*d+c] - m
			ss += t * t
		}
		total += ss / float64(n)
	}
	tol := 1e-12 * scale
	return total <= tol*tol
}

// localityMinN is tsne.LocalityMinN, lowered by tests.
var localityMinN = tsne.LocalityMinN

// shared holds the work every run of a sweep reuses.
type shared struct {
	mu      sync.Mutex
	ds      *dataset.Dataset
	plan    *Plan
	threads int
	nb      *tsne.Neighbors
	big     *tsne.Neighbors // the shared search in input order, for subsamples (nil without)
	order   []int32         // the renumbering of nb, P and the runs (nil: input order)
	nbOnce  sync.Once
	nbErr   error
	pca     []float64
	pcaOnce sync.Once
	pcaErr  error
	aff     map[float64]*affEntry
	subs    map[subKey]*subEntry
	subAff  map[subAffKey]*affEntry
	stats   *Stats
	event   func(Event)
}

// subKey names a subsample: the runs with this seed of every setting with
// this fraction embed the same points.
type subKey struct {
	seed uint64
	f    float64
}

type subAffKey struct {
	subKey
	perp float64
}

// subEntry is one subsample with its neighbour lists (renumbered by order
// for memory locality when it is large enough) and PCA start.
type subEntry struct {
	once    sync.Once
	rows    []int32
	nb      *tsne.Neighbors
	order   []int32
	err     error
	pcaOnce sync.Once
	pca     []float64
	pcaErr  error
	pending int
}

type affEntry struct {
	once    sync.Once
	p       *tsne.Sparse
	err     error
	pending int
}

func (sh *shared) neighbors() (*tsne.Neighbors, error) {
	sh.nbOnce.Do(func() {
		// k for the largest perplexity of the whole plan (not of this
		// shard), so every shard truncates the same lists.
		k := tsne.NeighborCount(sh.ds.N, sh.plan.MaxPerplexity())
		mode, err := tsne.ResolveNeighbors(sh.plan.Neighbors, sh.ds.N, sh.ds.D)
		if err != nil {
			sh.nbErr = err
			return
		}
		kBig := sharedNeighborCount(sh.ds.N, sh.plan)
		t0 := time.Now()
		// Both searches return rows sorted by distance, so the lists for
		// a smaller perplexity are the first columns of each row
		// (tsne.Affinities reads only those).
		sh.nb, sh.nbErr = tsne.FindNeighbors(sh.ds.X, sh.ds.N, sh.ds.D, kBig, mode, neighborSeed, sh.threads)
		if sh.nbErr != nil {
			sh.nbErr = fmt.Errorf("neighbours (k=%d): %w", kBig, sh.nbErr)
			return
		}
		sh.mu.Lock()
		sh.stats.NeighborBuilds++
		sh.stats.NeighborK = kBig
		sh.mu.Unlock()
		if kBig > k {
			// The full lists serve the subsamples (in input order); the
			// runs on all points read their first k columns, the lists an
			// exact search with k would give.
			sh.big = sh.nb
			sh.nb = sh.big.Truncate(k)
			sh.info(fmt.Sprintf("shared: %s neighbours, k=%d (k=%d for perplexity up to %s, more for the subsamples to draw from), built once in %s",
				mode, kBig, k, formatFloat(sh.plan.MaxPerplexity()), round(time.Since(t0))))
		} else {
			if sh.plan.MinFraction() < 1 {
				sh.big = sh.nb.Truncate(k)
			}
			sh.info(fmt.Sprintf("shared: %s neighbours, k=%d for perplexity up to %s, built once in %s",
				mode, k, formatFloat(sh.plan.MaxPerplexity()), round(time.Since(t0))))
		}
		// As tsne.Embed does: P and the runs work on points renumbered so
		// that neighbours are near in memory; layouts are written back in
		// input order.
		if sh.order = tsne.Localize(sh.nb, localityMinN); sh.order != nil {
			sh.info("shared: points renumbered for memory locality (breadth-first order of the neighbour graph)")
		}
	})
	return sh.nb, sh.nbErr
}

func (sh *shared) affinities(perp float64) (*tsne.Sparse, error) {
	sh.mu.Lock()
	e := sh.aff[perp]
	sh.mu.Unlock()
	e.once.Do(func() {
		nb, err := sh.neighbors()
		if err != nil {
			e.err = err
			return
		}
		// Affinities reads the first NeighborCount(n, perp) neighbours of
		// each row itself, so the lists of the largest perplexity serve
		// every smaller one without a truncated copy.
		t0 := time.Now()
		e.p, e.err = tsne.Affinities(nb, perp, sh.threads)
		if e.err != nil {
			e.err = fmt.Errorf("affinities (perplexity %s): %w", formatFloat(perp), e.err)
			return
		}
		sh.mu.Lock()
		sh.stats.AffinityBuilds[perp]++
		n := e.pending
		sh.mu.Unlock()
		sh.info(fmt.Sprintf("shared: affinities for perplexity %s (k=%d) built once in %s, used by %d runs",
			formatFloat(perp), tsne.NeighborCount(sh.ds.N, perp), round(time.Since(t0)), n))
	})
	return e.p, e.err
}

// release drops a reference to the perplexity's P; the last run frees it.
func (sh *shared) release(perp float64) {
	sh.mu.Lock()
	defer sh.mu.Unlock()
	e := sh.aff[perp]
	e.pending--
	if e.pending == 0 {
		e.p = nil
	}
}

// subsample returns the subsample of the runs with seed of the settings
// with fraction f, with neighbour lists derived from the shared search.
func (sh *shared) subsample(seed uint64, f float64) (*subEntry, error) {
	sh.mu.Lock()
	e := sh.subs[subKey{seed, f}]
	sh.mu.Unlock()
	e.once.Do(func() {
		if _, err := sh.neighbors(); err != nil {
			e.err = err
			return
		}
		e.rows = Subsample(sh.ds.N, f, seed)
		m := len(e.rows)
		k := tsne.NeighborCount(m, sh.plan.MaxPerplexity())
		var again int
		e.nb, again, e.err = subsetNeighbors(sh.big, e.rows, sh.ds.X, sh.ds.D, k, sh.threads)
		if e.err != nil {
			e.err = fmt.Errorf("subsample %s of seed %d: neighbours: %w", formatFloat(f), seed, e.err)
			return
		}
		if m >= localityMinN {
			e.order = tsne.LocalityOrder(e.nb)
			e.nb.Renumber(e.order)
		}
		sh.mu.Lock()
		sh.stats.Subsamples++
		sh.stats.SubsampleResearched += again
		sh.mu.Unlock()
	})
	return e, e.err
}

// subAffinities returns P of the subsample (seed, f) at perplexity perp.
func (sh *shared) subAffinities(e *subEntry, key subAffKey) (*tsne.Sparse, error) {
	sh.mu.Lock()
	a := sh.subAff[key]
	sh.mu.Unlock()
	a.once.Do(func() {
		a.p, a.err = tsne.Affinities(e.nb, key.perp, sh.threads)
		if a.err != nil {
			a.err = fmt.Errorf("subsample %s of seed %d: affinities (perplexity %s): %w", formatFloat(key.f), key.seed, formatFloat(key.perp), a.err)
			return
		}
		sh.mu.Lock()
		sh.stats.SubsampleAffinities++
		sh.mu.Unlock()
	})
	return a.p, a.err
}

// subPCA returns the PCA start of the subsample's own input.
func (sh *shared) subPCA(e *subEntry) ([]float64, error) {
	e.pcaOnce.Do(func() {
		e.pca, e.pcaErr = tsne.PCAInit(selectRows(sh.ds.X, sh.ds.D, e.rows), len(e.rows), sh.ds.D)
		if e.pcaErr != nil {
			e.pcaErr = fmt.Errorf("%s (subsample of %d points): %w", sh.ds.Source, len(e.rows), e.pcaErr)
			return
		}
		sh.mu.Lock()
		sh.stats.PCAInits++
		sh.mu.Unlock()
	})
	return e.pca, e.pcaErr
}

// releaseRun drops the run's references to shared work; the last run
// using a P or a subsample frees it.
func (sh *shared) releaseRun(r *Run) {
	s := r.Setting
	f := s.Fraction()
	if f >= 1 {
		sh.release(s.Perplexity)
		return
	}
	sh.mu.Lock()
	defer sh.mu.Unlock()
	key := subAffKey{subKey{r.Seed, f}, s.Perplexity}
	if a := sh.subAff[key]; a != nil {
		if a.pending--; a.pending == 0 {
			a.p = nil
		}
	}
	if e := sh.subs[key.subKey]; e != nil {
		if e.pending--; e.pending == 0 {
			e.nb, e.pca = nil, nil
		}
	}
}

func (sh *shared) pcaInit() ([]float64, error) {
	sh.pcaOnce.Do(func() {
		sh.pca, sh.pcaErr = tsne.PCAInit(sh.ds.X, sh.ds.N, sh.ds.D)
		if sh.pcaErr != nil {
			sh.pcaErr = fmt.Errorf("%s: %w", sh.ds.Source, sh.pcaErr)
			return
		}
		sh.mu.Lock()
		sh.stats.PCAInits++
		sh.mu.Unlock()
		sh.info("shared: PCA initialisation computed once")
	})
	return sh.pca, sh.pcaErr
}

func (sh *shared) info(msg string) {
	if sh.event != nil {
		sh.event(Event{Kind: EventInfo, Message: msg})
	}
}

func round(d time.Duration) time.Duration {
	if d > time.Second {
		return d.Round(10 * time.Millisecond)
	}
	return d.Round(time.Millisecond)
}

// Execute runs the plan's runs of opt.Shard on ds into opt.Dir, skipping runs
// already finished there (verified: record, trace and layout decode and
// match the plan hash, input fingerprint and run id). Neighbours are
// searched once for the largest perplexity of the plan and truncated for
// the others; P is built once per perplexity that has runs to do, the PCA
// initialisation once. A run that fails (for example diverges) is recorded
// as failed and the sweep goes on; an error is returned only for problems
// that stop the whole sweep (the directory, the shared work).
//
// Cancelling ctx stops the runs in flight (their files are not written);
// finished runs stay. When every run of the plan is finished — or when the
// sweep is not sharded — runs.parquet is rebuilt from the records.
func Execute(ctx context.Context, ds *dataset.Dataset, plan *Plan, opt Options) (*Result, error) {
	if err := Validate(plan, ds); err != nil {
		return nil, err
	}
	runs, err := plan.Runs()
	if err != nil {
		return nil, err
	}
	info := &Info{Format: studyFormat, Version: opt.Version, Created: nowUTC(), PlanHash: plan.Hash(),
		Plan: plan, Input: opt.Input, Settings: plan.NumSettings(), Runs: len(runs),
		Env: CurrentEnv(opt.Version)}
	if info.Input.Fingerprint == "" {
		info.Input.Fingerprint = ds.Fingerprint
		info.Input.N, info.Input.D = ds.N, ds.D
	}
	if info.Input.Fingerprint != ds.Fingerprint || info.Input.N != ds.N {
		return nil, fmt.Errorf("sweep: Options.Input does not describe the dataset")
	}
	// One writer at a time (see LockStudy): the caller's lock, or our own.
	lock := opt.Lock
	if lock == nil {
		if lock, err = LockStudy(opt.Dir, opt.Shard, opt.Force, "sweep.Execute"); err != nil {
			return nil, err
		}
		defer lock.Release()
	}
	unlock, err := lock.setup()
	if err != nil {
		return nil, err
	}
	err = prepare(opt.Dir, info, runs, opt.Force, lock.Exclusive())
	unlock()
	if err != nil {
		return nil, err
	}
	mine := opt.Shard.Select(runs)
	stats := Stats{AffinityBuilds: map[float64]int{}, Planned: len(runs), InShard: len(mine)}
	var todo []*Run
	for _, r := range mine {
		rec := verify(opt.Dir, info, r)
		if rec != nil && !(opt.RetryFailed && rec.Status == StatusFailed) {
			stats.Skipped++
			continue
		}
		cleanTemps(opt.Dir, r.ID)
		todo = append(todo, r)
	}
	jobs, threads := parallelism(opt, ds.N, len(todo))
	sum := &Result{Jobs: jobs, Threads: threads}
	emit := func(e Event) {}
	var emitMu sync.Mutex
	if opt.Events != nil {
		emit = func(e Event) {
			emitMu.Lock()
			defer emitMu.Unlock()
			opt.Events(e)
		}
	}
	emit(Event{Kind: EventInfo, Message: fmt.Sprintf("plan %s: %d settings × %d seeds = %d runs; %s: %d runs, %d already finished, %d to do (%d jobs × %d threads)",
		info.PlanHash, plan.NumSettings(), len(plan.Seeds), len(runs), opt.Shard, len(mine), stats.Skipped, len(todo), jobs, threads)})

	sh := &shared{ds: ds, plan: plan, threads: jobs * threads, aff: map[float64]*affEntry{},
		subs: map[subKey]*subEntry{}, subAff: map[subAffKey]*affEntry{}, stats: &stats, event: emit}
	for _, perp := range plan.Perplexity {
		sh.aff[perp] = &affEntry{}
	}
	for _, r := range todo {
		f := r.Setting.Fraction()
		if f >= 1 {
			sh.aff[r.Setting.Perplexity].pending++
			continue
		}
		key := subAffKey{subKey{r.Seed, f}, r.Setting.Perplexity}
		if sh.subs[key.subKey] == nil {
			sh.subs[key.subKey] = &subEntry{}
		}
		sh.subs[key.subKey].pending++
		if sh.subAff[key] == nil {
			sh.subAff[key] = &affEntry{}
		}
		sh.subAff[key].pending++
	}
	start := time.Now()
	var (
		mu     sync.Mutex
		fatal  error
		counts struct{ done, failed int }
	)
	// Runs start in plan order, at most jobs at once. A fatal error (of
	// the shared work, or files that cannot be written) or a cancelled
	// context starts no further run; runs under way finish.
	var g errgroup.Group
	g.SetLimit(jobs)
	for _, r := range todo {
		g.Go(func() error {
			mu.Lock()
			stop := fatal != nil || ctx.Err() != nil
			mu.Unlock()
			if stop {
				return nil
			}
			rec, err := sh.runOne(ctx, opt, info, r, threads)
			sh.releaseRun(r)
			mu.Lock()
			defer mu.Unlock()
			switch {
			case err != nil && errors.Is(err, errShared):
				if fatal == nil {
					fatal = err
				}
			case err != nil:
				// Stopped by cancellation, or files could not be written.
				if ctx.Err() != nil {
					stats.Stopped++
				} else if fatal == nil {
					fatal = err
				}
			case rec.Status == StatusDone:
				counts.done++
				stats.Done++
				emit(Event{Kind: EventRunDone, Run: r, Done: counts.done, Failed: counts.failed, Todo: len(todo), Elapsed: time.Since(start)})
			default:
				counts.failed++
				stats.Failed++
				emit(Event{Kind: EventRunFailed, Run: r, Err: errors.New(rec.Error), Done: counts.done, Failed: counts.failed, Todo: len(todo), Elapsed: time.Since(start)})
			}
			return nil
		})
	}
	g.Wait()
	sum.Elapsed = time.Since(start)
	sum.Stats = stats
	if fatal != nil {
		return sum, unwrapShared(fatal)
	}
	sum.Canceled = ctx.Err() != nil && stats.Done+stats.Failed < len(todo)
	sum.Complete = true
	for _, r := range runs {
		if _, err := os.Stat(recordPath(opt.Dir, r.ID)); err != nil {
			sum.Complete = false
			break
		}
	}
	if sum.Complete && !lock.Exclusive() {
		// The shared tables need the study to ourselves; the other shards
		// are finishing (or a reader is reading). If they keep it, the
		// last of them, or `plumb score`, rebuilds and scores.
		if lock.Upgrade(upgradeWait) {
			cleanStudyTemps(opt.Dir, 0)
		} else {
			sum.Busy = true
		}
	}
	if lock.Exclusive() && (sum.Complete || opt.Shard.Whole()) {
		if _, err := writeRunsTable(opt.Dir, info, runs); err != nil {
			return sum, err
		}
		sum.RunsTable = true
	}
	if sum.Complete {
		// Records exist for all runs; make sure they are valid ones.
		for _, r := range runs {
			if _, err := readRecord(opt.Dir, info, r); err != nil {
				sum.Complete = false
				break
			}
		}
	}
	return sum, nil
}

// errShared marks failures of the shared work, which stop the sweep.
var errShared = errors.New("shared work failed")

type sharedErr struct{ err error }

func (e *sharedErr) Error() string { return e.err.Error() }
func (e *sharedErr) Is(t error) bool {
	return t == errShared
}
func (e *sharedErr) Unwrap() error { return e.err }

func unwrapShared(err error) error {
	var s *sharedErr
	if errors.As(err, &s) {
		return s.err
	}
	return err
}

// runOne optimises one run and writes its files. It returns the record
// written, or an error if the run was stopped, the shared work failed or
// the files could not be written.
func (sh *shared) runOne(ctx context.Context, opt Options, info *Info, r *Run, threads int) (rec *Record, err error) {
	s := r.Setting
	p, init, order, rows, err := sh.inputs(r)
	if err != nil {
		return nil, &sharedErr{err}
	}
	n := sh.ds.N
	if rows != nil {
		n = len(rows)
	}
	cfg := runConfig(s, threads, sh.plan.KLEvery)
	cfg.Progress = func(pr tsne.Progress) bool {
		if sh.event != nil && pr.Iter%ProgressEvery == 0 && pr.Iter < pr.Iters {
			sh.event(Event{Kind: EventRunProgress, Run: r, Iter: pr.Iter, Iters: pr.Iters})
		}
		return ctx.Err() == nil
	}
	rec = &Record{RunID: r.ID, SettingID: s.ID, Seed: r.Seed, PlanHash: info.PlanHash,
		InputFingerprint: info.Input.Fingerprint,
		LearningRate:     cfg.LearningRate, Gradient: string(resolveGradient(s.Gradient, n))}
	rec.Env = CurrentEnv(opt.Version)
	if rec.LearningRate == 0 {
		rec.LearningRate = tsne.LearningRateAuto(n, cfg.Exaggeration)
	}
	t0 := time.Now()
	res, oerr := optimize(p, init, cfg)
	rec.Seconds = math.Round(time.Since(t0).Seconds()*1000) / 1000
	if res != nil && order != nil {
		res.Y = tsne.UnpermuteLayout(res.Y, order)
	}
	if oerr != nil && (errors.Is(oerr, tsne.ErrStopped) || ctx.Err() != nil) {
		return nil, fmt.Errorf("run %s: %w", r.ID, oerr)
	}
	if oerr != nil {
		rec.Status = StatusFailed
		rec.Error = oerr.Error()
		var de *tsne.DivergedError
		if errors.As(oerr, &de) {
			rec.IterationsDone = de.Iter
		}
	} else {
		rec.Status = StatusDone
		kl := res.KL
		rec.KL = &kl
		rec.IterationsDone = res.Iters
		rec.LearningRate = res.LearningRate
		rec.Gradient = string(res.Method)
	}
	if err := writeRun(opt.Dir, info, sh.ds, r, rows, res, rec); err != nil {
		return nil, fmt.Errorf("run %s: %w", r.ID, err)
	}
	return rec, nil
}

// inputs returns what run r optimises: P, the start (both in the
// renumbered order), the renumbering (nil: none) and, for a run on a
// subsample, its input rows (nil: all points).
func (sh *shared) inputs(r *Run) (p *tsne.Sparse, init []float64, order, rows []int32, err error) {
	s := r.Setting
	if f := s.Fraction(); f < 1 {
		e, err := sh.subsample(r.Seed, f)
		if err != nil {
			return nil, nil, nil, nil, err
		}
		if p, err = sh.subAffinities(e, subAffKey{subKey{r.Seed, f}, s.Perplexity}); err != nil {
			return nil, nil, nil, nil, err
		}
		if s.Init == "pca" {
			if init, err = sh.subPCA(e); err != nil {
				return nil, nil, nil, nil, err
			}
		} else {
			init = tsne.RandomInit(len(e.rows), r.Seed)
		}
		if e.order != nil {
			init = tsne.PermuteLayout(init, e.order)
		}
		return p, init, e.order, e.rows, nil
	}
	if p, err = sh.affinities(s.Perplexity); err != nil {
		return nil, nil, nil, nil, err
	}
	if s.Init == "pca" {
		if init, err = sh.pcaInit(); err != nil {
			return nil, nil, nil, nil, err
		}
	} else {
		init = tsne.RandomInit(sh.ds.N, r.Seed)
	}
	if sh.order != nil {
		init = tsne.PermuteLayout(init, sh.order)
	}
	return p, init, sh.order, nil, nil
}

// optimize calls tsne.Optimize, turning a panic into an error so that one
// broken run cannot take the sweep down.
func optimize(p *tsne.Sparse, init []float64, cfg tsne.Config) (res *tsne.Result, err error) {
	defer func() {
		if r := recover(); r != nil {
			res, err = nil, fmt.Errorf("internal error: %v", r)
		}
	}()
	return tsne.Optimize(p, init, cfg)
}

// runConfig is the engine configuration of a setting.
func runConfig(s *Setting, threads, klEvery int) tsne.Config {
	cfg := tsne.Config{
		LearningRate:      s.LearningRate,
		Exaggeration:      s.Exaggeration,
		ExaggerationIters: s.ExaggerationIters,
		Iters:             s.Iters,
		Method:            tsne.Method(s.Gradient),
		Theta:             s.Theta,
		Threads:           threads,
		KLEvery:           klEvery,
	}
	return cfg
}

// resolveGradient is the setting's gradient method for n points, "auto"
// resolved by the engine's policy (tsne.Choose). Plans are validated
// before they run, so an unknown name cannot reach here; it is returned
// as given.
func resolveGradient(g string, n int) tsne.Method {
	m, err := tsne.ResolveMethod(tsne.Method(g), n)
	if err != nil {
		return tsne.Method(g)
	}
	return m
}
