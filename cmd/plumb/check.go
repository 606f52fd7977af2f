package main

import (
	"fmt"
	"strings"

	"github.com/urfave/cli/v2"

	"plumb/cmd/plumb/internal/gate"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/internal/atomicfile"
)

func init() {
	def := gate.Thresholds{}.Defaults()
	register(&cli.Command{
		Name:      "check",
		Usage:     "compare a study with a baseline study (regression gate for nightly runs)",
		ArgsUsage: "--baseline BASE_STUDY STUDY_DIR",
		Description: "Matches settings by their parameters and points by id, aligns each current consensus\n" +
			"layout onto the baseline's (Procrustes), and reports per setting the disparity and kNN\n" +
			"Jaccard to the baseline, the change in each headline score and the points that moved most.\n\n" +
			"Exit status: 0 every setting within tolerance, 1 regression found, 2 usage or input\n" +
			"error, or studies that cannot be compared (different input data, no common settings or\n" +
			"points; the reason is printed).",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "baseline", Aliases: []string{"b"}, Usage: "baseline study directory"},
			&cli.BoolFlag{Name: "json", Usage: "print the result as JSON on stdout"},
			&cli.StringFlag{Name: "junit", Usage: "also write a JUnit XML report to `FILE`"},
			&cli.BoolFlag{Name: "allow-other-data", Usage: "compare even if the input fingerprints differ (points matched by id)"},
			&cli.StringFlag{Name: "ignore", Usage: "comma list of parameters left out when matching settings (e.g. iters)"},
			&cli.Float64Flag{Name: "max-disparity", Value: def.MaxDisparity, Usage: "largest disparity to baseline (widened to --seed-factor × the baseline's seed-to-seed disparity)"},
			&cli.Float64Flag{Name: "min-jaccard", Value: def.MinJaccard, Usage: "smallest kNN Jaccard to baseline (lowered to the baseline's seed-to-seed Jaccard − 0.1)"},
			&cli.Float64Flag{Name: "seed-factor", Value: def.SeedFactor, Usage: "multiple of the baseline's own seed-to-seed disparity always tolerated"},
			&cli.Float64Flag{Name: "max-trust-drop", Value: def.MaxTrustDrop, Usage: "largest allowed fall in median trustworthiness"},
			&cli.Float64Flag{Name: "max-stability-loss", Value: def.MaxStabilityLoss, Usage: "largest allowed rise in seed-to-seed disparity / fall in seed-to-seed Jaccard"},
			&cli.Float64Flag{Name: "max-kl-rise", Value: def.MaxKLRise, Usage: "largest allowed relative rise in median final KL (0.05 = 5%)"},
			&cli.IntFlag{Name: "k", Usage: "neighbours for the Jaccard to baseline (default: the study's k)"},
			&cli.IntFlag{Name: "moved", Value: def.Moved, Usage: "how many of the points that moved most to list"},
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
	th := gate.Thresholds{
		MaxDisparity: c.Float64("max-disparity"), MinJaccard: c.Float64("min-jaccard"), SeedFactor: c.Float64("seed-factor"),
		MaxTrustDrop: c.Float64("max-trust-drop"), MaxStabilityLoss: c.Float64("max-stability-loss"), MaxKLRise: c.Float64("max-kl-rise"),
		K: c.Int("k"), Moved: c.Int("moved"),
	}
	for name, v := range map[string]float64{"max-disparity": th.MaxDisparity, "min-jaccard": th.MinJaccard, "seed-factor": th.SeedFactor,
		"max-trust-drop": th.MaxTrustDrop, "max-stability-loss": th.MaxStabilityLoss, "max-kl-rise": th.MaxKLRise} {
		if !(v > 0) {
			return checkUsage("--%s %g: must be positive", name, v)
		}
	}
	if th.K < 0 || th.Moved < 0 {
		return checkUsage("--k and --moved must not be negative")
	}
	opt := gate.Options{Thresholds: th, AllowOtherData: c.Bool("allow-other-data")}
	if s := strings.TrimSpace(c.String("ignore")); s != "" {
		for _, p := range strings.Split(s, ",") {
			if p = strings.TrimSpace(p); p != "" {
				opt.Ignore = append(opt.Ignore, p)
			}
		}
	}
	var bs, cs *studyview.View
	err := readStudy(c.App.ErrWriter, base, func() (err error) { bs, err = studyview.Open(base); return err })
	if err != nil {
		return &exitError{code: 2, err: fmt.Errorf("baseline: %w", err)}
	}
	err = readStudy(c.App.ErrWriter, cur, func() (err error) { cs, err = studyview.Open(cur); return err })
	if err != nil {
		return &exitError{code: 2, err: fmt.Errorf("current study: %w", err)}
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
	case gate.Incomparable:
		return &exitError{code: 2, err: fmt.Errorf("cannot compare: %s", res.Reason)}
	case gate.Regression:
		return &exitError{code: 1, err: fmt.Errorf("regression: %s", res.Reason)}
	}
	return nil
}
