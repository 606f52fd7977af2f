package recommend_test

import (
	"fmt"
	"math"

	"plumb/cmd/plumb/internal/recommend"
	"plumb/stability"
)

// m is a median with no IQR.
func m(median float64) stability.MedianIQR { return stability.MedianIQR{Median: median} }

// A pca setting whose seeds are identical, and two random-start settings
// at perplexities 30 and 300 whose KL divergences cannot be compared.
func ExampleRecommend() {
	table := []recommend.Setting{
		{ID: "pca-30", Perplexity: 30, Runs: 5, Varied: "", RNXAUC: m(0.551), Disparity: m(0), Jaccard: m(1), Arrangements: 1, KL: m(1.10)},
		{ID: "rnd-30", Perplexity: 30, Runs: 5, Varied: "seed", RNXAUC: m(0.548), Disparity: m(0.03), Jaccard: m(0.70), Arrangements: 1, KL: m(1.12)},
		{ID: "rnd-300", Perplexity: 300, Runs: 5, Varied: "seed", RNXAUC: m(0.512), Disparity: m(0.01), Jaccard: m(0.80), Arrangements: 1, KL: m(0.60)},
	}
	rec, err := recommend.Recommend(table, recommend.Rule{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("chosen:", rec.Chosen.ID, "runner-up:", rec.RunnerUp.ID)
	fmt.Println("decided by:", rec.DecidedBy)
	fmt.Println("ranking:", rec.Ranking)
	// Output:
	// chosen: rnd-30 runner-up: pca-30
	// decided by: stability measured
	// ranking: [rnd-30 pca-30 rnd-300]
}

func ExampleRule_Words() {
	w := recommend.Rule{}.Words()
	fmt.Println(w[:89])
	// Output:
	// Every setting with at least one finished run and a defined faithfulness score takes part.
}

func ExampleSetting_Measured() {
	pca := recommend.Setting{ID: "pca", Runs: 5, Varied: "", Disparity: m(0), Jaccard: m(1), Arrangements: 1}
	rnd := recommend.Setting{ID: "rnd", Runs: 5, Varied: "seed", Disparity: m(0.04), Jaccard: m(0.7), Arrangements: 1}
	one := recommend.Setting{ID: "one", Runs: 1, Varied: "seed", Disparity: m(math.NaN()), Jaccard: m(math.NaN())}
	fmt.Println(pca.Measured(), rnd.Measured(), one.Measured())
	// Output:
	// false true false
}
