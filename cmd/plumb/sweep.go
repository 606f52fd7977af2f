package main

import (
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/urfave/cli/v2"

	"plumb/internal/dataset"
	"plumb/internal/words"
	"plumb/sweep"
)

func init() {
	flags := append(inputFlags(),
		&cli.StringFlag{Name: "out", Aliases: []string{"o"}, Usage: "study `DIR` (created; resumed if it holds this study)", Required: true},
		&cli.StringFlag{Name: "plan", Usage: "plan `FILE` (JSON object with the fields below); flags override it"},
	)
	for _, f := range sweep.SpecFields {
		flags = append(flags, &cli.StringFlag{Name: f.Flag(), Usage: f.Doc})
	}
	flags = append(flags,
		&cli.BoolFlag{Name: "dry-run", Usage: "print the plan, the shared work and an estimate; run nothing"},
		&cli.IntFlag{Name: "jobs", Aliases: []string{"j"}, Usage: fmt.Sprintf("runs optimised at once (0: automatic — one single-threaded run per core up to %d points, one run on every core above; with --threads T, cores ÷ T)", sweep.SmallN)},
		threadsFlag,
		&cli.StringFlag{Name: "shard", Usage: "run only shard `I/N` of the runs (0-based); Slurm array variables are read when absent"},
		&cli.IntFlag{Name: "shards", Usage: "number of shards for a Kubernetes Indexed Job (with JOB_COMPLETION_INDEX)"},
		&cli.BoolFlag{Name: "force", Usage: "use a directory holding another plan or other data anyway (its old runs are redone)"},
		&cli.BoolFlag{Name: "retry-failed", Usage: "redo runs recorded as failed"},
		&cli.BoolFlag{Name: "no-score", Usage: "do not score the study after the runs"},
		&cli.IntFlag{Name: "k", Value: sweep.DefaultK, Usage: "neighbourhood size for scoring"},
		&cli.BoolFlag{Name: "quiet", Aliases: []string{"q"}, Usage: "no progress display"},
	)
	register(&cli.Command{
		Name:      "sweep",
		Usage:     "run a grid of t-SNE settings × seeds into a study directory",
		UsageText: "plumb sweep --input FILE --out DIR [--perplexity 5,15,30] [--learning-rate auto,200] [--seeds 10] [options]",
		Flags:     flags,
		Action:    sweepAction,
	})
}

// planSpec collects the plan from --plan and the grid flags.
// maxParallel bounds --jobs and --threads: far more than any machine has
// cores, small enough that nothing is sized from a wild value.
const maxParallel = 4096

// checkParallelism checks --jobs or --threads: 0 (automatic) up to
// maxParallel.
func checkParallelism(c *cli.Context, name string) error {
	if v := c.Int(name); v < 0 || v > maxParallel {
		return fmt.Errorf("--%s %d: must be 0 (automatic) or 1..%d", name, v, maxParallel)
	}
	return nil
}

func planSpec(c *cli.Context) (sweep.Spec, error) {
	var base sweep.Spec
	if f := c.String("plan"); f != "" {
		s, err := sweep.ReadSpec(f)
		if err != nil {
			return base, err
		}
		base = s
	}
	var over sweep.Spec
	for _, f := range sweep.SpecFields {
		f.Set(&over, c.String(f.Flag()))
	}
	return base.Merge(over), nil
}

func sweepAction(c *cli.Context) error {
	stderr := c.App.ErrWriter
	stdout := c.App.Writer
	spec, err := planSpec(c)
	if err != nil {
		return err
	}
	plan, err := spec.Plan()
	if err != nil {
		return err
	}
	if err := checkParallelism(c, "jobs"); err != nil {
		return err
	}
	if err := checkParallelism(c, "threads"); err != nil {
		return err
	}
	if c.Int("k") < 1 {
		return fmt.Errorf("--k %d: must be positive", c.Int("k"))
	}
	shard, err := sweep.ResolveShard(c.String("shard"), c.Int("shards"), os.Getenv)
	if err != nil {
		return err
	}
	path, dopt, err := inputOptions(c)
	if err != nil {
		return err
	}
	out := c.String("out")
	dry := c.Bool("dry-run")
	// One writer at a time: the study's lock is taken before any work,
	// and before the input is read when the study exists already, so that
	// a second writer is refused at once.
	var lock *sweep.Lock
	takeLock := func() error {
		if lock != nil || dry {
			return nil
		}
		l, err := sweep.LockStudy(out, shard, c.Bool("force"), cmdLine)
		lock = l
		return err
	}
	defer func() { lock.Release() }()
	if _, err := os.Stat(filepath.Join(out, sweep.StudyFile)); err == nil {
		if err := takeLock(); err != nil {
			return err
		}
	}
	ds, err := dataset.Read(path, dopt)
	if err != nil {
		return err
	}
	if !c.Bool("quiet") {
		for _, w := range ds.Warnings {
			fmt.Fprintf(stderr, "plumb: warning: %s\n", w)
		}
	}
	if err := sweep.Validate(plan, ds); err != nil {
		return err
	}
	if !c.Bool("no-score") {
		n := ds.N
		if f := plan.MinFraction(); f < 1 {
			n = sweep.SubsampleSize(ds.N, f) // the smallest layout the scores see
		}
		if err := sweep.CheckK(c.Int("k"), n); err != nil {
			return hintError{err: fmt.Errorf("--k: %w, checked before the runs since the sweep scores them", err),
				hint: fmt.Sprintf("pass --k %d or smaller, or --no-score", max((n-1)/2, 1))}
		}
	}
	if err := takeLock(); err != nil {
		return err
	}
	opt := sweep.Options{
		Dir: out, Input: sweep.NewInput(path, dopt, ds), Version: version, Shard: shard,
		Jobs: c.Int("jobs"), Threads: c.Int("threads"), Force: c.Bool("force"), RetryFailed: c.Bool("retry-failed"),
		Lock: lock,
	}
	if dry {
		o, err := sweep.PlanOutline(ds, plan, opt)
		if err != nil {
			return err
		}
		printOutline(stdout, ds, path, shard, o)
		return nil
	}

	ctx, stop := interruptContext()
	defer stop()
	var prog *progress
	if !c.Bool("quiet") {
		prog = newProgress(stderr)
		opt.Events = prog.event
	}
	sum, err := sweep.Execute(ctx, ds, plan, opt)
	if prog != nil {
		prog.finish()
	}
	if err != nil {
		return err
	}
	st := sum.Stats
	if !c.Bool("quiet") {
		fmt.Fprintf(stderr, "plumb: %s done, %d failed, %d already finished, in %s (%s)\n",
			words.Count(st.Done, "run"), st.Failed, st.Skipped, sum.Elapsed.Round(time.Millisecond), shard)
	}
	if sum.Canceled {
		return interrupted("run the same command again to resume",
			"%s finished and kept, %d in flight discarded", words.Count(st.Done+st.Failed, "run"), st.Stopped)
	}
	if st.Failed > 0 && !c.Bool("quiet") {
		fmt.Fprintf(stderr, "plumb: warning: %s failed; their reasons are in %s (column error)\n", words.Count(st.Failed, "run"), sweep.RunsFile)
	}
	if !sum.Complete || !lock.Exclusive() {
		// Let the other shards have the study at once.
		lock.Release()
	}
	if sum.Busy {
		if !c.Bool("quiet") {
			fmt.Fprintf(stderr, "plumb: every run is finished, but other processes still hold the study; the last shard scores it, or run `plumb score %s`\n", opt.Dir)
		}
		return nil
	}
	if !sum.Complete {
		if !c.Bool("quiet") {
			fmt.Fprintf(stderr, "plumb: other shards still have runs to do; score with `plumb score %s` when all are finished\n", opt.Dir)
		}
		return nil
	}
	if c.Bool("no-score") {
		return nil
	}
	if k := c.Int("k"); sweep.ScoresCurrent(opt.Dir, k) {
		if !c.Bool("quiet") {
			fmt.Fprintf(stderr, "plumb: nothing new to score (scores at k=%d cover every finished run); see `plumb show %s`\n", k, opt.Dir)
		}
		return nil
	}
	if !c.Bool("quiet") {
		fmt.Fprintf(stderr, "plumb: scoring (k=%d)\n", c.Int("k"))
	}
	t0 := time.Now()
	// sweep.Score's errors start with "score: " already.
	if _, err := sweep.Score(ctx, opt.Dir, ds, sweep.ScoreOptions{K: c.Int("k"), Threads: sum.Jobs * sum.Threads, Lock: lock}); err != nil {
		if ctx.Err() != nil {
			return interrupted("run the same command again to resume (it scores without redoing runs), or `plumb score "+opt.Dir+"`",
				"while scoring: all %d runs are kept; the score tables were not written", st.Planned)
		}
		return err
	}
	if !c.Bool("quiet") {
		fmt.Fprintf(stderr, "plumb: scored in %s; see `plumb show %s`\n", time.Since(t0).Round(time.Millisecond), opt.Dir)
	}
	return nil
}

// hintError attaches a hint to an error (see hinter in main.go).
type hintError struct {
	err  error
	hint string
}

func (e hintError) Error() string { return e.err.Error() }
func (e hintError) Unwrap() error { return e.err }
func (e hintError) Hint() string  { return e.hint }

func printOutline(w io.Writer, ds *dataset.Dataset, path string, shard sweep.Shard, o *sweep.Outline) {
	p := o.Plan
	fmt.Fprintf(w, "plan %s: %s × %s = %s\n", o.PlanHash, words.Count(len(o.Settings), "setting"), words.Count(len(p.Seeds), "seed"), words.Count(o.Runs, "run"))
	fmt.Fprintf(w, "input: %s, %s × %s, fingerprint %.12s\n", path, words.Count(ds.N, "point"), words.Count(ds.D, "feature"), ds.Fingerprint)
	fmt.Fprintln(w, "settings:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  setting_id\tperplexity\tlearning_rate\texaggeration\texaggeration_iters\titers\tinit\tgradient")
	for _, s := range o.Settings {
		fmt.Fprintf(tw, "  %s\t%g\t%s\t%g\t%d\t%d\t%s\t%s\n", s.ID, s.Perplexity, s.LearningRateSpec(), s.Exaggeration,
			s.ExaggerationIters, s.Iters, s.Init, s.Gradient)
	}
	tw.Flush()
	fmt.Fprintf(w, "seeds: %s\n", seedList(p.Seeds))
	fmt.Fprintln(w, "shared work (done once, not per run):")
	if o.Todo == 0 {
		fmt.Fprintln(w, "  none: every run of this shard is finished")
	} else {
		fmt.Fprintf(w, "  neighbours: %s search, k=%d for the largest perplexity %g, truncated for the others\n", o.Neighbors, o.NeighborK, p.MaxPerplexity())
		for _, a := range o.Affinities {
			fmt.Fprintf(w, "  affinities P: perplexity %g (k=%d), shared by %s\n", a.Perplexity, a.K, words.Count(a.Runs, "run"))
		}
		if o.PCARuns > 0 {
			fmt.Fprintf(w, "  PCA initialisation: once, shared by %s\n", words.Count(o.PCARuns, "run"))
		}
	}
	switch {
	case o.Mismatch != nil:
		fmt.Fprintf(w, "study directory: holds another %s; the sweep would refuse it without --force\n", o.Mismatch.What)
	case o.Existing:
		fmt.Fprintln(w, "study directory: holds this study; finished runs are skipped")
	default:
		fmt.Fprintln(w, "study directory: new")
	}
	fmt.Fprintf(w, "this process (%s): %s, %d finished, %d to do, %s × %s\n", shard, words.Count(o.InShard, "run"), o.Finished, o.Todo, words.Count(o.Jobs, "job"), words.Count(o.Threads, "thread"))
	e := o.Estimate.Seconds()
	fmt.Fprintf(w, "estimate: %s for %d gradient iterations (%s s, likely %s s to %s s: wall time on an idle machine, scoring not included)\n",
		roundEstimate(o.Estimate), o.Iterations, secs(e), secs(e/estimateError), secs(e*estimateError))
}

// estimateError is the factor either way within which
// internal/scripts/bench/estimate_check.sh found the estimate of single-run
// sweeps (see sweep's cost constants).
const estimateError = 1.5

// secs prints a number of seconds with two significant digits (at least
// whole seconds).
func secs(s float64) string {
	if s >= 10 {
		return strconv.FormatFloat(math.Round(s), 'f', -1, 64)
	}
	return strconv.FormatFloat(s, 'g', 2, 64)
}

func roundEstimate(d time.Duration) string {
	switch {
	case d < time.Second:
		return "under a second"
	case d < time.Minute:
		return "about " + d.Round(time.Second).String()
	default:
		return "about " + d.Round(time.Minute).String()
	}
}

// seedList prints seeds compactly as ranges.
func seedList(s []uint64) string {
	var parts []string
	for i := 0; i < len(s); {
		j := i
		for j+1 < len(s) && s[j+1] == s[j]+1 {
			j++
		}
		if j > i {
			parts = append(parts, fmt.Sprintf("%d-%d", s[i], s[j]))
		} else {
			parts = append(parts, fmt.Sprintf("%d", s[i]))
		}
		i = j + 1
	}
	return strings.Join(parts, ",")
}

// progress shows the sweep's progress on stderr: a bar redrawn in place on
// a terminal, plain lines (at most one every few seconds, failures always)
// otherwise.
type progress struct {
	w        io.Writer
	tty      bool
	last     time.Time
	drawn    bool
	done     int
	failed   int
	todo     int
	elapsed  time.Duration
	interval time.Duration
	iter     string
}

func newProgress(w io.Writer) *progress {
	p := &progress{w: w, interval: 5 * time.Second}
	if isTerminal(w) {
		p.tty = true
		p.interval = 200 * time.Millisecond
	}
	return p
}

func (p *progress) clear() {
	if p.tty && p.drawn {
		fmt.Fprint(p.w, "\r\x1b[K")
		p.drawn = false
	}
}

func (p *progress) event(e sweep.Event) {
	switch e.Kind {
	case sweep.EventInfo:
		p.clear()
		fmt.Fprintf(p.w, "plumb: %s\n", e.Message)
		return
	case sweep.EventRunProgress:
		// Only the terminal bar shows the iteration of a run in flight
		// (useful for large n, where one run takes minutes).
		if p.tty && time.Since(p.last) >= p.interval {
			p.iter = fmt.Sprintf(", run %s at iteration %d/%d", e.Run.ID, e.Iter, e.Iters)
			p.last = time.Now()
			p.draw()
		}
		return
	case sweep.EventRunFailed:
		p.clear()
		fmt.Fprintf(p.w, "plumb: run %s failed: %v\n", e.Run.ID, e.Err)
	}
	p.iter = ""
	p.done, p.failed, p.todo, p.elapsed = e.Done, e.Failed, e.Todo, e.Elapsed
	finished := p.done+p.failed == p.todo
	if !finished && time.Since(p.last) < p.interval {
		return
	}
	p.last = time.Now()
	p.draw()
}

func (p *progress) line() string {
	n := p.done + p.failed
	eta := "--"
	if n > 0 && n < p.todo {
		rem := time.Duration(float64(p.elapsed) / float64(n) * float64(p.todo-n))
		eta = fmtDur(rem)
	} else if n == p.todo {
		eta = "0s"
	}
	return fmt.Sprintf("%d/%d %s, %d failed, elapsed %s, ETA %s", n, p.todo, words.Noun(p.todo, "run"), p.failed, fmtDur(p.elapsed), eta)
}

func (p *progress) draw() {
	if p.todo == 0 {
		return
	}
	if !p.tty {
		fmt.Fprintf(p.w, "plumb: %s\n", p.line())
		return
	}
	const width = 30
	n := p.done + p.failed
	fill := width * n / p.todo
	bar := strings.Repeat("#", fill) + strings.Repeat(".", width-fill)
	fmt.Fprintf(p.w, "\r\x1b[K[%s] %s%s", bar, p.line(), p.iter)
	p.drawn = true
}

func (p *progress) finish() {
	if p.tty && p.drawn {
		fmt.Fprintln(p.w)
		p.drawn = false
	}
}

func fmtDur(d time.Duration) string {
	d = d.Round(time.Second)
	h := d / time.Hour
	m := (d % time.Hour) / time.Minute
	s := (d % time.Minute) / time.Second
	if h > 0 {
		return fmt.Sprintf("%dh%02dm%02ds", h, m, s)
	}
	if m > 0 {
		return fmt.Sprintf("%dm%02ds", m, s)
	}
	return fmt.Sprintf("%ds", s)
}
