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
	// SharedK is the neighbours per point of the one shared search: above
	// NeighborK when subsamples derive their lists from it.
	SharedK int
	// Subsamples is the number of subsamples to draw for the runs to do
	// (one per seed and fraction below 1), SubsampleAffinities the P
	// matrices built for them (one per subsample and perplexity).
	Subsamples, SubsampleAffinities int
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
	o := &Outline{Plan: plan, PlanHash: plan.Hash(), Settings: plan.Settings(), Runs: len(runs),
		Neighbors: neighborsMode(plan.Neighbors, ds.N), NeighborK: tsne.NeighborCount(ds.N, plan.MaxPerplexity()),
		SharedK: sharedNeighborCount(ds.N, plan)}
	subs, subAff := map[subKey]bool{}, map[subAffKey]bool{}
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
		if f := r.Setting.Fraction(); f < 1 {
			subs[subKey{r.Seed, f}] = true
			subAff[subAffKey{subKey{r.Seed, f}, r.Setting.Perplexity}] = true
		} else {
			perRuns[r.Setting.Perplexity]++
		}
		if r.Setting.Init == "pca" {
			o.PCARuns++
		}
		o.Iterations += int64(r.Setting.Iters)
	}
	o.Subsamples, o.SubsampleAffinities = len(subs), len(subAff)
	o.Jobs, o.Threads = parallelism(opt, ds.N, o.Todo)
	for _, perp := range plan.Perplexity {
		if perRuns[perp] > 0 {
			o.Affinities = append(o.Affinities, SharedAffinity{Perplexity: perp, K: tsne.NeighborCount(ds.N, perp), Runs: perRuns[perp]})
		}
	}
	for _, r := range mine {
		if f := r.Setting.Fraction(); f < 1 && subs[subKey{r.Seed, f}] {
			secs += EstimateRun(SubsampleSize(ds.N, f), r.Setting, o.Threads).Seconds()
		} else if f >= 1 && perRuns[r.Setting.Perplexity] > 0 {
			secs += EstimateRun(ds.N, r.Setting, o.Threads).Seconds()
		}
	}
	// Runs spread over jobs; the shared neighbour search runs on all cores.
	secs = secs/float64(o.Jobs) + EstimateNeighbors(ds.N, ds.D, o.NeighborK, o.Jobs*o.Threads).Seconds()
	for _, a := range o.Affinities {
		secs += costAffinityNeigbor * float64(ds.N) * float64(a.K) / float64(o.Jobs*o.Threads)
	}
	secs += costAffinityNeigbor * float64(ds.N) * float64(o.NeighborK) * float64(o.SubsampleAffinities) / float64(o.Jobs*o.Threads)
	if o.Todo == 0 {
		secs = 0
	}
	o.Estimate = time.Duration(secs * float64(time.Second))
	return o, nil
}

// Rough single-thread costs, measured with this version's engine on the
// two-core development machine (1000 iterations, perplexity 30, 50
// features): exact gradient at n = 1000 took 8.8 s, Barnes-Hut at n = 5000
// 29.4 s, FFT interpolation at n = 5000 104 s (its grid cost dominates at
// this size and does not grow with n, so the linear model overestimates
// large n), exact neighbours (k = 90) at n = 5000 1.1 s, affinities 0.28 s
// (n = 5000) and 0.09 s (n = 1000). For --dry-run estimates only; expect a
// factor of two either way on other machines and data.
const (
	costExactPerPair    = 8.8e-9 // seconds per ordered pair of points per iteration
	costBHPerPointLog   = 4.8e-7 // seconds per point per log2(n) per iteration
	costFFTPerPoint     = 2.1e-5 // seconds per point per iteration (measured at n = 5000)
	costNeighborPair    = 1e-9   // seconds per pair and feature of the neighbour search
	costAffinityNeigbor = 8e-7   // seconds per point and neighbour, per perplexity
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
		perIter = costFFTPerPoint * float64(n)
	}
	return time.Duration(perIter * float64(s.Iters) / float64(threads) * float64(time.Second))
}

// EstimateNeighbors returns a rough duration of the shared neighbour search.
func EstimateNeighbors(n, d, k, threads int) time.Duration {
	threads = max(threads, 1)
	nf := float64(n)
	sec := costNeighborPair * nf * math.Min(nf, 20*math.Sqrt(nf)*math.Log2(nf+2)) * float64(d)
	return time.Duration(sec / float64(threads) * float64(time.Second))
}
