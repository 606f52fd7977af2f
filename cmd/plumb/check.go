package main

import (
	"fmt"
	"strings"

	"github.com/urfave/cli/v2"

	"plumb/cmd/plumb/internal/gate"
	"plumb/internal/atomicfile"
	"plumb/sweep"
)

func init() {
	def := gate.Options{}.Defaults()
	register(&cli.Command{
		Name:      "check",
		Usage:     "compare a study with a baseline study (regression gate for nightly runs)",
		ArgsUsage: "--baseline BASE_STUDY STUDY_DIR",
		Description: "Matches settings by their parameters and points by id, and asks of each setting whether the\n" +
			"current runs still look like runs of the baseline: same code, same data, other seeds.\n\n" +
			"The test: every pair of runs (within the baseline, within the current study, across the two)\n" +
			"is scored by kNN Jaccard overlap and Procrustes disparity. The shift is how much less alike\n" +
			"runs across the studies are than runs within one; its reference is the permutation\n" +
			"distribution over every relabelling of the runs into the two studies (exact under the null\n" +
			"hypothesis that the runs are exchangeable). A setting fails when p ≤ --alpha divided by the\n" +
			"number of tests that can reach it (Bonferroni with Tarone's count) and the shift is at least\n" +
			"--min-jaccard-shift or --min-disparity-shift. The chance that same code, same data and other\n" +
			"seeds fail the layout tests is therefore at most --alpha. Few runs cannot reach a small\n" +
			"p-value (3 and 3 runs: p ≥ 0.1); such settings are 'untested' unless a run with the same\n" +
			"seed (or a PCA start) in both studies must reproduce the baseline exactly, which is checked\n" +
			"whenever the data and every parameter are the same. Median trustworthiness may fall by\n" +
			"--max-trust-drop and median final KL rise by --max-kl-rise (relative). The studies must\n" +
			"have been scored with the same k and made with the same plan apart from the grid and the\n" +
			"seeds (neighbour search, theta and any field that changes what a run sees), else they are\n" +
			"not compared.\n\n" +
			"Exit status:\n" +
			"  0  pass: every setting within run-to-run variation\n" +
			"  1  regression: a setting changed, failed or is missing (named in the output)\n" +
			"  2  usage error, unreadable or unscored study, or studies that cannot be compared as made\n" +
			"     (another plan or k, no setting or point in common)\n" +
			"  3  the input data changed (fingerprints differ); --allow-other-data compares by point id\n" +
			"  4  inconclusive: nothing failed, but some setting has too few runs to test (named);\n" +
			"     --allow-untested turns this into 0 with a note",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "baseline", Aliases: []string{"b"}, Usage: "baseline study directory"},
			&cli.BoolFlag{Name: "json", Usage: "print the result as JSON on stdout"},
			&cli.StringFlag{Name: "junit", Usage: "also write a JUnit XML report to `FILE`"},
			&cli.BoolFlag{Name: "allow-other-data", Usage: "compare even if the input data changed (points matched by id)"},
			&cli.BoolFlag{Name: "allow-untested", Usage: "pass settings that have too few runs to test (exit 0 with a note instead of 4)"},
			&cli.StringFlag{Name: "ignore", Usage: "comma list of parameters left out when matching settings and plans (e.g. iters)"},
			&cli.Float64Flag{Name: "alpha", Value: def.Alpha, Usage: "false-alarm rate of the layout tests over the whole check"},
			&cli.Float64Flag{Name: "min-jaccard-shift", Value: def.MinJaccardShift, Usage: "smallest fall in kNN Jaccard (across vs within) that counts as a change"},
			&cli.Float64Flag{Name: "min-disparity-shift", Value: def.MinDisparityShift, Usage: "smallest rise in Procrustes disparity (across vs within) that counts as a change"},
			&cli.Float64Flag{Name: "max-trust-drop", Value: def.MaxTrustDrop, Usage: "largest allowed fall in median trustworthiness"},
			&cli.Float64Flag{Name: "max-kl-rise", Value: def.MaxKLRise, Usage: "largest allowed relative rise in median final KL (0.05 = 5%)"},
			&cli.Float64Flag{Name: "exact-tolerance", Value: def.ExactTolerance, Usage: "largest RMS difference (over the layout's RMS radius) between runs that must be identical"},
			&cli.IntFlag{Name: "k", Usage: "neighbours for the kNN Jaccard (default: the studies' k)"},
			&cli.IntFlag{Name: "moved", Value: def.Moved, Usage: "how many of the points whose neighbourhoods changed most to list"},
		},
		OnUsageError: func(c *cli.Context, err error, _ bool) error { return &exitError{code: 2, err: err} },
		Action:       checkAction,
	})
}

func checkUsage(format string, a ...any) error {
	return &exitError{code: 2, err: fmt.Errorf(format, a...)}
}

func checkAction(c *cli.Context) error {
	base := c.String("baseline")
	if base == "" {
		return checkUsage("check: --baseline BASE_STUDY is required")
	}
	if c.NArg() != 1 {
		return checkUsage("check: want one STUDY_DIR argument after the flags, got %d", c.NArg())
	}
	cur := c.Args().First()
	opt := gate.Options{
		Alpha: c.Float64("alpha"), MinJaccardShift: c.Float64("min-jaccard-shift"), MinDisparityShift: c.Float64("min-disparity-shift"),
		MaxTrustDrop: c.Float64("max-trust-drop"), MaxKLRise: c.Float64("max-kl-rise"), ExactTolerance: c.Float64("exact-tolerance"),
		K: c.Int("k"), Moved: c.Int("moved"), AllowOtherData: c.Bool("allow-other-data"), AllowUntested: c.Bool("allow-untested"),
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"alpha", opt.Alpha}, {"min-jaccard-shift", opt.MinJaccardShift}, {"min-disparity-shift", opt.MinDisparityShift},
		{"max-trust-drop", opt.MaxTrustDrop}, {"max-kl-rise", opt.MaxKLRise}, {"exact-tolerance", opt.ExactTolerance}} {
		if !(f.v > 0) {
			return checkUsage("--%s %g: must be positive", f.name, f.v)
		}
	}
	if opt.Alpha >= 1 {
		return checkUsage("--alpha %g: must be below 1", opt.Alpha)
	}
	if opt.K < 0 || opt.Moved < 0 {
		return checkUsage("--k and --moved must not be negative")
	}
	if s := strings.TrimSpace(c.String("ignore")); s != "" {
		for _, p := range strings.Split(s, ",") {
			if p = strings.TrimSpace(p); p != "" {
				opt.Ignore = append(opt.Ignore, p)
			}
		}
	}
	open := func(role, dir string) (*gate.Study, error) {
		var st *gate.Study
		err := readStudy(c.App.ErrWriter, dir, func() error {
			s, err := sweep.Open(dir)
			if err != nil {
				return err
			}
			st, err = gate.Load(s)
			return err
		})
		if err != nil {
			return nil, &exitError{code: 2, err: fmt.Errorf("%s: %w", role, err)}
		}
		return st, nil
	}
	bs, err := open("baseline", base)
	if err != nil {
		return err
	}
	cs, err := open("current study", cur)
	if err != nil {
		return err
	}
	res, err := gate.Compare(bs, cs, opt)
	if err != nil {
		return &exitError{code: 2, err: err}
	}
	if c.Bool("json") {
		b, err := res.JSON()
		if err != nil {
			return &exitError{code: 2, err: err}
		}
		c.App.Writer.Write(b)
	} else {
		fmt.Fprint(c.App.Writer, res.Text())
	}
	if f := c.String("junit"); f != "" {
		b, err := res.JUnit()
		if err == nil {
			err = atomicfile.WriteFile(f, b)
		}
		if err != nil {
			return &exitError{code: 2, err: fmt.Errorf("--junit %s: %w", f, err)}
		}
	}
	switch res.Outcome {
	case gate.DataChanged:
		return &exitError{code: 3, err: fmt.Errorf("%s", res.Reason)}
	case gate.Incomparable:
		return &exitError{code: 2, err: fmt.Errorf("cannot compare: %s", res.Reason)}
	case gate.Untested:
		return &exitError{code: 4, err: fmt.Errorf("inconclusive: %s", res.Reason)}
	case gate.Regression:
		return &exitError{code: 1, err: fmt.Errorf("regression: %s", res.Reason)}
	}
	return nil
}
