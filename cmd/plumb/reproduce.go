package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"slices"
	"strings"
	"syscall"

	"github.com/urfave/cli/v2"

	"plumb/sweep"
)

func init() {
	register(&cli.Command{
		Name:  "reproduce",
		Usage: "run finished runs of a study again and compare their layouts bit for bit",
		UsageText: "plumb reproduce STUDY_DIR (--runs ID,ID | --sample N [--seed S] | --all) [--input FILE]\n\n" +
			"Exit status: 0 every chosen run reproduces, 1 one or more do not, 2 usage error or unreadable study.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "runs", Usage: "comma list of run `IDS` to run again"},
			&cli.IntFlag{Name: "sample", Usage: "run again `N` finished runs chosen at random with --seed"},
			&cli.Uint64Flag{Name: "seed", Value: 1, Usage: "seed of the --sample choice"},
			&cli.BoolFlag{Name: "all", Usage: "run every finished run again"},
			&cli.StringFlag{Name: "input", Usage: "the study's input `FILE`, if it moved since the sweep (its fingerprint must match)"},
			threadsFlag,
		},
		OnUsageError: func(c *cli.Context, err error, _ bool) error { return &exitError{code: 2, err: err} },
		Action:       reproduceAction,
	})
}

func usage2(format string, a ...any) error {
	return &exitError{code: 2, err: fmt.Errorf(format, a...)}
}

func reproduceAction(c *cli.Context) error {
	dir, err := studyArg(c)
	if err != nil {
		return err
	}
	chosen := 0
	for _, set := range []bool{c.String("runs") != "", c.IsSet("sample"), c.Bool("all")} {
		if set {
			chosen++
		}
	}
	if chosen != 1 {
		return usage2("reproduce: choose the runs with exactly one of --runs, --sample or --all")
	}
	if c.IsSet("sample") && c.Int("sample") < 1 {
		return usage2("--sample %d: must be positive", c.Int("sample"))
	}
	th, err := threads(c)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	info, err := sweep.ReadInfo(dir)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return usage2("%s is not a study (no %s)", dir, sweep.StudyFile)
		}
		return &exitError{code: 2, err: err}
	}
	finished, err := sweep.FinishedRuns(dir)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	var ids []string
	switch {
	case c.String("runs") != "":
		for _, id := range strings.Split(c.String("runs"), ",") {
			if id = strings.TrimSpace(id); id != "" {
				ids = append(ids, id)
			}
		}
		if len(ids) == 0 {
			return usage2("--runs %q names no run", c.String("runs"))
		}
	case c.IsSet("sample"):
		ids = sweep.SampleRuns(finished, c.Int("sample"), c.Uint64("seed"))
	default:
		ids = finished
	}
	if len(ids) == 0 {
		return usage2("%s has no finished runs to reproduce", dir)
	}
	// Every id is checked before any work: an unknown or unfinished run
	// is a usage error, not a failed reproduction.
	isFinished := map[string]bool{}
	for _, id := range finished {
		isFinished[id] = true
	}
	planned, err := info.Plan.Runs()
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	for _, id := range ids {
		if isFinished[id] {
			continue
		}
		if slices.ContainsFunc(planned, func(r *sweep.Run) bool { return r.ID == id }) {
			return usage2("run %s of %s is not finished (run `plumb sweep` to finish the study)", id, dir)
		}
		return hintError{err: &exitError{code: 2, err: &sweep.UnknownRunError{Dir: dir, RunID: id}},
			hint: "run ids are the names of the files in " + filepath.Join(dir, sweep.RecordsDir) + " (without .json)"}
	}
	ds, err := studyInput(c, info)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	w := c.App.Writer
	now := sweep.CurrentEnv(version)
	fmt.Fprintf(w, "reproducing %d of %d finished runs of %s (plumb %s, %s, %s/%s, kernels %s)\n",
		len(ids), len(finished), dir, now.Version, now.Go, now.OS, now.Arch, now.Kernels)
	bad := 0
	for _, id := range ids {
		rc, err := sweep.CheckRun(ctx, dir, ds, id, th, version)
		if err != nil {
			if ctx.Err() != nil {
				return &exitError{code: 130, err: fmt.Errorf("interrupted: %w", err)}
			}
			return &exitError{code: 2, err: err}
		}
		if !rc.Match {
			bad++
		}
		printRecheck(w, rc)
	}
	if bad > 0 {
		return &exitError{code: 1, err: fmt.Errorf("%d of %d runs do not reproduce", bad, len(ids))}
	}
	fmt.Fprintf(w, "all %d runs reproduce bit for bit\n", len(ids))
	return nil
}

// printRecheck prints one line per run, and the environment differences of
// a run that does not reproduce.
func printRecheck(w io.Writer, rc *sweep.Recheck) {
	switch {
	case rc.Match && rc.Status == sweep.StatusFailed:
		fmt.Fprintf(w, "  %s  same: failed again, as recorded\n", rc.RunID)
	case rc.Match:
		fmt.Fprintf(w, "  %s  same: %d points, every coordinate identical\n", rc.RunID, rc.Points)
	case rc.Problem != "":
		fmt.Fprintf(w, "  %s  DIFFERENT: %s\n", rc.RunID, rc.Problem)
	default:
		fmt.Fprintf(w, "  %s  DIFFERENT: %d of %d coordinates; largest deviation %.3g (%d ulp) at point %q (input row %d), %s\n",
			rc.RunID, rc.Differ, 2*rc.Points, rc.MaxDeviation, rc.MaxULP, rc.ID, rc.Point+1, rc.Axis)
	}
	if rc.Match {
		return
	}
	if rc.Stored == nil {
		fmt.Fprintf(w, "      the run's record predates environment recording\n")
	} else if d := rc.Stored.Differences(rc.Now); len(d) > 0 {
		fmt.Fprintf(w, "      recorded in another environment: %s\n", strings.Join(d, ", "))
	} else {
		fmt.Fprintf(w, "      same recorded environment (plumb %s, %s, %s/%s, kernels %s)\n",
			rc.Stored.Version, rc.Stored.Go, rc.Stored.OS, rc.Stored.Arch, rc.Stored.Kernels)
	}
}
