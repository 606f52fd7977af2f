package sweep

import (
	"errors"
	"math"
	"os"
	"time"

	"plumb/internal/dataset"
	"plumb/tsne"
)

// Outline describes what Execute would do, without doing it (--dry-run).
type Outline struct {
	Plan     *Plan
	PlanHash string
	Settings []*Setting
	// Runs is the number of runs of the plan; InShard of this shard;
	// Finished those already finished in the study directory; Todo the
	// rest.
	Runs, InShard, Finished, Todo int
	// Neighbors is the search used ("exact" or "approx") and NeighborK the
	// neighbours per point, for the plan's largest perplexity.
	Neighbors string
	NeighborK int
	// Affinities lists, per perplexity with runs to do, its k and the runs
	// sharing it.
	Affinities []SharedAffinity
	// PCARuns is the number of runs to do that share the PCA start.
	PCARuns int
	// Existing is true when the directory already holds this study;
	// Mismatch is set when it holds another one.
	Existing bool
	Mismatch *MismatchError
	// Jobs and Threads are the parallelism Execute would use.
	Jobs, Threads int
	// Estimate is a rough wall-clock estimate for the runs to do (see
	// EstimateRun); Iterations the gradient iterations in total.
	Estimate   time.Duration
	Iterations int64
}

// SharedAffinity is one affinity matrix shared by runs.
type SharedAffinity struct {
	Perplexity float64
	K, Runs    int
}

// PlanOutline outlines what Execute(ctx, ds, plan, opt) would do. It reads the
// study directory if it exists but writes nothing.
func PlanOutline(ds *dataset.Dataset, plan *Plan, opt Options) (*Outline, error) {
	if err := Validate(plan, ds); err != nil {
		return nil, err
	}
	runs, err := plan.Runs()
	if err != nil {
		return nil, err
	}
	search, err := tsne.ResolveNeighbors(plan.Neighbors, ds.N, ds.D)
	if err != nil {
		return nil, err
	}
	o := &Outline{Plan: plan, PlanHash: plan.Hash(), Settings: plan.Settings(), Runs: len(runs),
		Neighbors: search, NeighborK: tsne.NeighborCount(ds.N, plan.MaxPerplexity())}
	mine := opt.Shard.Select(runs)
	o.InShard = len(mine)
	var info *Info
	if old, err := ReadInfo(opt.Dir); err == nil {
		switch {
		case old.Input.Fingerprint != ds.Fingerprint:
			o.Mismatch = &MismatchError{Dir: opt.Dir, What: "input", Have: short(old.Input.Fingerprint), Want: short(ds.Fingerprint)}
		case old.PlanHash != o.PlanHash:
			o.Mismatch = &MismatchError{Dir: opt.Dir, What: "plan", Have: old.PlanHash, Want: o.PlanHash}
		default:
			o.Existing = true
			info = old
		}
	} else if !errors.Is(err, os.ErrNotExist) {
		return nil, err
	}
	perRuns := map[float64]int{}
	var secs float64
	for _, r := range mine {
		if info != nil {
			if rec := verify(opt.Dir, info, r); rec != nil && !(opt.RetryFailed && rec.Status == StatusFailed) {
				o.Finished++
				continue
			}
		}
		o.Todo++
		perRuns[r.Setting.Perplexity]++
		if r.Setting.Init == "pca" {
			o.PCARuns++
		}
		o.Iterations += int64(r.Setting.Iters)
	}
	o.Jobs, o.Threads = parallelism(opt, ds.N, o.Todo)
	for _, perp := range plan.Perplexity {
		if perRuns[perp] > 0 {
			o.Affinities = append(o.Affinities, SharedAffinity{Perplexity: perp, K: tsne.NeighborCount(ds.N, perp), Runs: perRuns[perp]})
		}
	}
	// Runs spread over jobs: the wall time is the larger of an even share of
	// the work and the longest run. The shared neighbour search and the
	// affinities run on every core.
	var longest float64
	for _, r := range mine {
		if perRuns[r.Setting.Perplexity] > 0 {
			t := EstimateRun(ds.N, r.Setting, o.Threads).Seconds()
			secs += t
			longest = max(longest, t)
		}
	}
	cores := float64(o.Jobs * o.Threads)
	secs = costFixed + max(secs/float64(o.Jobs), longest) + EstimateNeighbors(plan.Neighbors, ds.N, ds.D, o.NeighborK, o.Jobs*o.Threads).Seconds()
	for _, a := range o.Affinities {
		secs += costAffinityNeighbor * float64(ds.N) * float64(a.K) / cores
	}
	if o.Todo == 0 {
		secs = 0
	}
	o.Estimate = time.Duration(secs * float64(time.Second))
	return o, nil
}

// Single-thread CPU costs of this version's engine, fitted to one-run
// sweeps (perplexity 30, 1,000 iterations, PCA start, 50 features, a
// mixture of 10 Gaussian clusters) timed with user+sys CPU time by
// internal/scripts/bench/estimate_check.sh: exact gradient at n = 500 and
// 1,000, Barnes-Hut at 2,000, 5,000 and 20,000, FFT interpolation at 5,000
// and 20,000 (see its README for the numbers). The estimate targets the
// wall time on an idle machine, where a single-threaded run's wall time is
// its CPU time; the script found the estimates within a factor of 1.5 of
// the measured time at those sizes. Other data, a busy machine or threads
// that do not scale perfectly widen that; outside the measured sizes (the
// approximate neighbour search from AutoExactMaxN points, FFT beyond 20,000)
// the costs are extrapolated.
const (
	costExactPerPair     = 5e-10  // seconds per ordered pair of points per iteration
	costBHPerPointLog    = 3e-8   // seconds per point per log2(n) per iteration
	costFFTPerPoint      = 3.9e-7 // seconds per point per iteration
	costFFTPerIter       = 8.3e-3 // seconds per iteration for the grid (grows with the layout, then capped)
	costExactNeighbor    = 2.6e-7 // seconds per n^1.25 per feature, vantage-point tree (fitted at 5,000 and 20,000)
	costApproxNeighbor   = 6e-6   // seconds per point and feature, NN-descent (not measured by the script)
	costBruteNeighbor    = 1e-10  // seconds per pair and feature, brute force (n ≤ 1,000)
	costAffinityNeighbor = 2e-7   // seconds per point and neighbour, per perplexity
	costFixed            = 0.15   // seconds per sweep: start, input, writing the study
)

// EstimateRun returns a rough duration of one run of setting s on n points
// with the given threads.
func EstimateRun(n int, s *Setting, threads int) time.Duration {
	threads = max(threads, 1)
	var perIter float64
	switch resolveGradient(s.Gradient, n) {
	case tsne.MethodExact:
		perIter = costExactPerPair * float64(n) * float64(n)
	case tsne.MethodBarnesHut:
		perIter = costBHPerPointLog * float64(n) * math.Log2(float64(max(n, 2)))
	default:
		perIter = costFFTPerIter + costFFTPerPoint*float64(n)
	}
	return time.Duration(perIter * float64(s.Iters) / float64(threads) * float64(time.Second))
}

// EstimateNeighbors returns the estimated wall time of the shared
// neighbour search (mode auto, exact or approx) of n points in d
// dimensions on the given threads.
func EstimateNeighbors(mode string, n, d, k, threads int) time.Duration {
	threads = max(threads, 1)
	nf, df := float64(n), float64(d)
	var sec float64
	resolved, _ := tsne.ResolveNeighbors(mode, n, d) // an unknown mode was refused with the plan
	switch {
	case resolved == "approx":
		sec = costApproxNeighbor * nf * df
	case n <= 1000:
		sec = costBruteNeighbor * nf * nf * df
	default:
		sec = costExactNeighbor * math.Pow(nf, 1.25) * df
	}
	return time.Duration(sec / float64(threads) * float64(time.Second))
}
