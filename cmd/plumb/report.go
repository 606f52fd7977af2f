package main

import (
	"fmt"
	"math"
	"path/filepath"

	"github.com/urfave/cli/v2"

	"plumb/cmd/plumb/internal/report"
)

func init() {
	register(&cli.Command{
		Name:      "report",
		Usage:     "write an HTML report with figures, a methods paragraph and a recommendation",
		ArgsUsage: "STUDY_DIR",
		Description: "Reads a scored study and writes DIR/index.html (self-contained, works offline),\n" +
			"DIR/figures/*.svg and *.png, and DIR/methods.md. DIR defaults to STUDY_DIR/report.\n\n" +
			"The recommendation rule, in short: keep the settings whose median R_NX AUC is within\n" +
			"--auc-tolerance of the best; compare stability only where it was measured and only under\n" +
			"the same perturbation: fewest distinct arrangements, then median disparity within\n" +
			"--disparity-tolerance of the lowest, then median kNN Jaccard within --jaccard-tolerance of\n" +
			"the highest; KL only within one perplexity (--kl-tolerance, a fraction); then the highest\n" +
			"R_NX AUC. The page and methods.md spell it out with references.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Aliases: []string{"o"}, Usage: "report directory (default: STUDY_DIR/report)"},
			&cli.Float64Flag{Name: "auc-tolerance", Value: 0.01, Usage: "median R_NX AUC within this of the best counts as equally faithful"},
			&cli.Float64Flag{Name: "disparity-tolerance", Value: 0.01, Usage: "disparity within this of the lowest counts as equally stable"},
			&cli.Float64Flag{Name: "jaccard-tolerance", Value: 0.02, Usage: "kNN Jaccard within this of the highest counts as equally stable"},
			&cli.Float64Flag{Name: "kl-tolerance", Value: 0.01, Usage: "at one perplexity, median KL within this fraction of the lowest counts as equal"},
		},
		Action: reportAction,
	})
}

func reportAction(c *cli.Context) error {
	if c.NArg() != 1 {
		return fmt.Errorf("report: want one STUDY_DIR argument, got %d", c.NArg())
	}
	dir := c.Args().First()
	rule := report.Rule{
		AUCTolerance:       c.Float64("auc-tolerance"),
		DisparityTolerance: c.Float64("disparity-tolerance"),
		JaccardTolerance:   c.Float64("jaccard-tolerance"),
		KLTolerance:        c.Float64("kl-tolerance"),
	}
	for name, v := range map[string]float64{"auc-tolerance": rule.AUCTolerance, "disparity-tolerance": rule.DisparityTolerance,
		"jaccard-tolerance": rule.JaccardTolerance, "kl-tolerance": rule.KLTolerance} {
		if !(v > 0) || math.IsInf(v, 0) {
			return fmt.Errorf("--%s %g: must be positive", name, v)
		}
	}
	out := c.String("out")
	if out == "" {
		out = filepath.Join(dir, "report")
	}
	res, err := writeReport(c.App.ErrWriter, dir, out, rule)
	if err != nil {
		return err
	}
	w := c.App.Writer
	fmt.Fprintf(w, "report: %s\n", res.Index)
	fmt.Fprintf(w, "methods: %s\n", filepath.Join(res.Dir, "methods.md"))
	if res.Recommendation != nil {
		rec := res.Recommendation
		fmt.Fprintf(w, "recommended: %s\n", res.Chosen)
		if rec.RunnerUp != nil {
			fmt.Fprintf(w, "runner-up: %s, separated at step %s (margin %s)\n", rec.RunnerUp.ID, report.StepWords(rec.DecidedBy), report.MarginWords(rec.DecidedBy, rec.Margin))
		}
		if !rec.StabilityMeasured {
			fmt.Fprintf(w, "stability of the recommended setting: not measured (the pick rests on faithfulness)\n")
		}
	} else {
		fmt.Fprintf(w, "recommended: none (no setting has a finished, scored run)\n")
	}
	return nil
}
