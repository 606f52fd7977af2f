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
			"The recommendation rule, in short: among the settings whose median trustworthiness is\n" +
			"within --trust-tolerance of the best, keep those whose median seed-to-seed disparity is\n" +
			"within --disparity-tolerance of the lowest, then those whose median kNN Jaccard is within\n" +
			"--jaccard-tolerance of the highest, and pick the lowest median KL. The page spells it out.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Aliases: []string{"o"}, Usage: "report directory (default: STUDY_DIR/report)"},
			&cli.Float64Flag{Name: "trust-tolerance", Value: 0.01, Usage: "trustworthiness within this of the best counts as equally faithful"},
			&cli.Float64Flag{Name: "disparity-tolerance", Value: 0.01, Usage: "disparity within this of the lowest counts as equally stable"},
			&cli.Float64Flag{Name: "jaccard-tolerance", Value: 0.02, Usage: "kNN Jaccard within this of the highest counts as equally stable"},
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
		TrustTolerance:     c.Float64("trust-tolerance"),
		DisparityTolerance: c.Float64("disparity-tolerance"),
		JaccardTolerance:   c.Float64("jaccard-tolerance"),
	}
	for name, v := range map[string]float64{"trust-tolerance": rule.TrustTolerance, "disparity-tolerance": rule.DisparityTolerance, "jaccard-tolerance": rule.JaccardTolerance} {
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
		fmt.Fprintf(w, "recommended: %s\n", res.Chosen)
	} else {
		fmt.Fprintf(w, "recommended: none (no setting has two finished, scored runs)\n")
	}
	return nil
}
