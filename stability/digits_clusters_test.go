package stability

import (
	"testing"

	"plumb/internal/par"
	"plumb/tsne"
)

// TestDigitsMapClusters runs the readings on real maps with their
// defaults: the UCI optical digits (1,797 images of 10 digits,
// testdata/digits.csv), t-SNE with perplexity 30 and random
// initialisation, seeds 1–4. t-SNE maps of these digits show the ten
// digits as groups, some of them (1, 8, 9, 3) touching or merged in some
// maps (common practice, no source). So every map has 8–12 clusters, each
// cluster of the reference run is mostly one or two digits (its top digit
// ≥ 45 %), and the 0s, the most distinct digit, keep their group (stable
// share ≥ 0.95). Values seen: 9–10 clusters, 0s stable 1.000, 1 and 8
// merged in most maps.
func TestDigitsMapClusters(t *testing.T) {
	_, dd := loadReference(t)
	const seeds = 4
	lays := make([][]float64, seeds)
	errs := make([]error, seeds)
	par.Each(seeds, 2, func(s int) {
		res, err := tsne.Embed(dd.raw, dd.n, 64, tsne.EmbedConfig{Perplexity: 30, Init: tsne.InitRandom, Seed: uint64(s + 1), Config: tsne.Config{Threads: 1}})
		if err != nil {
			errs[s] = err
			return
		}
		lays[s] = res.Y
	})
	for _, err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	var labs, grps []RunClusters
	for s, y := range lays {
		mc, err := MapClusters(y, MapClusterConfig{})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("seed %d: %d clusters, sizes %v, noise %d", s+1, mc.K, mc.Sizes, mc.Noise)
		if mc.K < 8 || mc.K > 12 {
			t.Errorf("seed %d: got %d clusters, want 8–12", s+1, mc.K)
		}
		labs = append(labs, RunClusters{Labels: mc.Labels})
		grps = append(grps, RunClusters{Labels: mc.Groups})
	}
	cr, err := ClusterStability(labs, dd.n, 0, dd.digit)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range cr {
		top := r.Labels
		if len(top) > 3 {
			top = top[:3]
		}
		t.Logf("cluster %d: %d points, Jaccard %.3f %s, labels %v", r.Cluster, r.Size, r.Jaccard, r.Reading, top)
		if float64(top[0].Count) < 0.45*float64(r.Size) {
			t.Errorf("cluster %d: top digit %v of %d points, want ≥ 45 %%", r.Cluster, top[0], r.Size)
		}
	}
	ps, err := CoAssignment(grps, dd.n, 0)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("flagged %d of %d", ps.NumFlagged, ps.Measured)
	lr, err := LabelStability(grps, dd.n, dd.digit, ps)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range lr {
		top := r.Mixes
		if len(top) > 3 {
			top = top[:3]
		}
		t.Logf("digit %s: stable %.3f mixes %v", r.Label, r.Stable, top)
		if r.Label == "0" && r.Stable < 0.95 {
			t.Errorf("digit 0: stable share %.3f, want ≥ 0.95", r.Stable)
		}
	}
}
