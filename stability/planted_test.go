package stability_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"sync"
	"testing"

	"plumb/align"
	"plumb/internal/par"
	"plumb/internal/planted"
	"plumb/stability"
	"plumb/tsne"
)

// plantedRun is one t-SNE run of a planted dataset: the input rows it
// embedded and its layout.
type plantedRun struct {
	rows   []int32
	layout []float64
}

var embedCache sync.Map // key string → []plantedRun

// embedRuns embeds the data with random initialisation, perplexity 30 and
// seeds 1 … seeds, each run on all rows (frac = 1) or on a seeded random
// subset of round(frac·N) rows (rand.NewPCG(seed, 11)). Runs share two
// goroutines, one each.
func embedRuns(t testing.TB, name string, d *planted.Data, seeds int, frac float64) []plantedRun {
	key := fmt.Sprintf("%s/%d/%g", name, seeds, frac)
	if v, ok := embedCache.Load(key); ok {
		return v.([]plantedRun)
	}
	runs := make([]plantedRun, seeds)
	errs := make([]error, seeds)
	par.Each(seeds, 2, func(s int) {
		seed := uint64(s + 1)
		rows := make([]int32, d.N)
		for i := range rows {
			rows[i] = int32(i)
		}
		if frac < 1 {
			rng := rand.New(rand.NewPCG(seed, 11))
			rng.Shuffle(len(rows), func(a, b int) { rows[a], rows[b] = rows[b], rows[a] })
			rows = rows[:int(frac*float64(d.N)+0.5)]
			slices.Sort(rows)
		}
		x := make([]float64, 0, len(rows)*d.Dim)
		for _, r := range rows {
			x = append(x, d.X[int(r)*d.Dim:(int(r)+1)*d.Dim]...)
		}
		res, err := tsne.Embed(x, len(rows), d.Dim, tsne.EmbedConfig{
			Perplexity: 30, Init: tsne.InitRandom, Seed: seed, Config: tsne.Config{Threads: 1},
		})
		if err != nil {
			errs[s] = err
			return
		}
		runs[s] = plantedRun{rows: rows, layout: res.Y}
	})
	for _, err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	embedCache.Store(key, runs)
	return runs
}

// coreCluster returns, for every row each run embedded, the planted
// cluster that holds most of its truthNeighbors nearest core points in
// that run's map (ties to the cluster of the nearest of them); −2 for rows
// the run did not embed.
const truthNeighbors = 10

func coreCluster(d *planted.Data, run plantedRun) []int {
	out := make([]int, d.N)
	for i := range out {
		out[i] = -2
	}
	var cores []int // positions in run
	for m, r := range run.rows {
		if d.Kind[r] == planted.Core {
			cores = append(cores, m)
		}
	}
	type cand struct {
		d2 float64
		m  int
	}
	y := run.layout
	for m, r := range run.rows {
		if d.Kind[r] == planted.Core {
			out[r] = d.Cluster[r]
			continue
		}
		cs := make([]cand, 0, len(cores))
		for _, c := range cores {
			dx, dy := y[2*c]-y[2*m], y[2*c+1]-y[2*m+1]
			cs = append(cs, cand{dx*dx + dy*dy, c})
		}
		slices.SortFunc(cs, func(a, b cand) int {
			if a.d2 != b.d2 {
				if a.d2 < b.d2 {
					return -1
				}
				return 1
			}
			return a.m - b.m
		})
		votes := map[int]int{}
		best, bestV := -1, 0
		for _, c := range cs[:min(truthNeighbors, len(cs))] {
			cl := d.Cluster[run.rows[c.m]]
			votes[cl]++
			if votes[cl] > bestV {
				best, bestV = cl, votes[cl]
			}
		}
		// The first cluster to reach the top count is the one whose
		// member came nearest among the tied.
		out[r] = best
	}
	return out
}

// truth classes of the rows: core, switcher (a non-core point whose
// nearest core points' planted cluster differs between two runs), other
// (non-core, never switching).
const (
	isCore = iota
	isSwitcher
	isOther
)

func truthOf(d *planted.Data, runs []plantedRun) []int {
	cl := make([][]int, len(runs))
	for s, r := range runs {
		cl[s] = coreCluster(d, r)
	}
	out := make([]int, d.N)
	for i := 0; i < d.N; i++ {
		if d.Kind[i] == planted.Core {
			out[i] = isCore
			continue
		}
		out[i] = isOther
		first := -2
		for s := range runs {
			c := cl[s][i]
			if c == -2 {
				continue
			}
			if first == -2 {
				first = c
			} else if c != first {
				out[i] = isSwitcher
			}
		}
	}
	return out
}

func longTests() bool { return os.Getenv("PLUMB_LONG") == "1" }

// plantedVariant is a planted dataset of the validation.
type plantedVariant struct {
	name string
	cfg  planted.Config
	long bool // only with PLUMB_LONG=1
}

// Every cluster centre of a planted dataset is 10 from every other in 20-D
// (planted.Config's default), where a unit-spread cluster's own points are
// about √40 ≈ 6.3 apart: the clusters are well separated in the input, and
// every instability the runs show comes from t-SNE's random start and from
// subsampling. The data seeds are fixed; they were not picked for the
// results, except the split variant's gap (see splitVariant).
var (
	threeVariant  = plantedVariant{name: "three", cfg: planted.Config{Sizes: []int{400, 200, 100}, Spreads: []float64{1, 0.6, 1.5}, Bridges: 45, Noise: 100, Split: -1, Seed: 3}}
	sixVariant    = plantedVariant{name: "six", cfg: planted.Config{Sizes: []int{200, 200, 200, 200, 200, 200}, Bridges: 150, Noise: 100, Split: -1, Seed: 6}}
	pointVariants = []plantedVariant{
		threeVariant,
		sixVariant,
		// The six clusters again, another data seed: its uniform noise
		// points form a small cloud of their own in most maps.
		{name: "six-b", long: true, cfg: planted.Config{Sizes: []int{200, 200, 200, 200, 200, 200}, Bridges: 150, Noise: 100, Split: -1, Seed: 1}},
		{name: "six-unequal", long: true, cfg: planted.Config{Sizes: []int{400, 300, 200, 150, 100, 50}, Spreads: []float64{1, 0.8, 1.2, 0.6, 1.5, 1}, Bridges: 150, Noise: 100, Split: -1, Seed: 7}},
	}
	// One Gaussian: no cluster structure at all.
	continuumVariant = plantedVariant{name: "continuum", cfg: planted.Config{Sizes: []int{600}, Split: -1, Seed: 9}}
	// Two clusters and a third made of two sub-blobs 4.7 apart: the gap
	// was chosen (among 4, 4.5, 4.6, … 5, 6, 8, on this data seed) as one
	// at which t-SNE's maps split the cluster in some runs and keep it
	// whole in others; at 4.5 and below every run merges it, at 4.8 and
	// above every run splits it.
	splitVariant = plantedVariant{name: "split", cfg: planted.Config{Sizes: []int{200, 200, 300}, Split: 2, SplitGap: 4.7, Seed: 5}}
)

var fracs = []float64{1, 0.9}

func fracName(f float64) string {
	if f == 1 {
		return "all rows"
	}
	return fmt.Sprintf("%.0f %% rows", 100*f)
}

// clusterRuns clusters every run with MapClusters' defaults and returns the
// runs' Labels and Groups.
func clusterRuns(t testing.TB, runs []plantedRun) (labels, groups []stability.RunClusters) {
	for s, r := range runs {
		mc, err := stability.MapClusters(r.layout, stability.MapClusterConfig{})
		if err != nil {
			t.Fatalf("run %d: %v", s, err)
		}
		labels = append(labels, stability.RunClusters{Rows: r.rows, Labels: mc.Labels})
		groups = append(groups, stability.RunClusters{Rows: r.rows, Labels: mc.Groups})
	}
	return labels, groups
}

// sharedLayouts returns each run's layout restricted to the rows every run
// embedded, in row order, and those rows.
func sharedLayouts(runs []plantedRun, n int) ([][]float64, []int) {
	count := make([]int, n)
	for _, r := range runs {
		for _, row := range r.rows {
			count[row]++
		}
	}
	var rows []int
	for i, c := range count {
		if c == len(runs) {
			rows = append(rows, i)
		}
	}
	out := make([][]float64, len(runs))
	for s, r := range runs {
		pos := make([]int, n)
		for m, row := range r.rows {
			pos[row] = m
		}
		for _, row := range rows {
			out[s] = append(out[s], r.layout[2*pos[row]], r.layout[2*pos[row]+1])
		}
	}
	return out, rows
}

// medoid returns the setting's medoid run (stability.Medoid), each pair
// of runs compared by Procrustes disparity on the rows both embedded.
func medoid(t testing.TB, runs []plantedRun, n int) int {
	dis := make([][]float64, len(runs))
	for a := range runs {
		dis[a] = make([]float64, len(runs))
	}
	for a := range runs {
		for b := a + 1; b < len(runs); b++ {
			ls, _ := sharedLayouts([]plantedRun{runs[a], runs[b]}, n)
			d, err := align.Disparity(ls[0], ls[1])
			if err != nil {
				t.Fatal(err)
			}
			dis[a][b], dis[b][a] = d, d
		}
	}
	m, err := stability.Medoid(dis)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// TestPlantedPointStability validates the co-assignment score on planted
// truth: runs of t-SNE (random initialisation, perplexity 30, seeds 1–6)
// of the three- and six-cluster datasets, on all rows and on a seeded 90 %
// of rows per run. A non-core point is a switcher when the planted cluster
// of its 10 nearest core points in the map differs between two runs.
//
// Why the score should pass: a core point sits inside a cluster that every
// run reproduces, so its group is the same set in every run and its score
// is near 1; a switcher sits by planted cluster A in one run and B in
// another, its groups in those two runs share almost no rows, and one such
// switch in six runs already brings its score to about 10/15 = 0.67, below
// the 0.75 threshold. Switchers are missed when the map groups them
// steadily although their nearest core points change (a cloud of noise
// points that forms its own cluster beside a different planted cluster in
// each run, as in six-b) or when they switch between core points the
// density clustering attaches them to identically. The targets:
// AUC ≥ 0.9, switchers flagged ≥ 60 %, core points ≤ 5 %.
//
// Today's spread is measured beside it (on the rows every run embedded)
// and logged: it ranks switchers as the most stable points whenever they
// sit in the map's middle (the failure, AUC 0.001 on its data); its
// AUC depends on where t-SNE puts them, so only the new score is asserted.
// PLUMB_LONG=1 adds two more six-cluster variants.
func TestPlantedPointStability(t *testing.T) {
	for _, v := range pointVariants {
		if v.long && !longTests() {
			continue
		}
		d, err := planted.Make(v.cfg)
		if err != nil {
			t.Fatal(err)
		}
		for _, frac := range fracs {
			t.Run(v.name+"/"+fracName(frac), func(t *testing.T) {
				runs := embedRuns(t, v.name, d, 6, frac)
				truth := truthOf(d, runs)
				_, groups := clusterRuns(t, runs)
				ps, err := stability.CoAssignment(groups, d.N, 0)
				if err != nil {
					t.Fatal(err)
				}
				var flagged, total [3]int
				var pos []bool
				var inv []float64
				for i, c := range truth {
					if math.IsNaN(ps.Score[i]) {
						continue
					}
					total[c]++
					if ps.Flagged[i] {
						flagged[c]++
					}
					if c != isOther {
						pos = append(pos, c == isSwitcher)
						inv = append(inv, -ps.Score[i])
					}
				}
				if total[isSwitcher] == 0 {
					t.Fatalf("no switchers: the planted data no longer tests anything")
				}
				auc, err := stability.ROCAUC(pos, inv)
				if err != nil {
					t.Fatal(err)
				}
				// Old spread, on the rows every run embedded.
				ls, rows := sharedLayouts(runs, d.N)
				sp, _, err := stability.SpreadOf(ls, 0)
				if err != nil {
					t.Fatal(err)
				}
				var spPos []bool
				var spScore []float64
				spFlag := [3]int{}
				spTot := [3]int{}
				for m, row := range rows {
					c := truth[row]
					spTot[c]++
					if sp.Flagged[m] {
						spFlag[c]++
					}
					if c != isOther {
						spPos = append(spPos, c == isSwitcher)
						spScore = append(spScore, sp.Spread[m])
					}
				}
				spAUC := math.NaN()
				if a, err := stability.ROCAUC(spPos, spScore); err == nil {
					spAUC = a
				}
				share := func(f, n int) float64 { return float64(f) / float64(max(n, 1)) }
				t.Logf("| %s | %s | %d | %d | %d | %.3f | %.3f | %.1f %% | %.1f %% | %.1f %% | %.1f %% | %.1f %% |",
					v.name, fracName(frac), total[isCore], total[isSwitcher], total[isOther], auc, spAUC,
					100*share(flagged[isCore], total[isCore]), 100*share(flagged[isSwitcher], total[isSwitcher]),
					100*share(flagged[isOther], total[isOther]),
					100*share(spFlag[isCore], spTot[isCore]), 100*share(spFlag[isSwitcher], spTot[isSwitcher]))
				if auc < 0.9 {
					t.Errorf("AUC switchers vs core: got %.3f, want ≥ 0.9 (issue #14)", auc)
				}
				if s := share(flagged[isSwitcher], total[isSwitcher]); s < 0.6 {
					t.Errorf("switchers flagged: got %.3f, want ≥ 0.6 (issue #14)", s)
				}
				if s := share(flagged[isCore], total[isCore]); s > 0.05 {
					t.Errorf("core points flagged: got %.3f, want ≤ 0.05 (issue #14)", s)
				}
			})
		}
	}
}

// clusterComposition returns, for each cluster of a run's labels, the
// planted cluster holding most of its core points (−1 if it has none), the
// share of its core points from that planted cluster, and how many they
// are.
func clusterComposition(d *planted.Data, run stability.RunClusters, k int) (major []int, purity []float64, cores []int) {
	counts := make([]map[int]int, k)
	cores = make([]int, k)
	for m, l := range run.Labels {
		if l < 0 {
			continue
		}
		row := run.Rows[m]
		if d.Kind[row] == planted.Core {
			cores[l]++
			if counts[l] == nil {
				counts[l] = map[int]int{}
			}
			counts[l][d.Cluster[row]]++
		}
	}
	major, purity = make([]int, k), make([]float64, k)
	for c := range counts {
		major[c] = -1
		best := 0
		for p, n := range counts[c] {
			if n > best || (n == best && p < major[c]) {
				major[c], best = p, n
			}
		}
		purity[c] = float64(best) / float64(max(cores[c], 1))
		cores[c] = best
	}
	return major, purity, cores
}

// TestPlantedClusterStability validates the cluster-wise reading on the
// planted datasets (random initialisation, perplexity 30, seeds 1–6, all
// rows and 90 % rows per run), each on its medoid run (smallest summed
// Procrustes disparity to the other runs):
//
//   - three, six: every planted cluster is found as one map cluster of the
//     reference run (≥ 90 % of the map cluster's core points are its own,
//     and they are ≥ 80 % of its core points in the run) and
//     scores stable by Hennig's (2007) reading, mean best-match Jaccard ≥
//     0.75: the clusters are 10 apart in 20-D and every run separates them,
//     so each run's match differs only by the bridge and noise points that
//     join it, a few per cent.
//   - split: the premise is checked first (some runs split the two-blob
//     cluster into two map clusters, some keep it whole); then its
//     reference clusters score below both well-separated ones: against a
//     run that draws it the other way its best match covers about half of
//     it (Jaccard ≈ 0.5).
//   - continuum: one Gaussian is never read as several stable clusters:
//     at most one cluster of 5 % of the points or more scores ≥ 0.75.
func TestPlantedClusterStability(t *testing.T) {
	for _, v := range []plantedVariant{threeVariant, sixVariant, splitVariant, continuumVariant} {
		d, err := planted.Make(v.cfg)
		if err != nil {
			t.Fatal(err)
		}
		for _, frac := range fracs {
			t.Run(v.name+"/"+fracName(frac), func(t *testing.T) {
				runs := embedRuns(t, v.name, d, 6, frac)
				labels, _ := clusterRuns(t, runs)
				ref := medoid(t, runs, d.N)
				cr, err := stability.ClusterStability(labels, d.N, ref, nil)
				if err != nil {
					t.Fatal(err)
				}
				major, purity, cores := clusterComposition(d, labels[ref], len(cr))
				var line string
				for c, r := range cr {
					line += fmt.Sprintf(" [planted %d, %d pts, %.2f %s]", major[c], r.Size, r.Jaccard, r.Reading)
				}
				t.Logf("%s, %s, reference run %d:%s", v.name, fracName(frac), ref, line)
				planted := len(v.cfg.Sizes)
				// best[p]: reading of the reference cluster that recovers
				// planted cluster p (NaN if none).
				recovered := make([]float64, planted)
				for p := range recovered {
					recovered[p] = math.NaN()
				}
				for c, r := range cr {
					p := major[c]
					if p < 0 || purity[c] < 0.9 || float64(cores[c]) < 0.8*frac*float64(v.cfg.Sizes[p]) {
						continue
					}
					recovered[p] = r.Jaccard
				}
				switch v.name {
				case "three", "six":
					for p, j := range recovered {
						if math.IsNaN(j) {
							t.Errorf("planted cluster %d is not one cluster of the reference run", p)
						} else if j < 0.75 {
							t.Errorf("planted cluster %d: Jaccard %.3f, want ≥ 0.75 (stable, Hennig 2007)", p, j)
						}
					}
				case "split":
					splitRuns := 0
					for _, run := range labels {
						if splitsCluster(d, run, 2) {
							splitRuns++
						}
					}
					t.Logf("split: %d of %d runs split the two-blob cluster", splitRuns, len(runs))
					if splitRuns == 0 || splitRuns == len(runs) {
						t.Fatalf("premise: %d of %d runs split the two-blob cluster, want some but not all", splitRuns, len(runs))
					}
					for p := 0; p < 2; p++ {
						if !(recovered[p] >= 0.75) {
							t.Errorf("planted cluster %d: Jaccard %.3f, want ≥ 0.75", p, recovered[p])
						}
					}
					floor := min(recovered[0], recovered[1])
					found := 0
					for c, r := range cr {
						if major[c] == 2 && purity[c] >= 0.9 && r.Size >= 50 {
							found++
							if !(r.Jaccard < floor) {
								t.Errorf("two-blob cluster %d: Jaccard %.3f, want below the separated clusters' %.3f", c, r.Jaccard, floor)
							}
						}
					}
					if found == 0 {
						t.Errorf("two-blob cluster not found in the reference run")
					}
				case "continuum":
					stable := 0
					for _, r := range cr {
						if r.Jaccard >= 0.75 && float64(r.Size) >= 0.05*float64(d.N)*frac {
							stable++
						}
					}
					if stable > 1 {
						t.Errorf("continuum read as %d stable clusters, want at most 1", stable)
					}
				}
			})
		}
	}
}

// TestPlantedContinuumFlagsFew: where nothing is unstable — one Gaussian,
// mapped as one even blob by every run — the co-assignment flags few
// points: at most 5 % (the bound for core points).
func TestPlantedContinuumFlagsFew(t *testing.T) {
	d, err := planted.Make(continuumVariant.cfg)
	if err != nil {
		t.Fatal(err)
	}
	for _, frac := range fracs {
		runs := embedRuns(t, continuumVariant.name, d, 6, frac)
		_, groups := clusterRuns(t, runs)
		ps, err := stability.CoAssignment(groups, d.N, 0)
		if err != nil {
			t.Fatal(err)
		}
		share := float64(ps.NumFlagged) / float64(ps.Measured)
		t.Logf("continuum, %s: %d of %d points flagged", fracName(frac), ps.NumFlagged, ps.Measured)
		if share > 0.05 {
			t.Errorf("%s: %.3f of points flagged, want ≤ 0.05", fracName(frac), share)
		}
	}
}

// splitsCluster reports whether the run's map clusters split planted
// cluster p's core points: two clusters each hold at least a quarter of
// them.
func splitsCluster(d *planted.Data, run stability.RunClusters, p int) bool {
	count := map[int32]int{}
	total := 0
	for m, l := range run.Labels {
		row := run.Rows[m]
		if d.Kind[row] != planted.Core || d.Cluster[row] != p {
			continue
		}
		total++
		if l >= 0 {
			count[l]++
		}
	}
	big := 0
	for _, c := range count {
		if 4*c >= total {
			big++
		}
	}
	return big >= 2
}
