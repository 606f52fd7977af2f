package report

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// syntheticStudy builds a seeded, made-up study for the report tests:
// three perplexities × two learning rates, three seeds, 120 points in three
// labelled groups. Settings with larger perplexity get tighter layouts
// (smaller spread) so the rule has something to choose between. This is
// synthetic data for property tests, not a claim about t-SNE.
func syntheticStudy() *Study {
	r := rand.New(rand.NewPCG(11, 12))
	n := 120
	st := &Study{
		Dir: "synthetic", Tool: "plumb", Version: "test", Created: "2026-01-01T00:00:00Z", PlanHash: "abc123",
		Input: Input{Path: "synthetic.csv", Fingerprint: "0123456789abcdef0123", N: n, D: 5, LabelColumn: "group", Preprocessing: "standardised"},
		Grid: []Param{
			{"perplexity", []string{"5", "15", "30"}},
			{"learning_rate", []string{"auto", "200"}},
			{"exaggeration", []string{"12"}},
			{"iters", []string{"500"}},
		},
		Seeds: []uint64{1, 2, 3}, Gradient: "the exact O(n²) sum", K: 10,
	}
	centres := [][2]float64{{-10, 0}, {10, 2}, {0, 12}}
	base := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		g := i % 3
		st.IDs = append(st.IDs, fmt.Sprintf("p%03d", i))
		st.Labels = append(st.Labels, []string{"alpha", "beta", "gamma"}[g])
		base[2*i] = centres[g][0] + r.NormFloat64()*2
		base[2*i+1] = centres[g][1] + r.NormFloat64()*2
	}
	for pi, perp := range []string{"5", "15", "30"} {
		for li, lr := range []string{"auto", "200"} {
			id := fmt.Sprintf("s-%s-%s", perp, lr)
			noise := 1.5 / float64(pi+1)
			s := Setting{ID: id, RunsDone: 3, Runs: 3,
				Params: []Field{{"perplexity", perp}, {"learning_rate", lr}, {"exaggeration", "12"}, {"iters", "500"}}}
			// A rotated copy of the base layout plus noise.
			th := float64(pi*2+li) * 0.7
			cs, sn := math.Cos(th), math.Sin(th)
			s.Consensus = make([]float64, 2*n)
			s.Spread = make([]float64, n)
			s.Unstable = make([]bool, n)
			unst := 0
			for i := 0; i < n; i++ {
				x, y := base[2*i]+noise*r.NormFloat64(), base[2*i+1]+noise*r.NormFloat64()
				s.Consensus[2*i], s.Consensus[2*i+1] = cs*x-sn*y, sn*x+cs*y
				s.Spread[i] = noise * math.Abs(r.NormFloat64())
				if s.Spread[i] > 1.5 {
					s.Unstable[i] = true
					unst++
				}
			}
			s.UnstableShare = float64(unst) / float64(n)
			s.Trust = Summary{0.90 + 0.01*float64(pi) + 0.002*float64(li), 0.003}
			s.Continuity = Summary{0.91, 0.004}
			s.KNNRecall = Summary{0.4, 0.02}
			s.Spearman = Summary{0.6, 0.03}
			s.LabelAccuracy = Summary{0.95, 0.01}
			s.LabelPurity = Summary{0.9, 0.01}
			s.PairSpearman = Summary{0.7, 0.05}
			s.Disparity = Summary{0.05 * noise, 0.01 * noise}
			s.Jaccard = Summary{0.8 - 0.1*noise, 0.02}
			s.KL = Summary{1.2 - 0.1*float64(pi) + 0.01*float64(li), 0.02}
			st.Settings = append(st.Settings, s)
			for k, seed := range st.Seeds {
				run := Run{ID: fmt.Sprintf("%s-%d", id, seed), SettingID: id, Seed: seed, Status: "done",
					KL: s.KL.Median + 0.01*float64(k), Iters: 500, Seconds: 0.5,
					Trust: s.Trust.Median + 0.001*float64(k), Continuity: 0.91, KNNRecall: 0.4, Spearman: 0.6, LabelAccuracy: 0.95}
				for it := 0; it <= 500; it += 50 {
					kl := 5 * math.Exp(-float64(it)/100)
					if it < 250 {
						kl += 3
					}
					run.Trace = append(run.Trace, TracePoint{it, kl + run.KL})
				}
				st.Runs = append(st.Runs, run)
			}
			for a := 0; a < 3; a++ {
				for b := a + 1; b < 3; b++ {
					st.Pairs = append(st.Pairs, Pair{SettingID: id, RunA: fmt.Sprint(a), RunB: fmt.Sprint(b),
						Disparity: s.Disparity.Median * (0.8 + 0.2*float64(a+b)), Jaccard: s.Jaccard.Median - 0.01*float64(a+b)})
				}
			}
		}
	}
	// One failed run in the last setting.
	st.Runs = append(st.Runs, Run{ID: "s-30-200-4", SettingID: "s-30-200", Seed: 4, Status: "failed", Error: "tsne: diverged at iteration 17", KL: math.NaN()})
	return st
}
