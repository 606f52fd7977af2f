// Package planted makes invented datasets whose structure is known by
// construction, to validate per-point and per-cluster stability readings:
// well-separated Gaussian clusters ("core" points), points on the segments
// between pairs of cluster centres ("bridge" points), points drawn
// uniformly over the box that holds the clusters ("noise" points), a
// cluster made of two close sub-blobs, and a pure continuum (one
// Gaussian). The data are invented; only the truth they plant is used.
//
// Every draw comes from rand.NewPCG(Seed, 7), so a Config gives the same
// points on every machine.
package planted

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Kind says how a point was made.
type Kind int8

// The kinds of planted points.
const (
	Core   Kind = iota // drawn from its cluster's Gaussian
	Bridge             // on a segment between two cluster centres
	Noise              // uniform over the clusters' bounding box
)

func (k Kind) String() string {
	switch k {
	case Core:
		return "core"
	case Bridge:
		return "bridge"
	case Noise:
		return "noise"
	}
	return fmt.Sprintf("Kind(%d)", int8(k))
}

// Config describes a planted dataset.
type Config struct {
	// Dim is the number of features. If Dim is 0, 20 is used.
	Dim int
	// Sizes holds the number of core points of each cluster; len(Sizes)
	// is the number of clusters (at least 1).
	Sizes []int
	// Spreads holds each cluster's standard deviation per coordinate. If
	// Spreads is nil, every cluster has 1.
	Spreads []float64
	// Separation is the distance between any two cluster centres: the
	// centres are the vertices of a regular simplex scaled to it. If
	// Separation is 0, 10 is used (within-cluster distances are about
	// σ·√(2·Dim) ≈ 6.3 for σ = 1 in 20-D, so clusters do not touch).
	Separation float64
	// Bridges is the number of bridge points; each picks a pair of
	// clusters (cycling through all pairs), a position t uniform in
	// [0.25, 0.75] on the segment between their centres, and Gaussian
	// jitter of standard deviation BridgeJitter (0 means 0.5).
	Bridges      int
	BridgeJitter float64
	// Noise is the number of points uniform over the bounding box of the
	// centres widened by 3 standard deviations of the widest cluster.
	Noise int
	// Split, if ≥ 0 and SplitGap > 0, makes cluster Split two sub-blobs
	// whose centres lie SplitGap apart (each half of its points, same
	// spread). Set Split to −1 for none.
	Split    int
	SplitGap float64
	// Seed drives every draw.
	Seed uint64
}

// Data is a planted dataset.
type Data struct {
	// X holds N rows of Dim features, row-major.
	X   []float64
	N   int
	Dim int
	// Kind of each point; Cluster is the planted cluster of a core point
	// (−1 for bridge and noise points); Sub is 0 or 1 for the two
	// sub-blobs of the split cluster, −1 elsewhere.
	Kind    []Kind
	Cluster []int
	Sub     []int
}

// Make draws the dataset described by cfg.
func Make(cfg Config) (*Data, error) {
	if cfg.Dim == 0 {
		cfg.Dim = 20
	}
	if cfg.Separation == 0 {
		cfg.Separation = 10
	}
	if cfg.BridgeJitter == 0 {
		cfg.BridgeJitter = 0.5
	}
	c := len(cfg.Sizes)
	switch {
	case c < 1:
		return nil, fmt.Errorf("planted: need at least one cluster")
	case cfg.Dim < c:
		return nil, fmt.Errorf("planted: %d clusters need at least %d features, got %d", c, c, cfg.Dim)
	case cfg.Spreads != nil && len(cfg.Spreads) != c:
		return nil, fmt.Errorf("planted: %d spreads for %d clusters", len(cfg.Spreads), c)
	case cfg.Bridges > 0 && c < 2:
		return nil, fmt.Errorf("planted: bridges need at least two clusters")
	case cfg.Split >= c:
		return nil, fmt.Errorf("planted: split cluster %d of %d", cfg.Split, c)
	}
	spread := func(j int) float64 {
		if cfg.Spreads == nil {
			return 1
		}
		return cfg.Spreads[j]
	}
	rng := rand.New(rand.NewPCG(cfg.Seed, 7))
	d := cfg.Dim
	// Regular simplex: centre j at e_j·s/√2, so that any two are s apart.
	centres := make([]float64, c*d)
	for j := 0; j < c; j++ {
		centres[j*d+j] = cfg.Separation / math.Sqrt2
	}
	n := cfg.Bridges + cfg.Noise
	for _, s := range cfg.Sizes {
		n += s
	}
	data := &Data{X: make([]float64, 0, n*d), N: n, Dim: d}
	add := func(k Kind, cl, sub int) {
		data.Kind = append(data.Kind, k)
		data.Cluster = append(data.Cluster, cl)
		data.Sub = append(data.Sub, sub)
	}
	for j, size := range cfg.Sizes {
		sd := spread(j)
		for m := 0; m < size; m++ {
			sub := -1
			var off float64
			if j == cfg.Split && cfg.SplitGap > 0 {
				sub = m % 2
				off = cfg.SplitGap / 2
				if sub == 0 {
					off = -off
				}
			}
			for f := 0; f < d; f++ {
				v := centres[j*d+f] + sd*rng.NormFloat64()
				// The two sub-blobs lie apart along the last feature,
				// orthogonal to every centre when Dim > clusters.
				if f == d-1 {
					v += off
				}
				data.X = append(data.X, v)
			}
			add(Core, j, sub)
		}
	}
	var pairs [][2]int
	for a := 0; a < c; a++ {
		for b := a + 1; b < c; b++ {
			pairs = append(pairs, [2]int{a, b})
		}
	}
	for m := 0; m < cfg.Bridges; m++ {
		p := pairs[m%len(pairs)]
		t := 0.25 + 0.5*rng.Float64()
		for f := 0; f < d; f++ {
			v := (1-t)*centres[p[0]*d+f] + t*centres[p[1]*d+f]
			data.X = append(data.X, v+cfg.BridgeJitter*rng.NormFloat64())
		}
		add(Bridge, -1, -1)
	}
	wide := 0.0
	for j := 0; j < c; j++ {
		wide = max(wide, spread(j))
	}
	lo, hi := make([]float64, d), make([]float64, d)
	for f := 0; f < d; f++ {
		lo[f], hi[f] = math.Inf(1), math.Inf(-1)
		for j := 0; j < c; j++ {
			lo[f] = min(lo[f], centres[j*d+f])
			hi[f] = max(hi[f], centres[j*d+f])
		}
		lo[f] -= 3 * wide
		hi[f] += 3 * wide
	}
	for m := 0; m < cfg.Noise; m++ {
		for f := 0; f < d; f++ {
			data.X = append(data.X, lo[f]+(hi[f]-lo[f])*rng.Float64())
		}
		add(Noise, -1, -1)
	}
	return data, nil
}
