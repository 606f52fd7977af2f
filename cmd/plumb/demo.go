package main

import (
	"fmt"
	"path/filepath"
	"time"

	"github.com/urfave/cli/v2"

	"plumb/cmd/plumb/internal/demo"
	"plumb/cmd/plumb/internal/report"
	"plumb/internal/dataset"
	"plumb/internal/words"
	"plumb/sweep"
)

// The demo's sweep: three perplexities × three seeds from random starts (so
// that seeds matter; with PCA initialisation every seed gives the same map) on the invented
// field-station data (internal/demo), small enough to finish in seconds.
var demoSpec = sweep.Spec{Perplexity: "5,20,50", Init: "random", Seeds: "1-3"}

func init() {
	register(&cli.Command{
		Name:  "demo",
		Usage: "make an invented dataset, sweep it, score it and write the report",
		Description: "Writes DIR/" + demo.FileName + " (an invented scenario: daily records from imaginary\n" +
			"field stations at five kinds of site plus faulty stations; 400 records × 20 channels),\n" +
			"runs a sweep of perplexity 5, 20, 50 × seeds 1-3 (random initialisation) into DIR/study, scores it and writes\n" +
			"DIR/study/report/index.html. Running it again reuses the finished runs.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Aliases: []string{"o"}, Value: "plumb-demo", Usage: "output directory"},
			&cli.BoolFlag{Name: "quiet", Aliases: []string{"q"}, Usage: "print only where the results are"},
		},
		Action: demoAction,
	})
}

func demoAction(c *cli.Context) error {
	t0 := time.Now()
	out := c.String("out")
	quiet := c.Bool("quiet")
	say := func(format string, a ...any) {
		if !quiet {
			fmt.Fprintf(c.App.ErrWriter, "plumb demo: "+format+"\n", a...)
		}
	}
	data := demo.Generate(1)
	csvPath, err := demo.WriteCSV(out, data)
	if err != nil {
		return err
	}
	say("wrote %s (%d records × %d channels, labels in column site)", csvPath, data.N, data.D)
	dopt := dataset.Options{IDColumn: "id", LabelColumn: "site", Standardize: true}
	ds, err := dataset.Read(csvPath, dopt)
	if err != nil {
		return err
	}
	plan, err := demoSpec.Plan()
	if err != nil {
		return err
	}
	studyDir := filepath.Join(out, "study")
	opt := sweep.Options{Dir: studyDir, Input: sweep.NewInput(csvPath, dopt, ds), Version: version}
	if !quiet {
		opt.Events = func(e sweep.Event) {
			switch e.Kind {
			case sweep.EventRunDone, sweep.EventRunFailed:
				fmt.Fprintf(c.App.ErrWriter, "plumb demo: run %d/%d finished (%d failed) after %s\n",
					e.Done+e.Failed, e.Todo, e.Failed, e.Elapsed.Round(time.Millisecond))
			}
		}
	}
	ctx, stop := interruptContext()
	defer stop()
	say("sweeping %s × %s into %s", words.Count(plan.NumSettings(), "setting"), words.Count(len(plan.Seeds), "seed"), studyDir)
	sum, err := sweep.Execute(ctx, ds, plan, opt)
	if err != nil {
		return err
	}
	if sum.Canceled {
		return interrupted("run plumb demo again to resume", "the finished runs are kept")
	}
	say("scoring")
	if _, err := sweep.Score(ctx, studyDir, ds, sweep.ScoreOptions{}); err != nil {
		if ctx.Err() != nil {
			return interrupted("run plumb demo again to resume", "while scoring; the runs are kept")
		}
		return err
	}
	res, err := writeReport(c.App.ErrWriter, studyDir, filepath.Join(studyDir, "report"), report.Rule{})
	if err != nil {
		return err
	}
	w := c.App.Writer
	fmt.Fprintf(w, "Done in %s.\n\n", time.Since(t0).Round(100*time.Millisecond))
	fmt.Fprintf(w, "Look at:\n")
	fmt.Fprintf(w, "  %s   the report (open it in a browser; works offline)\n", res.Index)
	fmt.Fprintf(w, "  %s   the methods paragraph, ready to paste\n", filepath.Join(res.Dir, "methods.md"))
	fmt.Fprintf(w, "  %s   the study: Parquet tables for your own analysis\n", studyDir)
	if res.Recommendation != nil {
		fmt.Fprintf(w, "\nRecommended setting: %s\n", res.Chosen)
	}
	fmt.Fprintf(w, "\nTry next:\n")
	fmt.Fprintf(w, "  plumb show %s\n", studyDir)
	fmt.Fprintf(w, "  plumb sweep --input %s --id-column id --label-column site --standardize \\\n", csvPath)
	fmt.Fprintf(w, "      --perplexity 5,20,50 --learning-rate auto,200 --seeds 5 --out %s\n", filepath.Join(out, "bigger"))
	fmt.Fprintf(w, "  plumb report %s\n", filepath.Join(out, "bigger"))
	fmt.Fprintf(w, "  plumb check --baseline %s %s\n", studyDir, studyDir)
	return nil
}
