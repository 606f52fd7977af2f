package main

import (
	"errors"
	"fmt"
	"math"
	"os"
	"strings"
	"time"

	"github.com/urfave/cli/v2"

	"plumb/internal/dataset"
	"plumb/internal/words"
	"plumb/sweep"
)

func init() {
	register(&cli.Command{
		Name:      "score",
		Usage:     "(re)compute a study's score tables from its finished runs",
		UsageText: "plumb score STUDY_DIR [--k 15] [--input FILE]",
		Flags: []cli.Flag{
			&cli.IntFlag{Name: "k", Value: sweep.DefaultK, Usage: "neighbourhood size of the neighbour-based scores (below n/2)"},
			&cli.StringFlag{Name: "input", Usage: "the study's input `FILE`, if it moved since the sweep (its fingerprint must match)"},
			&cli.Float64Flag{Name: "spread-threshold", Usage: "set spread_flagged above this spread (global placement; 0: the default 0.1); unstable comes from co-assignment < 0.75"},
			&cli.IntFlag{Name: "rnx-queries", Usage: "query points of each run's R_NX curve (0: the default 500; -1: every point, exact)"},
			threadsFlag,
		},
		Action: scoreAction,
	})
}

// studyArg returns the single STUDY_DIR argument. The command-line
// library stops reading flags at the first argument, so flags written after
// the directory ("plumb show DIR --json") are applied here.
func studyArg(c *cli.Context) (string, error) {
	var pos []string
	args := c.Args().Slice()
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			pos = append(pos, args[i+1:]...)
			break
		}
		if !strings.HasPrefix(a, "-") || a == "-" {
			pos = append(pos, a)
			continue
		}
		name, val, hasVal := strings.Cut(strings.TrimLeft(a, "-"), "=")
		f := lookupFlag(c.Command.Flags, name)
		if f == nil {
			return "", &exitError{code: 2, err: fmt.Errorf("%s: unknown flag %s", c.Command.Name, a)}
		}
		if _, isBool := f.(*cli.BoolFlag); isBool && !hasVal {
			val, hasVal = "true", true
		}
		if !hasVal {
			if i+1 >= len(args) {
				return "", &exitError{code: 2, err: fmt.Errorf("%s: flag %s needs a value", c.Command.Name, a)}
			}
			i++
			val = args[i]
		}
		if err := c.Set(f.Names()[0], val); err != nil {
			return "", &exitError{code: 2, err: fmt.Errorf("%s: flag %s: %v", c.Command.Name, a, err)}
		}
	}
	if len(pos) != 1 {
		return "", &exitError{code: 2, err: fmt.Errorf("%s needs exactly one argument, the study directory (got %d)", c.Command.Name, len(pos))}
	}
	return pos[0], nil
}

func lookupFlag(flags []cli.Flag, name string) cli.Flag {
	for _, f := range flags {
		for _, n := range f.Names() {
			if n == name {
				return f
			}
		}
	}
	return nil
}

// studyInput reads the input of a study: --input if given, else the path
// recorded in study.json (as given, then absolute).
func studyInput(c *cli.Context, info *sweep.Info) (*dataset.Dataset, error) {
	opt := info.Input.Options()
	paths := []string{info.Input.Path, info.Input.AbsPath}
	if p := c.String("input"); p != "" {
		paths = []string{p}
	}
	var firstErr error
	for _, p := range paths {
		if p == "" {
			continue
		}
		if _, err := os.Stat(p); err != nil {
			if firstErr == nil {
				firstErr = fmt.Errorf("input of the study: %w", err)
			}
			continue
		}
		return dataset.Read(p, opt)
	}
	return nil, hintError{err: firstErr, hint: "pass the input file with --input"}
}

func scoreAction(c *cli.Context) error {
	dir, err := studyArg(c)
	if err != nil {
		return err
	}
	if c.Int("k") < 1 {
		return fmt.Errorf("--k %d: must be positive", c.Int("k"))
	}
	if v := c.Float64("spread-threshold"); !(v >= 0) || math.IsInf(v, 0) {
		return fmt.Errorf("--spread-threshold %g: must be positive (or 0 for the default)", v)
	}
	th, err := threads(c)
	if err != nil {
		return err
	}
	info, err := sweep.ReadInfo(dir)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("%s is not a study (no %s)", dir, sweep.StudyFile)
		}
		return err
	}
	// k against n before the input is read (study.json knows n).
	if err := sweep.CheckK(c.Int("k"), info.Input.N); err != nil {
		return fmt.Errorf("--k: %w", err)
	}
	lock, err := sweep.LockStudy(dir, sweep.Shard{}, true, cmdLine)
	if err != nil {
		return err
	}
	defer lock.Release()
	ds, err := studyInput(c, info)
	if err != nil {
		return err
	}
	ctx, stop := interruptContext()
	defer stop()
	t0 := time.Now()
	sum, err := sweep.Score(ctx, dir, ds, sweep.ScoreOptions{K: c.Int("k"), Threads: th, SpreadThreshold: c.Float64("spread-threshold"),
		RNXQueries: c.Int("rnx-queries"), Lock: lock})
	if err != nil {
		if ctx.Err() != nil {
			return interrupted("run `plumb score "+dir+"` again", "the score tables were not written (the ones there before are unchanged)")
		}
		return err
	}
	if len(sum.Unfinished) > 0 {
		ex := sum.Unfinished[0]
		if len(sum.Unfinished) > 1 {
			ex += ", …"
		}
		fmt.Fprintf(c.App.ErrWriter, "plumb: warning: %d of %d planned runs are not finished (no valid record: %s) and are not scored; the sweep's command redoes them\n",
			len(sum.Unfinished), sum.Planned, ex)
	}
	fmt.Fprintf(c.App.ErrWriter, "plumb: scored %s in %s (k=%d, %s) in %s\n",
		words.Count(sum.Runs, "run"), words.Count(sum.Settings, "setting"), sum.K, words.Count(sum.Pairs, "pair"), time.Since(t0).Round(time.Millisecond))
	return nil
}
