package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"plumb/internal/dataset"
	"plumb/tsne"
)

// UnknownRunError reports a run id that is not in the study's plan.
type UnknownRunError struct {
	Dir, RunID string
}

func (e *UnknownRunError) Error() string {
	return fmt.Sprintf("%s: no run %q in the plan", e.Dir, e.RunID)
}

// RunFailedError reports a run whose optimisation failed (for example
// diverged) when it was run again.
type RunFailedError struct {
	RunID string
	Err   error
}

func (e *RunFailedError) Error() string { return fmt.Sprintf("run %s failed: %v", e.RunID, e.Err) }
func (e *RunFailedError) Unwrap() error { return e.Err }

// Rerun runs run runID of the study in dir again, in memory, and returns
// its layout; nothing is written. It does what Execute did for the run:
// the same plan-wide neighbour search (k for the plan's largest
// perplexity, and more when the plan subsamples), the same renumbering,
// affinities, start and engine configuration, so on the same kernel path
// (tsne.KernelPath) the layout equals the stored one bit for bit,
// whatever threads is (threads ≤ 0: 1). A run on a subsample returns
// its rows only, in the stored order.
//
// ds must be the study's input (its fingerprint is checked). An unknown
// run id is an *UnknownRunError; a failed optimisation a *RunFailedError.
// Cost: one neighbour search of the whole input plus one run.
func Rerun(ctx context.Context, dir string, ds *dataset.Dataset, runID string, threads int) (*Layout, error) {
	info, err := ReadInfo(dir)
	if err != nil {
		return nil, err
	}
	return rerun(ctx, dir, info, ds, runID, threads)
}

func rerun(ctx context.Context, dir string, info *Info, ds *dataset.Dataset, runID string, threads int) (*Layout, error) {
	if ds.Fingerprint != info.Input.Fingerprint || ds.N != info.Input.N {
		return nil, &dataset.InputError{File: ds.Source, Msg: fmt.Sprintf(
			"not the input of study %s (fingerprint %s, study has %s from %s)", dir, short(ds.Fingerprint), short(info.Input.Fingerprint), info.Input.Path)}
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return nil, err
	}
	i := slices.IndexFunc(runs, func(r *Run) bool { return r.ID == runID })
	if i < 0 {
		return nil, &UnknownRunError{Dir: dir, RunID: runID}
	}
	r := runs[i]
	threads = max(threads, 1)
	stats := Stats{AffinityBuilds: map[float64]int{}}
	sh := &shared{ds: ds, plan: info.Plan, threads: threads, aff: map[float64]*affEntry{},
		subs: map[subKey]*subEntry{}, subAff: map[subAffKey]*affEntry{}, stats: &stats}
	for _, perp := range info.Plan.Perplexity {
		sh.aff[perp] = &affEntry{pending: 1}
	}
	if f := r.Setting.Fraction(); f < 1 {
		key := subAffKey{subKey{r.Seed, f}, r.Setting.Perplexity}
		sh.subs[key.subKey] = &subEntry{pending: 1}
		sh.subAff[key] = &affEntry{pending: 1}
	}
	p, init, order, rows, err := sh.inputs(r)
	if err != nil {
		return nil, fmt.Errorf("run %s: %w", r.ID, err)
	}
	cfg := runConfig(r.Setting, threads, info.Plan.KLEvery)
	cfg.Progress = func(tsne.Progress) bool { return ctx.Err() == nil }
	res, err := optimize(p, init, cfg)
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("run %s: %w", r.ID, ctx.Err())
		}
		return nil, &RunFailedError{RunID: r.ID, Err: err}
	}
	y := res.Y
	if order != nil {
		y = tsne.UnpermuteLayout(y, order)
	}
	l := &Layout{RunID: r.ID, Y: y}
	n := ds.N
	if rows != nil {
		n = len(rows)
	}
	l.Point = make([]int32, n)
	for i := range l.Point {
		l.Point[i] = int32(i)
		if rows != nil {
			l.Point[i] = rows[i]
		}
	}
	if ds.IDs != nil {
		l.IDs = ds.IDs
		if rows != nil {
			l.IDs = selectStrings(ds.IDs, rows)
		}
	}
	if ds.Labels != nil {
		l.Labels = ds.Labels
		if rows != nil {
			l.Labels = selectStrings(ds.Labels, rows)
		}
	}
	return l, nil
}

// Recheck is the outcome of CheckRun: a stored run compared with the same
// run computed again.
type Recheck struct {
	RunID string
	// Status is the stored status ("done" or "failed").
	Status string
	// Match is true when the run reproduces: every coordinate equal bit
	// for bit, or a stored failure that fails again.
	Match bool
	// Points is the number of layout rows compared, Differ the number of
	// coordinates (of 2·Points) whose bits differ.
	Points, Differ int
	// MaxDeviation is the largest |stored − recomputed| coordinate
	// difference, at layout row Row (0-based), holding input row Point
	// (0-based) with point id ID, axis Axis ("x" or "y");
	// MaxULP the largest distance in units in the last place. A NaN
	// deviation marks a non-finite recomputed coordinate.
	MaxDeviation float64
	MaxULP       uint64
	Row          int
	Point        int32
	ID           string
	Axis         string
	// Problem says why a run does not reproduce when it is not a
	// coordinate difference (a failure on one side only).
	Problem string
	// Stored is the environment recorded with the run (nil in older
	// studies); Now the environment of this process.
	Stored, Now *Env
}

// CheckRun runs run runID of the study in dir again (Rerun) and compares
// the layout with the stored one bit for bit, on the stored rows. Errors
// are for what stops the check itself: an unreadable study or record, an
// unknown run (*UnknownRunError), an unfinished run, other input.
func CheckRun(ctx context.Context, dir string, ds *dataset.Dataset, runID string, threads int, version string) (*Recheck, error) {
	info, err := ReadInfo(dir)
	if err != nil {
		return nil, err
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return nil, err
	}
	i := slices.IndexFunc(runs, func(r *Run) bool { return r.ID == runID })
	if i < 0 {
		return nil, &UnknownRunError{Dir: dir, RunID: runID}
	}
	r := runs[i]
	rec, err := readRecord(dir, info, r)
	if err != nil {
		return nil, fmt.Errorf("run %s is not finished: %w", runID, err)
	}
	c := &Recheck{RunID: runID, Status: rec.Status, Stored: rec.Env, Now: CurrentEnv(version)}
	var stored []float64
	if rec.Status == StatusDone {
		if stored, _, err = readLayoutRows(dir, info, r); err != nil {
			return nil, err
		}
	}
	l, err := rerun(ctx, dir, info, ds, runID, threads)
	var rf *RunFailedError
	switch {
	case errors.As(err, &rf) && rec.Status == StatusFailed:
		c.Match = true
		return c, nil
	case errors.As(err, &rf):
		c.Problem = "the stored run is done but ran again it failed: " + rf.Err.Error()
		return c, nil
	case err != nil:
		return nil, err
	case rec.Status == StatusFailed:
		c.Problem = "the stored run failed (" + rec.Error + ") but ran again it finished"
		return c, nil
	}
	if len(l.Y) != len(stored) {
		c.Problem = fmt.Sprintf("the stored layout has %d rows, the new one %d", len(stored)/2, len(l.Y)/2)
		return c, nil
	}
	c.Points = len(stored) / 2
	for j, a := range stored {
		b := l.Y[j]
		if math.Float64bits(a) == math.Float64bits(b) {
			continue
		}
		c.Differ++
		dev := math.Abs(a - b)
		if math.IsNaN(dev) {
			dev = math.Inf(1)
		}
		u := ulps(a, b)
		if c.Differ == 1 || dev > c.MaxDeviation || (dev == c.MaxDeviation && u > c.MaxULP) {
			c.MaxDeviation, c.MaxULP, c.Row, c.Point = dev, u, j/2, l.Point[j/2]
			c.Axis = "x"
			if l.IDs != nil {
				c.ID = l.IDs[j/2]
			}
			if j%2 == 1 {
				c.Axis = "y"
			}
		}
	}
	c.Match = c.Differ == 0
	return c, nil
}

// ulps returns the distance between a and b in units in the last place:
// the number of float64 values from one to the other (+0 and −0 count as
// the same value). NaN is not ordered; its distance is meaningless.
func ulps(a, b float64) uint64 {
	key := func(v float64) int64 {
		u := int64(math.Float64bits(v))
		if u < 0 {
			return math.MinInt64 - u // negative floats: reverse order below +0
		}
		return u
	}
	ka, kb := key(a), key(b)
	if ka > kb {
		ka, kb = kb, ka
	}
	d := uint64(kb) - uint64(ka)
	return d
}

// SampleRuns picks n of ids at random with seed (all of them when n ≥
// len(ids)) and returns them in their order in ids. The same ids, n and
// seed give the same choice.
func SampleRuns(ids []string, n int, seed uint64) []string {
	if n >= len(ids) {
		return slices.Clone(ids)
	}
	rng := rand.New(rand.NewPCG(seed, 0x7265636865636b)) // stream "recheck"
	idx := rng.Perm(len(ids))[:n]
	slices.Sort(idx)
	out := make([]string, n)
	for i, j := range idx {
		out[i] = ids[j]
	}
	return out
}

// FinishedRuns returns the ids of the study's runs that have a valid
// record, in plan order (done and failed ones).
func FinishedRuns(dir string) ([]string, error) {
	info, err := ReadInfo(dir)
	if err != nil {
		return nil, err
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return nil, err
	}
	var ids []string
	for _, r := range runs {
		if _, err := readRecord(dir, info, r); err == nil {
			ids = append(ids, r.ID)
		}
	}
	return ids, nil
}
