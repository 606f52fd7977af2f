package report

import (
	"fmt"
	"math"
	"math/rand/v2"

	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

// syntheticStudy builds a seeded, made-up study for the report tests:
// three perplexities × two learning rates, three seeds, 120 points in three
// labelled groups. Settings with larger perplexity get tighter layouts
// (smaller spread) so the rule has something to choose between. This is
// synthetic data for property tests, not a claim about t-SNE.
func syntheticStudy() *studyview.View {
	r := rand.New(rand.NewPCG(11, 12))
	n := 120
	st := &studyview.View{
		Dir: "synthetic", Tool: "plumb", Version: "test", Created: "2026-01-01T00:00:00Z", PlanHash: "abc123",
		Input: studyview.Input{Path: "synthetic.csv", Fingerprint: "0123456789abcdef0123", N: n, D: 5, LabelColumn: "group", Preprocessing: "standardised"},
		Grid: []studyview.Param{
			{Name: "perplexity", Values: []string{"5", "15", "30"}},
			{Name: "learning_rate", Values: []string{"auto", "200"}},
			{Name: "exaggeration", Values: []string{"12"}},
			{Name: "iters", Values: []string{"500"}},
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
			s := studyview.Setting{ID: id, RunsDone: 3, Runs: 3,
				Params: []studyview.Field{{Name: "perplexity", Value: perp}, {Name: "learning_rate", Value: lr}, {Name: "exaggeration", Value: "12"}, {Name: "iters", Value: "500"}}}
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
			s.Trustworthiness = stability.MedianIQR{Median: 0.90 + 0.01*float64(pi) + 0.002*float64(li), IQR: 0.003}
			s.Continuity = stability.MedianIQR{Median: 0.91, IQR: 0.004}
			s.KNNRecall = stability.MedianIQR{Median: 0.4, IQR: 0.02}
			s.DistanceSpearman = stability.MedianIQR{Median: 0.6, IQR: 0.03}
			s.LabelAccuracy = stability.MedianIQR{Median: 0.95, IQR: 0.01}
			s.LabelPurity = stability.MedianIQR{Median: 0.9, IQR: 0.01}
			s.PairSpearman = stability.MedianIQR{Median: 0.7, IQR: 0.05}
			s.Disparity = stability.MedianIQR{Median: 0.05 * noise, IQR: 0.01 * noise}
			s.Jaccard = stability.MedianIQR{Median: 0.8 - 0.1*noise, IQR: 0.02}
			s.KL = stability.MedianIQR{Median: 1.2 - 0.1*float64(pi) + 0.03*float64(li), IQR: 0.02}
			// Readings of the rule and the clusters (invented): R_NX AUC
			// rising with perplexity, one arrangement, the first run as medoid.
			s.RNXAUC = stability.MedianIQR{Median: 0.40 + 0.02*float64(pi), IQR: 0.002}
			s.Varied, s.Arrangements, s.ArrangementSizes, s.MedoidRun, s.MapClusters = "seed", 1, "3", id+"-1", 3
			s.ConsensusNote = "the largest disparity between two runs exceeds 0.02"
			st.Settings = append(st.Settings, s)
			for k, seed := range st.Seeds {
				run := studyview.Run{ID: fmt.Sprintf("%s-%d", id, seed), SettingID: id, Seed: seed, Status: "done",
					KL: s.KL.Median + 0.01*float64(k), Iters: 500, Seconds: 0.5,
					Trustworthiness: s.Trustworthiness.Median + 0.001*float64(k), Continuity: 0.91, KNNRecall: 0.4, DistanceSpearman: 0.6, LabelAccuracy: 0.95}
				for it := 0; it <= 500; it += 50 {
					kl := 5 * math.Exp(-float64(it)/100)
					if it < 250 {
						kl += 3
					}
					run.Trace = append(run.Trace, studyview.TracePoint{Iter: it, KL: kl + run.KL})
				}
				st.Runs = append(st.Runs, run)
			}
			for a := 0; a < 3; a++ {
				for b := a + 1; b < 3; b++ {
					st.Pairs = append(st.Pairs, studyview.Pair{SettingID: id, RunA: fmt.Sprint(a), RunB: fmt.Sprint(b),
						Disparity: s.Disparity.Median * (0.8 + 0.2*float64(a+b)), Jaccard: s.Jaccard.Median - 0.01*float64(a+b)})
				}
			}
		}
	}
	// One failed run in the last setting.
	st.Runs = append(st.Runs, studyview.Run{ID: "s-30-200-4", SettingID: "s-30-200", Seed: 4, Status: "failed", Error: "tsne: diverged at iteration 17", KL: math.NaN()})
	return st
}
