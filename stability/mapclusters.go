package stability

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"plumb/internal/par"
)

// Defaults of MapClusterConfig.
const (
	// DefaultMinPoints is the number of other points within the radius
	// that makes a point a core point.
	DefaultMinPoints = 30
	// DefaultRadiusScale multiplies the median distance of a point to its
	// MinPoints-th neighbour to give the DBSCAN radius ε.
	DefaultRadiusScale = 1.5
)

// MapClusterConfig holds the settings of MapClusters. Every zero value
// selects the documented default.
type MapClusterConfig struct {
	// MinPoints is DBSCAN's density threshold: a point is a core point
	// when at least MinPoints other points lie within ε of it. If
	// MinPoints is 0, DefaultMinPoints (30) is used.
	MinPoints int
	// RadiusScale sets ε = RadiusScale × the median over points of the
	// distance to their MinPoints-th nearest neighbour. If RadiusScale is
	// 0, DefaultRadiusScale (1.5) is used: a point is core when its local
	// density is at least 1/RadiusScale² ≈ 0.44 of the map's median
	// density.
	RadiusScale float64
	// Threads bounds the goroutines (0 = GOMAXPROCS); the result does not
	// depend on it.
	Threads int
}

// MapClustering is the clustering of one layout.
type MapClustering struct {
	// Labels holds each point's cluster, 0 … K−1, or −1 for noise.
	// Clusters are numbered by decreasing size, ties by their smallest
	// point index.
	Labels []int32
	// Groups is Labels with every noise point given the cluster of its
	// nearest core point (ties by the smaller index): the group a point
	// sits by. CoAssignment reads Groups.
	Groups []int32
	// K is the number of clusters; Noise the number of noise points.
	K, Noise int
	// Sizes holds each cluster's number of points (core and border).
	Sizes []int
	// Radius is ε and MinPoints the density threshold actually used.
	Radius    float64
	MinPoints int
}

// MapClusters clusters a 2-d layout (x0,y0,x1,y1,…) by DBSCAN (Ester et
// al. 1996) with a radius chosen from the map itself:
//
//	r_i = distance of point i to its m-th nearest other point (m = MinPoints)
//	ε²  = RadiusScale² · median_i r_i²
//	core points: r_i ≤ ε; clusters: core points joined when within ε
//
// A non-core point within ε of a core point is a border point and joins
// the cluster of its nearest core point (ties by the smaller index), so the
// result does not depend on the order points are visited, unlike the
// original algorithm's first-come rule. Other points are noise (label −1).
//
// Why these defaults: t-SNE spreads each cluster at a roughly even density
// and leaves gaps between clusters, so "denser than 0.44 of the map's
// median density" separates clusters from gaps without tuning: for points
// of an even 2-d density ρ, π ρ r_i² follows a Gamma(m, 1) law, and an
// interior point of median density fails the test with probability
// 1.6e-7 at m = 30 (scipy.stats.gamma, by us). m = 30, rather than
// DBSCAN's usual 4, is t-SNE's customary perplexity, the effective number
// of neighbours each point is fitted to: a group of fewer than m points
// cannot hold a core point and is not called a cluster, and thin strings
// of points between clusters do not join them (along a string r_i grows
// as m, inside a 2-d cluster as √m). On the planted validation maps
// (stability/planted_test.go) smaller m (15) made clusters of a few dozen
// noise points and a radius scale of 2 joined clusters through bridge
// points.
//
// The result is deterministic and independent of Threads. Cost O(N m
// log N) for the neighbours plus O(N m) for the radius queries. It errors
// on a malformed layout or fewer than MinPoints + 1 points; a layout whose
// points all coincide is one cluster.
//
// References:
//
//   - M. Ester, H.-P. Kriegel, J. Sander and X. Xu, "A density-based
//     algorithm for discovering clusters in large spatial databases with
//     noise", KDD 1996, pp. 226–231.
//   - R. J. G. B. Campello, D. Moulavi and J. Sander, "Density-based
//     clustering based on hierarchical density estimates", PAKDD 2013,
//     LNCS 7819, pp. 160–172 (border points treated by the core points
//     only, as here for noise attachment).
func MapClusters(layout []float64, cfg MapClusterConfig) (*MapClustering, error) {
	if err := checkLayout("layout", layout); err != nil {
		return nil, err
	}
	m := cfg.MinPoints
	if m == 0 {
		m = DefaultMinPoints
	}
	scale := cfg.RadiusScale
	if scale == 0 {
		scale = DefaultRadiusScale
	}
	if m < 1 || !(scale > 0) || math.IsInf(scale, 0) {
		return nil, fmt.Errorf("stability: map clusters: MinPoints %d and RadiusScale %g, want ≥ 1 and > 0", m, scale)
	}
	n := len(layout) / 2
	if n <= m {
		return nil, fmt.Errorf("%w: map clusters with MinPoints = %d need at least %d points, have %d", ErrTooFewPoints, m, m+1, n)
	}
	nb := mapNeighbors(layout, m, nil, cfg.Threads)
	reach := make([]float64, n) // squared distance to the m-th neighbour
	for i := 0; i < n; i++ {
		j := nb[i*m+m-1]
		reach[i] = sqDist(layout[2*j], layout[2*j+1], layout[2*i], layout[2*i+1])
	}
	med := Quantile(reach, 0.5) // of squared distances: the square of the median distance
	eps2 := scale * scale * med
	core := make([]bool, n)
	for i, r := range reach {
		core[i] = r <= eps2
	}
	t := newKDTree(layout)

	// Union-find of the core points within ε of each other. Each core
	// point's core neighbours are gathered in parallel (fixed chunks), then
	// joined in index order; components do not depend on the order.
	parent := make([]int32, n)
	for i := range parent {
		parent[i] = int32(i)
	}
	find := func(i int32) int32 {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	const block = 4096
	near := make([][]int32, block)
	nearest := make([]int32, n) // for non-core points: nearest core point within ε, or −1
	for lo := 0; lo < n; lo += block {
		hi := min(lo+block, n)
		par.Chunks(hi-lo, chunk, cfg.Threads, func(_, a, b int) {
			var stack []int32
			for i := lo + a; i < lo+b; i++ {
				qx, qy := layout[2*i], layout[2*i+1]
				if core[i] {
					list := near[i-lo][:0]
					t.within(qx, qy, eps2, &stack, func(p int32, _ float64) {
						if int(p) > i && core[p] {
							list = append(list, p)
						}
					})
					near[i-lo] = list
					continue
				}
				best, bestD := int32(-1), math.Inf(1)
				t.within(qx, qy, eps2, &stack, func(p int32, d float64) {
					if core[p] && (d < bestD || (d == bestD && p < best)) {
						best, bestD = p, d
					}
				})
				nearest[i] = best
			}
		})
		for i := lo; i < hi; i++ {
			if !core[i] {
				continue
			}
			for _, p := range near[i-lo] {
				a, b := find(int32(i)), find(p)
				if a != b {
					parent[max(a, b)] = min(a, b)
				}
			}
		}
	}

	// Number the components by decreasing size, ties by smallest index
	// (each root is its component's smallest index).
	size := make([]int, n)
	for i := 0; i < n; i++ {
		if core[i] {
			size[find(int32(i))]++
		} else if nearest[i] >= 0 {
			size[find(nearest[i])]++
		}
	}
	var roots []int32
	for i := 0; i < n; i++ {
		if core[i] && parent[i] == int32(i) {
			roots = append(roots, int32(i))
		}
	}
	slices.SortFunc(roots, func(a, b int32) int {
		if c := cmp.Compare(size[b], size[a]); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	id := make([]int32, n)
	mc := &MapClustering{Labels: make([]int32, n), Groups: make([]int32, n), K: len(roots), Sizes: make([]int, len(roots)),
		Radius: math.Sqrt(eps2), MinPoints: m}
	for c, r := range roots {
		id[r] = int32(c)
		mc.Sizes[c] = size[r]
	}
	var noise []int
	for i := 0; i < n; i++ {
		switch {
		case core[i]:
			mc.Labels[i] = id[find(int32(i))]
		case nearest[i] >= 0:
			mc.Labels[i] = id[find(nearest[i])]
		default:
			mc.Labels[i] = -1
			noise = append(noise, i)
		}
		mc.Groups[i] = mc.Labels[i]
	}
	mc.Noise = len(noise)
	if len(noise) > 0 {
		// Attach each noise point to its nearest core point's cluster,
		// with a tree of the core points only.
		var coreIdx []int32
		var cy []float64
		for i := 0; i < n; i++ {
			if core[i] {
				coreIdx = append(coreIdx, int32(i))
				cy = append(cy, layout[2*i], layout[2*i+1])
			}
		}
		if len(coreIdx) > 0 {
			ct := newKDTree(cy)
			par.Chunks(len(noise), chunk, cfg.Threads, func(_, a, b int) {
				var h nbHeap
				var one [1]int32
				for _, i := range noise[a:b] {
					ct.nearestTo(layout[2*i], layout[2*i+1], &h, one[:])
					mc.Groups[i] = mc.Labels[coreIdx[one[0]]]
				}
			})
		}
	}
	return mc, nil
}

// within calls f(p, d²) for every point p of the tree with squared
// distance d² ≤ r2 from (qx, qy), in no particular order; stack is reused
// scratch.
func (t *kdTree) within(qx, qy, r2 float64, stack *[]int32, f func(p int32, d2 float64)) {
	st := append((*stack)[:0], 0)
	for len(st) > 0 {
		id := st[len(st)-1]
		st = st[:len(st)-1]
		nd := &t.nodes[id]
		if boxDist2(nd, qx, qy) > r2 {
			continue
		}
		if nd.left >= 0 {
			st = append(st, nd.left, nd.right)
			continue
		}
		xy := t.xy[2*nd.lo : 2*nd.hi]
		for m, p := range t.idx[nd.lo:nd.hi] {
			if v := sqDist(xy[2*m], xy[2*m+1], qx, qy); v <= r2 {
				f(p, v)
			}
		}
	}
	*stack = st
}

// nearestTo writes into dst the len(dst) points of the tree nearest to
// the position (qx, qy), in ascending (distance, index) order; the tree
// must hold at least len(dst) points.
func (t *kdTree) nearestTo(qx, qy float64, h *nbHeap, dst []int32) {
	t.nearest(qx, qy, -1, h, dst)
}
