package sweep

import (
	"fmt"
	"math"
	"strings"

	"plumb/align"
	"plumb/stability"
)

// What can vary between the runs of one setting (SettingScore.Varied).
const (
	// VariedSeed: the runs start from different random layouts.
	VariedSeed = "seed"
	// VariedSubsample: the runs embed different random subsamples.
	VariedSubsample = "subsample"
)

// Varied returns what differs between the runs (seeds) of setting s of
// plan p: "seed" when each run starts from its own random layout
// (init random), "subsample" when each run embeds its own subsample
// (fraction below 1), "seed+subsample" for both, and "" when nothing
// does. With "" the runs can only be identical: the start (PCA) is the
// same, the neighbour search is the same for every run (exact, or
// approximate with the study's fixed seed, see neighborSeed), P is shared
// and the engine is deterministic, so agreement between them measures
// nothing. A plan with a single seed has one run per setting and nothing
// to compare either, whatever Varied says.
func Varied(s *Setting, p *Plan) string {
	var parts []string
	if s.Init == "random" {
		parts = append(parts, VariedSeed)
	}
	if s.Fraction() < 1 {
		parts = append(parts, VariedSubsample)
	}
	return strings.Join(parts, "+")
}

// NotVariedReason says why the runs of a setting with Varied "" cannot
// differ, and what would make them differ.
const NotVariedReason = "nothing varies between its runs (PCA start, the same neighbours and P, a deterministic engine): seeds cannot change the map; sweep --init random or --subsample below 1 to measure stability"

// IdenticalReason is the reason given when the runs of a setting that
// could vary turned out bit-identical.
const IdenticalReason = "its finished runs gave bit-identical layouts, so no stability was measured"

// identicalLayouts reports whether every layout (with its input rows, nil
// for all points) equals the first bit for bit: the after-the-fact check
// that makes a setting's stability "not measured" whatever its plan said.
func identicalLayouts(layouts [][]float64, rows [][]int32) bool {
	if len(layouts) < 2 {
		return false
	}
	for s := 1; s < len(layouts); s++ {
		if len(layouts[s]) != len(layouts[0]) || len(rows[s]) != len(rows[0]) {
			return false
		}
		for i, r := range rows[s] {
			if r != rows[0][i] {
				return false
			}
		}
		for i, v := range layouts[s] {
			if math.Float64bits(v) != math.Float64bits(layouts[0][i]) {
				return false
			}
		}
	}
	return true
}

// commonRows returns the rows of layouts a (input rows ra, ascending) and b
// (rb) that hold the points both embed, in ascending input order, and
// those input rows. nil rows stand for all points 0..n−1.
func commonRows(a []float64, ra []int32, b []float64, rb []int32) (ca, cb []float64, rows []int32) {
	rowAt := func(r []int32, i int) int32 {
		if r == nil {
			return int32(i)
		}
		return r[i]
	}
	na, nb := len(a)/2, len(b)/2
	for i, j := 0, 0; i < na && j < nb; {
		x, y := rowAt(ra, i), rowAt(rb, j)
		switch {
		case x < y:
			i++
		case y < x:
			j++
		default:
			ca = append(ca, a[2*i], a[2*i+1])
			cb = append(cb, b[2*j], b[2*j+1])
			rows = append(rows, x)
			i++
			j++
		}
	}
	return ca, cb, rows
}

// PairOnCommon compares two runs on the points both embed: layouts a and
// b with their input rows ra and rb (ascending; nil for all points) are
// restricted to the shared rows, and the restricted layouts are compared
// by Procrustes disparity (align.Disparity, scipy's convention), the mean
// Jaccard overlap of each shared point's k nearest neighbours among the
// shared points (stability.NeighborJaccard) and the Spearman correlation
// of their pair distances. It returns the three scores and the number of
// shared points; a score that cannot be computed (too few shared points,
// a collapsed layout) is NaN.
func PairOnCommon(a []float64, ra []int32, b []float64, rb []int32, k int) (disparity, jaccard, spearman float64, common int) {
	ca, cb, rows := commonRows(a, ra, b, rb)
	common = len(rows)
	disparity, jaccard, spearman = math.NaN(), math.NaN(), math.NaN()
	if common < 3 {
		return
	}
	if d, err := align.Disparity(ca, cb); err == nil {
		disparity = d
	}
	if k < common {
		if j, err := stability.NeighborJaccard(ca, cb, k); err == nil {
			jaccard = j
		}
	}
	if dc, err := distanceSpearman(ca, 2, cb); err == nil {
		spearman = dc
	}
	return
}

// spreadMissing is generalised Procrustes analysis for runs that embed
// different subsets of the points, and the per-point spread over the runs
// that hold each point. With X_s layout s on its rows R_s and C the
// consensus on the points any run holds:
//
//	C ← layout 0, then each further layout fitted onto C where they
//	    overlap and its other points added
//	repeat
//	    X̂_s = Procrustes fit (rotation, reflection, scale, shift) of X_s
//	          onto C restricted to R_s
//	    C_i = mean of X̂_s,i over the runs s holding i; C centred and
//	          scaled to RMS radius ρ = mean RMS radius of the layouts
//	until ‖ΔC‖_F ≤ 1e-10·‖C‖_F or 200 rounds
//
// and then, as stability.Spread does for complete runs,
//
//	spread_i = sqrt(1/S_i Σ_{s ∋ i} ‖X̂_s,i − C_i‖²) / ρ_C
//
// with S_i the runs holding point i and ρ_C the consensus RMS radius. A
// point held by fewer than two runs has spread NaN (not measured); one
// held by none has a NaN consensus. With every run on all points this is
// Gower's GPA started from the first layout. Cost O(S·N) per round.
func spreadMissing(layouts [][]float64, rows [][]int32, n int, threshold float64) (spread, consensus []float64, held []int, err error) {
	if threshold <= 0 {
		threshold = stability.DefaultSpreadThreshold
	}
	S := len(layouts)
	if S < 2 {
		return nil, nil, nil, fmt.Errorf("sweep: spread needs at least 2 layouts, got %d", S)
	}
	rowAt := func(s, i int) int {
		if rows[s] == nil {
			return i
		}
		return int(rows[s][i])
	}
	held = make([]int, n)
	for s, y := range layouts {
		for i := 0; i < len(y)/2; i++ {
			held[rowAt(s, i)]++
		}
	}
	rho := 0.0
	for _, y := range layouts {
		rho += rmsRadius(y)
	}
	rho /= float64(S)
	c := make([]float64, 2*n)
	have := make([]bool, n)
	sub := func(s int) []float64 { // C at the rows of layout s
		out := make([]float64, len(layouts[s]))
		for i := 0; i < len(layouts[s])/2; i++ {
			r := rowAt(s, i)
			out[2*i], out[2*i+1] = c[2*r], c[2*r+1]
		}
		return out
	}
	for i := 0; i < len(layouts[0])/2; i++ {
		r := rowAt(0, i)
		c[2*r], c[2*r+1], have[r] = layouts[0][2*i], layouts[0][2*i+1], true
	}
	for s := 1; s < S; s++ {
		// Fit onto the points C holds already, then add the others.
		var ca, cb []float64
		for i := 0; i < len(layouts[s])/2; i++ {
			if r := rowAt(s, i); have[r] {
				ca = append(ca, c[2*r], c[2*r+1])
				cb = append(cb, layouts[s][2*i], layouts[s][2*i+1])
			}
		}
		if len(ca) < 6 {
			return nil, nil, nil, fmt.Errorf("sweep: spread: layout %d shares fewer than 3 points with the others", s)
		}
		_, t, err := align.Procrustes(ca, cb, true)
		if err != nil {
			return nil, nil, nil, fmt.Errorf("sweep: spread: layout %d: %w", s, err)
		}
		moved := t.Apply(layouts[s])
		for i := 0; i < len(moved)/2; i++ {
			if r := rowAt(s, i); !have[r] {
				c[2*r], c[2*r+1], have[r] = moved[2*i], moved[2*i+1], true
			}
		}
	}
	normalise := func() {
		var mx, my float64
		cnt := 0
		for i := 0; i < n; i++ {
			if have[i] {
				mx += c[2*i]
				my += c[2*i+1]
				cnt++
			}
		}
		mx, my = mx/float64(cnt), my/float64(cnt)
		ss := 0.0
		for i := 0; i < n; i++ {
			if have[i] {
				c[2*i] -= mx
				c[2*i+1] -= my
				ss += c[2*i]*c[2*i] + c[2*i+1]*c[2*i+1]
			}
		}
		if f := math.Sqrt(ss / float64(cnt)); f > 0 {
			for i := range c {
				c[i] *= rho / f
			}
		}
	}
	normalise()
	aligned := make([][]float64, S)
	fit := func() error {
		for s := range layouts {
			a, _, err := align.Procrustes(sub(s), layouts[s], true)
			if err != nil {
				return fmt.Errorf("sweep: spread: layout %d: %w", s, err)
			}
			aligned[s] = a
		}
		return nil
	}
	next := make([]float64, 2*n)
	for round := 0; round < 200; round++ {
		if err := fit(); err != nil {
			return nil, nil, nil, err
		}
		clear(next)
		for s, a := range aligned {
			for i := 0; i < len(a)/2; i++ {
				r := rowAt(s, i)
				next[2*r] += a[2*i]
				next[2*r+1] += a[2*i+1]
			}
		}
		for i := 0; i < n; i++ {
			if held[i] > 0 {
				next[2*i] /= float64(held[i])
				next[2*i+1] /= float64(held[i])
			}
		}
		c, next = next, c
		normalise()
		var dd, cc float64
		for i := range c {
			dd += (c[i] - next[i]) * (c[i] - next[i])
			cc += c[i] * c[i]
		}
		if dd <= 1e-20*cc {
			break
		}
	}
	if err := fit(); err != nil {
		return nil, nil, nil, err
	}
	spread = make([]float64, n)
	ss := make([]float64, n)
	for s, a := range aligned {
		for i := 0; i < len(a)/2; i++ {
			r := rowAt(s, i)
			dx, dy := a[2*i]-c[2*r], a[2*i+1]-c[2*r+1]
			ss[r] += dx*dx + dy*dy
		}
	}
	rc, cnt := 0.0, 0
	for i := 0; i < n; i++ {
		if held[i] > 0 {
			rc += c[2*i]*c[2*i] + c[2*i+1]*c[2*i+1]
			cnt++
		}
	}
	rc = math.Sqrt(rc / float64(cnt))
	for i := 0; i < n; i++ {
		switch {
		case held[i] == 0:
			spread[i] = math.NaN()
			c[2*i], c[2*i+1] = math.NaN(), math.NaN()
		case held[i] < 2:
			spread[i] = math.NaN()
		default:
			spread[i] = math.Sqrt(ss[i]/float64(held[i])) / rc
		}
	}
	return spread, c, held, nil
}

// rmsRadius returns sqrt(1/N Σ ‖y_i − ȳ‖²).
func rmsRadius(y []float64) float64 {
	n := len(y) / 2
	var mx, my float64
	for i := 0; i < n; i++ {
		mx += y[2*i]
		my += y[2*i+1]
	}
	mx, my = mx/float64(n), my/float64(n)
	ss := 0.0
	for i := 0; i < n; i++ {
		dx, dy := y[2*i]-mx, y[2*i+1]-my
		ss += dx*dx + dy*dy
	}
	return math.Sqrt(ss / float64(n))
}

// UnvariedSettings returns the settings of the plan whose runs can only be
// identical (Varied is ""), when the plan runs each setting with two or
// more seeds; nil otherwise. Their stability will be stored as not
// measured, so the command warns before any work (SeedWarning).
func (p *Plan) UnvariedSettings() []*Setting {
	if len(p.Seeds) < 2 {
		return nil
	}
	var out []*Setting
	for _, s := range p.Settings() {
		if Varied(s, p) == "" {
			out = append(out, s)
		}
	}
	return out
}

// SeedWarning returns the plan-time warning for settings whose seeds
// cannot change the result, saying what to add; "" when there are none.
func (p *Plan) SeedWarning() string {
	u := p.UnvariedSettings()
	if len(u) == 0 {
		return ""
	}
	what := fmt.Sprintf("%d of %d settings", len(u), p.NumSettings())
	if len(u) == p.NumSettings() {
		what = fmt.Sprintf("all %d settings", len(u))
	}
	return fmt.Sprintf("seeds cannot change %s (PCA start on all points: the same start, neighbours and P, and a deterministic engine), so their %d seeds will give identical maps and their stability will be stored as not measured; add --init random (or pca,random) to vary the start, or --subsample 0.9 (or 1,0.9) to vary the points",
		what, len(p.Seeds))
}
