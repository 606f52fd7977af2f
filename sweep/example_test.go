package sweep_test

import (
	"context"
	"fmt"
	"os"

	"plumb/internal/dataset"
	"plumb/sweep"
)

func ExampleParseSeeds() {
	a, _ := sweep.ParseSeeds("4")
	b, _ := sweep.ParseSeeds("1-3,9")
	fmt.Println(a, b)
	// Output: [1 2 3 4] [1 2 3 9]
}

func ExampleSpec_Plan() {
	p, err := sweep.Spec{Perplexity: "30,5", LearningRate: "auto,200", Seeds: "2"}.Plan()
	if err != nil {
		fmt.Println(err)
		return
	}
	runs, _ := p.Runs()
	fmt.Println(p.NumSettings(), "settings,", len(runs), "runs")
	fmt.Println(runs[0].ID, runs[0].Setting.Perplexity, runs[0].Setting.LearningRateSpec())
	_, err = sweep.Spec{Perplexity: "0"}.Plan()
	fmt.Println(err)
	// Output:
	// 4 settings, 8 runs
	// 24c6ee6df0-1 5 auto
	// --perplexity "0": must be positive
}

func ExampleShard_Select() {
	p, _ := sweep.Spec{Perplexity: "5,10", Seeds: "3"}.Plan()
	runs, _ := p.Runs()
	for i := 0; i < 3; i++ {
		fmt.Println(len(sweep.Shard{Index: i, Count: 3}.Select(runs)))
	}
	// Output:
	// 2
	// 2
	// 2
}

func ExampleExecute() {
	opt := dataset.Options{IDColumn: "id", LabelColumn: "species"}
	ds, err := dataset.Read("../testdata/iris.csv", opt)
	if err != nil {
		fmt.Println(err)
		return
	}
	plan, _ := sweep.Spec{Perplexity: "5,10", Seeds: "2", Iters: "50", ExaggerationIters: "20", Init: "random"}.Plan()
	dir, _ := os.MkdirTemp("", "study")
	defer os.RemoveAll(dir)
	sum, err := sweep.Execute(context.Background(), ds, plan, sweep.Options{Dir: dir, Input: sweep.NewInput("iris.csv", opt, ds)})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(sum.Stats.Done, "runs;", sum.Stats.NeighborBuilds, "neighbour search; affinities", sum.Stats.AffinityBuilds)
	st, _ := sweep.Open(dir)
	fmt.Println(len(st.Rows), "rows in runs.parquet")
	// Output:
	// 4 runs; 1 neighbour search; affinities map[5:1 10:1]
	// 4 rows in runs.parquet
}
