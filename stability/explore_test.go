package stability_test

import (
	"fmt"
	"math"
	"testing"

	"plumb/internal/planted"
	"plumb/stability"
)

func TestExplore(t *testing.T) {
	vs := []plantedVariant{
		{name: "threeA", cfg: planted.Config{Sizes: []int{400, 200, 100}, Spreads: []float64{1, 0.6, 1.5}, Bridges: 45, Noise: 100, Split: -1, Seed: 3}},
		{name: "threeB", cfg: planted.Config{Sizes: []int{300, 200, 150}, Spreads: []float64{1, 0.8, 1.2}, Bridges: 60, Noise: 150, Split: -1, Seed: 4}},
	}
	for _, g := range []float64{4.6, 4.7, 4.8, 4.9} {
		vs = append(vs, plantedVariant{name: "split" + fmt.Sprint(g), cfg: planted.Config{Sizes: []int{200, 200, 300}, Split: 2, SplitGap: g, Seed: 5}})
	}
	for _, v := range vs {
		name, cfg := v.name, v.cfg
		d, err := planted.Make(cfg)
		if err != nil {
			t.Fatal(err)
		}
		for _, frac := range []float64{1, 0.9} {
			runs := embedRuns(t, name, d, 6, frac)
			truth := truthOf(d, runs)
			for _, mp := range []int{30} {
				for _, sc := range []float64{1.5} {
					var lab, grp []stability.RunClusters
					ks := []int{}
					for _, r := range runs {
						mc, err := stability.MapClusters(r.layout, stability.MapClusterConfig{MinPoints: mp, RadiusScale: sc})
						if err != nil {
							t.Fatal(err)
						}
						ks = append(ks, mc.K)
						lab = append(lab, stability.RunClusters{Rows: r.rows, Labels: mc.Labels})
						grp = append(grp, stability.RunClusters{Rows: r.rows, Labels: mc.Groups})
					}
					ps, err := stability.CoAssignment(grp, d.N, 0)
					if err != nil {
						t.Fatal(err)
					}
					var pos []bool
					var sc2 []float64
					fl := [3]int{}
					tot := [3]int{}
					for i, v := range truth {
						if math.IsNaN(ps.Score[i]) {
							continue
						}
						tot[v]++
						if ps.Flagged[i] {
							fl[v]++
						}
						if v == isOther {
							continue
						}
						pos = append(pos, v == isSwitcher)
						sc2 = append(sc2, -ps.Score[i])
					}
					auc, _ := stability.ROCAUC(pos, sc2)
					cr, _ := stability.ClusterStability(lab, d.N, 0, nil)
					var js []float64
					for _, c := range cr {
						js = append(js, math.Round(c.Jaccard*100)/100)
					}
					t.Logf("%s %.1f m=%d s=%g K=%v AUC %.3f flagged core %d/%d sw %d/%d other %d/%d clusters %v", name, frac, mp, sc, ks, auc, fl[0], tot[0], fl[1], tot[1], fl[2], tot[2], js)
				}
			}
		}
	}
}
