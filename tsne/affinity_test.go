package tsne

import (
	"fmt"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// afftFixture is the directory of the scikit-learn 1.2.1 reference values
// made by testdata/sklearn_calibration/make_fixtures.py (versions in
// versions.txt there).
var afftFixture = filepath.Join("..", "testdata", "sklearn_calibration")

// afftEntropy is the Shannon entropy in nats, −Σ p ln p (0 ln 0 = 0).
func afftEntropy(p []float64) float64 {
	h := 0.0
	for _, v := range p {
		if v > 0 {
			h -= v * math.Log(v)
		}
	}
	return h
}

// afftClose reports whether got is within abs or rel of want.
func afftClose(got, want, abs, rel float64) bool {
	return math.Abs(got-want) <= abs || math.Abs(got-want) <= rel*math.Abs(want)
}

func TestGaussianRowWorkedExample(t *testing.T) {
	// Arithmetic worked example (common practice; plain arithmetic of
	// exp(−d²/2σ²)): neighbours at distances 1 and 2 under σ = 1 get scaled
	// similarities 0.8176 and 0.1824; distances 2 and 4 under σ = 2 the same.
	// Run through the row kernel the bisection uses, at β = 1/(2σ²).
	tests := []struct {
		name  string
		dist  []float64
		sigma float64
	}{
		{"sigma 1", []float64{1, 2}, 1},
		{"sigma 2", []float64{2, 4}, 2},
		{"sigma 2 reversed", []float64{4, 2}, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			sq := []float64{tc.dist[0] * tc.dist[0], tc.dist[1] * tc.dist[1]}
			p := make([]float64, 2)
			h := affGaussianRow(p, sq, min(sq[0], sq[1]), 1/(2*tc.sigma*tc.sigma))
			want := []float64{0.8176, 0.1824}
			if tc.dist[0] > tc.dist[1] {
				want[0], want[1] = want[1], want[0]
			}
			for j := range p {
				if math.Abs(p[j]-want[j]) > 5e-5 { // 4 decimals quoted
					t.Errorf("p[%d]: got %.6f, want %.4f", j, p[j], want[j])
				}
			}
			// The returned entropy is −Σ p ln p (definition, Shannon 1948).
			if wantH := afftEntropy(p); math.Abs(h-wantH) > 1e-14 {
				t.Errorf("entropy: got %.16g, want %.16g", h, wantH)
			}
		})
	}
}

func TestCalibrationEntropy(t *testing.T) {
	// Definition of perplexity calibration (van der Maaten & Hinton 2008,
	// §2: Perp = 2^H with H in bits, i.e. H = ln(perplexity) in nats): the
	// entropy of every p_·|i equals ln(perplexity) within the tolerance
	// (1e-5, common reference code).
	x, n, d := nbtDigits(t)
	nbDigits, err := ExactNeighbors(x, n, d, 90, 0)
	if err != nil {
		t.Fatal(err)
	}
	xc := nbtClusters(3000, 20, 8, 31)
	nbClusters, err := ExactNeighbors(xc, 3000, 20, 150, 0)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		nb   *Neighbors
		perp float64
	}{
		{"digits perplexity 5", nbDigits, 5},
		{"digits perplexity 30", nbDigits, 30},
		{"clusters perplexity 7.5", nbClusters, 7.5},
		{"clusters perplexity 50", nbClusters, 50},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c, err := ConditionalAffinities(tc.nb, tc.perp, 0)
			if err != nil {
				t.Fatal(err)
			}
			if c.Unconverged != 0 {
				t.Errorf("got %d unconverged points, want 0", c.Unconverged)
			}
			want := math.Log(tc.perp)
			worst := 0.0
			for i := 0; i < c.N; i++ {
				row := c.P[i*c.K : (i+1)*c.K]
				worst = max(worst, math.Abs(afftEntropy(row)-want))
				if s := afftSum(row); math.Abs(s-1) > 1e-12 {
					t.Fatalf("point %d: row sums to %v, want 1", i, s)
				}
			}
			if worst > PerplexityTolerance+1e-12 {
				t.Errorf("largest |H − ln perplexity| = %.3g, want ≤ %g", worst, PerplexityTolerance)
			}
		})
	}
}

// afftSum sums a slice in order.
func afftSum(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += x
	}
	return s
}

func TestConditionalAgainstScikitLearn(t *testing.T) {
	// Reference: scikit-learn 1.2.1 (Debian python3-sklearn)
	// sklearn.manifold._utils._binary_search_perplexity on the digits'
	// neighbour sets with k = ⌊3·perplexity⌋ (fixture neighbors_p*.csv),
	// and β recovered from its rows (beta_p*.csv). Tolerance 1e-6 (engine
	// issue); we also require 1e-6 relative on β and on each p_j|i.
	x, n, d := nbtDigits(t)
	nb, err := ExactNeighbors(x, n, d, 90, 0) // largest perplexity's k; 10 uses a prefix
	if err != nil {
		t.Fatal(err)
	}
	for _, perp := range []float64{10, 30} {
		t.Run(fmt.Sprintf("perplexity %g", perp), func(t *testing.T) {
			c, err := ConditionalAffinities(nb, perp, 0)
			if err != nil {
				t.Fatal(err)
			}
			k := c.K
			rows := nbtReadCSV(t, filepath.Join(afftFixture, fmt.Sprintf("neighbors_p%g.csv", perp)))
			maxDiff := 0.0
			for _, r := range rows {
				i, rank, j := nbtAtoi(t, r[0]), nbtAtoi(t, r[1]), nbtAtoi(t, r[2])
				want := nbtAtof(t, r[4])
				if int(c.Index[i*k+rank]) != j {
					t.Fatalf("point %d rank %d: got neighbour %d, want %d", i, rank, c.Index[i*k+rank], j)
				}
				got := c.P[i*k+rank]
				maxDiff = max(maxDiff, math.Abs(got-want))
				if !afftClose(got, want, 1e-300, 1e-6) || math.Abs(got-want) > 1e-6 {
					t.Errorf("p_%d|%d: got %.15g, want %.15g", j, i, got, want)
				}
			}
			betas := nbtReadCSV(t, filepath.Join(afftFixture, fmt.Sprintf("beta_p%g.csv", perp)))
			if len(betas) != n {
				t.Fatalf("beta fixture has %d rows, want %d", len(betas), n)
			}
			maxRel := 0.0
			for _, r := range betas {
				i, want := nbtAtoi(t, r[0]), nbtAtof(t, r[1])
				got := c.Beta[i]
				maxRel = max(maxRel, math.Abs(got-want)/want)
				if !afftClose(got, want, 0, 1e-6) {
					t.Errorf("β_%d: got %.15g, want %.15g", i, got, want)
				}
			}
			t.Logf("perplexity %g: max |Δp_j|i| = %.2g over %d sampled entries, max relative Δβ = %.2g over %d points", perp, maxDiff, len(rows), maxRel, n)
		})
	}
}

func TestJointAgainstScikitLearn(t *testing.T) {
	// Reference: scikit-learn 1.2.1 sklearn.manifold._t_sne.
	// _joint_probabilities_nn on the same neighbour sets: sample rows
	// (joint_p*.csv) and every row's sum and entry count
	// (joint_rowsum_p*.csv). Tolerance 1e-6 absolute (engine issue) and
	// 1e-6 relative.
	x, n, d := nbtDigits(t)
	nb, err := ExactNeighbors(x, n, d, 90, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, perp := range []float64{10, 30} {
		t.Run(fmt.Sprintf("perplexity %g", perp), func(t *testing.T) {
			p, err := Affinities(nb, perp, 0)
			if err != nil {
				t.Fatal(err)
			}
			afftCheckSparse(t, p)
			rows := nbtReadCSV(t, filepath.Join(afftFixture, fmt.Sprintf("joint_p%g.csv", perp)))
			byRow := map[int][][2]float64{}
			for _, r := range rows {
				i := nbtAtoi(t, r[0])
				byRow[i] = append(byRow[i], [2]float64{float64(nbtAtoi(t, r[1])), nbtAtof(t, r[2])})
			}
			maxRel := 0.0
			for i, want := range byRow {
				a, b := p.RowPtr[i], p.RowPtr[i+1]
				if b-a != len(want) {
					t.Fatalf("row %d: got %d entries, want %d", i, b-a, len(want))
				}
				for e, w := range want {
					if int(p.Col[a+e]) != int(w[0]) {
						t.Fatalf("row %d entry %d: got column %d, want %d", i, e, p.Col[a+e], int(w[0]))
					}
					got := p.Val[a+e]
					maxRel = max(maxRel, math.Abs(got-w[1])/w[1])
					if !afftClose(got, w[1], 0, 1e-6) || math.Abs(got-w[1]) > 1e-6 {
						t.Errorf("p_%d,%d: got %.15g, want %.15g", i, int(w[0]), got, w[1])
					}
				}
			}
			sums := nbtReadCSV(t, filepath.Join(afftFixture, fmt.Sprintf("joint_rowsum_p%g.csv", perp)))
			if len(sums) != n {
				t.Fatalf("row-sum fixture has %d rows, want %d", len(sums), n)
			}
			maxSumRel := 0.0
			for _, r := range sums {
				i, want, nnz := nbtAtoi(t, r[0]), nbtAtof(t, r[1]), nbtAtoi(t, r[2])
				if got := p.RowPtr[i+1] - p.RowPtr[i]; got != nnz {
					t.Fatalf("row %d: got %d entries, want %d", i, got, nnz)
				}
				got := afftSum(p.Val[p.RowPtr[i]:p.RowPtr[i+1]])
				maxSumRel = max(maxSumRel, math.Abs(got-want)/want)
				if !afftClose(got, want, 0, 1e-6) {
					t.Errorf("row %d sum: got %.15g, want %.15g", i, got, want)
				}
			}
			t.Logf("perplexity %g: max relative Δp_ij = %.2g over %d sampled rows, max relative Δ(row sum) = %.2g over %d rows, nnz %d",
				perp, maxRel, len(byRow), maxSumRel, n, len(p.Val))
		})
	}
}

func TestExactAffinitiesAgainstScikitLearn(t *testing.T) {
	// Reference: scikit-learn 1.2.1 sklearn.manifold._t_sne.
	// _joint_probabilities (method='exact') on the first 300 digits at
	// perplexity 30 (exact300_p30.csv sample rows, exact300_rowsum_p30.csv
	// every row sum). sklearn floors entries at 2.2e-16, below the 1e-6
	// tolerance (engine issue); we also require 1e-6 relative above 1e-12.
	x, _, d := nbtDigits(t)
	const n = 300
	p, err := ExactAffinities(x[:n*d], n, d, 30, 0)
	if err != nil {
		t.Fatal(err)
	}
	afftCheckSparse(t, p)
	if len(p.Val) != n*(n-1) {
		t.Fatalf("got %d entries, want n(n−1) = %d", len(p.Val), n*(n-1))
	}
	maxRel := 0.0
	for _, r := range nbtReadCSV(t, filepath.Join(afftFixture, "exact300_p30.csv")) {
		i, j, want := nbtAtoi(t, r[0]), nbtAtoi(t, r[1]), nbtAtof(t, r[2])
		e := p.RowPtr[i] + j
		if j > i {
			e--
		}
		if int(p.Col[e]) != j {
			t.Fatalf("row %d: column %d at position %d, want %d", i, p.Col[e], e-p.RowPtr[i], j)
		}
		got := p.Val[e]
		if want > 1e-12 {
			maxRel = max(maxRel, math.Abs(got-want)/want)
		}
		if math.Abs(got-want) > 1e-6 || !afftClose(got, want, 1e-12, 1e-6) {
			t.Errorf("p_%d,%d: got %.15g, want %.15g", i, j, got, want)
		}
	}
	for _, r := range nbtReadCSV(t, filepath.Join(afftFixture, "exact300_rowsum_p30.csv")) {
		i, want := nbtAtoi(t, r[0]), nbtAtof(t, r[1])
		got := afftSum(p.Val[p.RowPtr[i]:p.RowPtr[i+1]])
		if !afftClose(got, want, 0, 1e-6) {
			t.Errorf("row %d sum: got %.15g, want %.15g", i, got, want)
		}
	}
	t.Logf("max relative Δp_ij (entries > 1e-12) = %.2g", maxRel)
}

// afftCheckSparse checks the documented invariants of a joint P: CSR shape,
// ascending columns, no diagonal, symmetric, non-negative, finite, sum 1.
// (Definition of the symmetric joint P, van der Maaten & Hinton 2008,
// symmetric SNE, §3.1 — section from memory.)
func afftCheckSparse(t *testing.T, p *Sparse) {
	t.Helper()
	n := p.N
	if len(p.RowPtr) != n+1 || p.RowPtr[0] != 0 || p.RowPtr[n] != len(p.Col) || len(p.Col) != len(p.Val) {
		t.Fatalf("malformed CSR: N=%d, len(RowPtr)=%d, nnz %d/%d", n, len(p.RowPtr), len(p.Col), len(p.Val))
	}
	find := func(i, j int32) (float64, bool) {
		cols := p.Col[p.RowPtr[i]:p.RowPtr[i+1]]
		e, ok := slices.BinarySearch(cols, j)
		if !ok {
			return 0, false
		}
		return p.Val[p.RowPtr[i]+e], true
	}
	total := 0.0
	for i := 0; i < n; i++ {
		for e := p.RowPtr[i]; e < p.RowPtr[i+1]; e++ {
			j, v := p.Col[e], p.Val[e]
			if int(j) == i {
				t.Fatalf("row %d holds the diagonal", i)
			}
			if e > p.RowPtr[i] && p.Col[e-1] >= j {
				t.Fatalf("row %d: columns not ascending at %d", i, j)
			}
			if !(v >= 0) || math.IsInf(v, 0) {
				t.Fatalf("p_%d,%d = %v", i, j, v)
			}
			if w, ok := find(j, int32(i)); !ok || w != v {
				t.Fatalf("p_%d,%d = %v but p_%d,%d = %v (present %v)", i, j, v, j, i, w, ok)
			}
			total += v
		}
	}
	if math.Abs(total-1) > 1e-12 {
		t.Errorf("P sums to %.17g, want 1", total)
	}
}

func TestAffinitiesDegenerate(t *testing.T) {
	// Special cases documented on ConditionalAffinities: duplicate points
	// and all-equal (or all-zero) distances must give valid distributions
	// with no division by zero (engine issue; common practice).
	allSame := make([]float64, 60*3)
	x := nbtWithDuplicates(900, 5, 41)
	equal := &Neighbors{N: 40, K: 39, Index: make([]int32, 40*39), Dist: make([]float64, 40*39)}
	for i := 0; i < 40; i++ { // a regular simplex: every distance is 2.5
		c := 0
		for j := 0; j < 40; j++ {
			if j != i {
				equal.Index[i*39+c], equal.Dist[i*39+c] = int32(j), 2.5
				c++
			}
		}
	}
	nbSame, err := ExactNeighbors(allSame, 60, 3, 30, 1)
	if err != nil {
		t.Fatal(err)
	}
	nbDup, err := ExactNeighbors(x, 900, 5, 30, 1)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name        string
		nb          *Neighbors
		perp        float64
		uniform     bool // every row uniform over its k neighbours
		unconverged bool // calibration target out of reach for some rows
	}{
		{"all points identical", nbSame, 10, true, true},
		{"all distances equal", equal, 10, true, true},
		{"duplicates", nbDup, 10, false, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c, err := ConditionalAffinities(tc.nb, tc.perp, 2)
			if err != nil {
				t.Fatal(err)
			}
			if (c.Unconverged > 0) != tc.unconverged {
				t.Errorf("got %d unconverged rows, want some: %v", c.Unconverged, tc.unconverged)
			}
			for i := 0; i < c.N; i++ {
				row := c.P[i*c.K : (i+1)*c.K]
				if s := afftSum(row); math.Abs(s-1) > 1e-12 || math.IsNaN(s) {
					t.Fatalf("row %d sums to %v, want 1", i, s)
				}
				if tc.uniform {
					for _, v := range row {
						if math.Abs(v-1/float64(c.K)) > 1e-15 {
							t.Fatalf("row %d: got %v, want uniform 1/%d", i, v, c.K)
						}
					}
				}
				if math.IsNaN(c.Beta[i]) || math.IsInf(c.Beta[i], 0) || c.Beta[i] <= 0 {
					t.Fatalf("β_%d = %v", i, c.Beta[i])
				}
			}
			p, err := Affinities(tc.nb, tc.perp, 2)
			if err != nil {
				t.Fatal(err)
			}
			afftCheckSparse(t, p)
		})
	}
	t.Run("exact, all points identical", func(t *testing.T) {
		p, err := ExactAffinities(allSame, 60, 3, 10, 2)
		if err != nil {
			t.Fatal(err)
		}
		afftCheckSparse(t, p)
		want := 1 / float64(60*59)
		for _, v := range p.Val {
			if math.Abs(v-want) > 1e-18 {
				t.Fatalf("got %v, want uniform %v", v, want)
			}
		}
	})
	t.Run("exact, duplicates", func(t *testing.T) {
		p, err := ExactAffinities(x[:400*5], 400, 5, 10, 2)
		if err != nil {
			t.Fatal(err)
		}
		afftCheckSparse(t, p)
	})
}

func TestAffinitiesErrors(t *testing.T) {
	// Argument checks documented on ConditionalAffinities (common practice).
	x := nbtUniform(50, 2, 51)
	nb, err := ExactNeighbors(x, 50, 2, 30, 1)
	if err != nil {
		t.Fatal(err)
	}
	mod := func(f func(nb *Neighbors)) *Neighbors {
		c := nb.Truncate(nb.K)
		f(c)
		return c
	}
	tests := []struct {
		name string
		nb   *Neighbors
		perp float64
		want string
	}{
		{"nil", nil, 5, "nil neighbours"},
		{"perplexity below 1", nb, 0.5, "at least 1"},
		{"perplexity NaN", nb, math.NaN(), "at least 1"},
		{"perplexity Inf", nb, math.Inf(1), "at least 1"},
		{"too few neighbours", nb, 10.5, "needs 31 neighbours per point, have 30"},
		{"perplexity above n−1", nb, 50, "n − 1 = 49"},
		{"short index", mod(func(nb *Neighbors) { nb.Index = nb.Index[:10] }), 5, "want N·K"},
		{"out of range", mod(func(nb *Neighbors) { nb.Index[3*30+2] = 50 }), 5, "row 3, column 2: index 50 out of range"},
		{"self", mod(func(nb *Neighbors) { nb.Index[4*30+1] = 4 }), 5, "row 4, column 1: point lists itself"},
		{"twice", mod(func(nb *Neighbors) { nb.Index[5*30+1] = nb.Index[5*30] }), 5, "row 5, column 1: point"},
		{"negative distance", mod(func(nb *Neighbors) { nb.Dist[6*30] = -1 }), 5, "row 6, column 0: distance -1"},
		{"NaN distance", mod(func(nb *Neighbors) { nb.Dist[7*30+9] = math.NaN() }), 5, "row 7, column 9: distance NaN"},
		{"two bad rows, first reported", mod(func(nb *Neighbors) { nb.Dist[45*30] = -1; nb.Dist[9*30+3] = -2 }), 5, "row 9, column 3"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			p, err := Affinities(tc.nb, tc.perp, 2)
			if err == nil {
				t.Fatalf("got P with %d entries, want error containing %q", len(p.Val), tc.want)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got error %q, want it to contain %q", err, tc.want)
			}
		})
	}
	t.Run("exact too large", func(t *testing.T) {
		n := ExactAffinitiesMaxN + 1
		_, err := ExactAffinities(make([]float64, n), n, 1, 30, 1)
		if err == nil || !strings.Contains(err.Error(), "n ≤ 5000") {
			t.Errorf("got %v, want an error naming the n ≤ 5000 limit", err)
		}
	})
	t.Run("exact perplexity above n−1", func(t *testing.T) {
		_, err := ExactAffinities(x, 50, 2, 49.5, 1)
		if err == nil || !strings.Contains(err.Error(), "n − 1 = 49") {
			t.Errorf("got %v, want an error naming n − 1 = 49", err)
		}
	})
	t.Run("exact bad length", func(t *testing.T) {
		_, err := ExactAffinities(x[:99], 50, 2, 5, 1)
		if err == nil || !strings.Contains(err.Error(), "length 99") {
			t.Errorf("got %v, want a length error", err)
		}
	})
}

// afftSparseEqual compares two Sparse bit for bit.
func afftSparseEqual(a, b *Sparse) error {
	if a.N != b.N || !slices.Equal(a.RowPtr, b.RowPtr) || !slices.Equal(a.Col, b.Col) {
		return fmt.Errorf("structure differs")
	}
	for e := range a.Val {
		if math.Float64bits(a.Val[e]) != math.Float64bits(b.Val[e]) {
			return fmt.Errorf("entry %d: %v vs %v", e, a.Val[e], b.Val[e])
		}
	}
	return nil
}

func TestAffinitiesDeterministic(t *testing.T) {
	// Rule: identical bits for any thread count (team rules), and a prefix
	// of a longer neighbour list gives the same P as a direct search
	// (sweeps compute neighbours once for the largest perplexity).
	x := nbtWithDuplicates(1200, 6, 61)
	nb, err := ExactNeighbors(x, 1200, 6, 60, 1)
	if err != nil {
		t.Fatal(err)
	}
	ref, err := Affinities(nb, 12, 1)
	if err != nil {
		t.Fatal(err)
	}
	refExact, err := ExactAffinities(x[:500*6], 500, 6, 12, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, threads := range []int{2, 8, 0} {
		got, err := Affinities(nb, 12, threads)
		if err != nil {
			t.Fatal(err)
		}
		if err := afftSparseEqual(got, ref); err != nil {
			t.Errorf("Affinities threads=%d vs 1: %v", threads, err)
		}
		gotExact, err := ExactAffinities(x[:500*6], 500, 6, 12, threads)
		if err != nil {
			t.Fatal(err)
		}
		if err := afftSparseEqual(gotExact, refExact); err != nil {
			t.Errorf("ExactAffinities threads=%d vs 1: %v", threads, err)
		}
	}
	direct, err := ExactNeighbors(x, 1200, 6, NeighborCount(1200, 12), 2)
	if err != nil {
		t.Fatal(err)
	}
	got, err := Affinities(direct, 12, 2)
	if err != nil {
		t.Fatal(err)
	}
	if err := afftSparseEqual(got, ref); err != nil {
		t.Errorf("P from k = 60 list vs direct k = 36 search: %v", err)
	}
}

func TestExactAffinitiesApproachesSparse(t *testing.T) {
	// With k = n − 1 neighbours the kNN P is the dense P (follows from the
	// definitions in van der Maaten 2014): both paths must agree to rounding.
	x := nbtClusters(200, 7, 3, 71)
	nb, err := ExactNeighbors(x, 200, 7, 199, 2)
	if err != nil {
		t.Fatal(err)
	}
	c, err := ConditionalAffinities(nb, 67, 2) // ⌊3·67⌋ > 199, so k = n − 1
	if err != nil {
		t.Fatal(err)
	}
	if c.K != 199 {
		t.Fatalf("got k = %d, want 199", c.K)
	}
	sparse := c.Joint(2)
	dense, err := ExactAffinities(x, 200, 7, 67, 2)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(sparse.RowPtr, dense.RowPtr) || !slices.Equal(sparse.Col, dense.Col) {
		t.Fatal("structure differs")
	}
	for e := range dense.Val {
		if !afftClose(sparse.Val[e], dense.Val[e], 1e-300, 1e-9) {
			t.Fatalf("entry %d: kNN %v vs dense %v", e, sparse.Val[e], dense.Val[e])
		}
	}
}

func ExampleAffinities() {
	// Six points on a line; perplexity 1.5 uses ⌊4.5⌋ = 4 neighbours.
	x := []float64{0, 1, 2, 4, 7, 11}
	nb, err := ExactNeighbors(x, 6, 1, NeighborCount(6, 1.5), 1)
	if err != nil {
		panic(err)
	}
	p, err := Affinities(nb, 1.5, 1)
	if err != nil {
		panic(err)
	}
	for i := 0; i < p.N; i++ {
		fmt.Printf("%d:", i)
		for e := p.RowPtr[i]; e < p.RowPtr[i+1]; e++ {
			fmt.Printf(" %d=%.4f", p.Col[e], p.Val[e])
		}
		fmt.Println()
	}
	// Output:
	// 0: 1=0.1133 2=0.0160 3=0.0001 4=0.0000
	// 1: 0=0.1133 2=0.1163 3=0.0042 4=0.0000 5=0.0003
	// 2: 0=0.0160 1=0.1163 3=0.0791 4=0.0007 5=0.0010
	// 3: 0=0.0001 1=0.0042 2=0.0791 4=0.0773 5=0.0082
	// 4: 0=0.0000 1=0.0000 2=0.0007 3=0.0773 5=0.0834
	// 5: 1=0.0003 2=0.0010 3=0.0082 4=0.0834
}

func ExampleConditionalAffinities() {
	// Four points on a line, perplexity 2 (k = min(n − 1, 6) = 3): β is
	// found by bisection so that each row's entropy is ln 2 = 0.69315 nats
	// within 1e-5.
	x := []float64{0, 1, 3, 6}
	nb, err := ExactNeighbors(x, 4, 1, 3, 1)
	if err != nil {
		panic(err)
	}
	c, err := ConditionalAffinities(nb, 2, 1)
	if err != nil {
		panic(err)
	}
	for i := 0; i < c.N; i++ {
		row := c.P[i*c.K : (i+1)*c.K]
		fmt.Printf("%d: neighbours %v p %.4f β %.4f H %.5f\n", i, c.Index[i*c.K:(i+1)*c.K], row, c.Beta[i], afftEntropy(row))
	}
	// Output:
	// 0: neighbours [1 2 3] p [0.6839 0.2980 0.0181] β 0.1038 H 0.69315
	// 1: neighbours [0 2 3] p [0.6320 0.3609 0.0071] β 0.1868 H 0.69315
	// 2: neighbours [1 0 3] p [0.7729 0.1135 0.1135] β 0.3836 H 0.69315
	// 3: neighbours [2 1 0] p [0.7586 0.1766 0.0648] β 0.0911 H 0.69315
}

func ExampleExactAffinities() {
	// Four points on a line, every pair, perplexity 2.
	x := []float64{0, 1, 3, 6}
	p, err := ExactAffinities(x, 4, 1, 2, 1)
	if err != nil {
		panic(err)
	}
	for i := 0; i < p.N; i++ {
		a, b := p.RowPtr[i], p.RowPtr[i+1]
		fmt.Printf("%d: %v %.4f\n", i, p.Col[a:b], p.Val[a:b])
	}
	// Output:
	// 0: [1 2 3] [0.1645 0.0514 0.0104]
	// 1: [0 2 3] [0.1645 0.1417 0.0230]
	// 2: [0 1 3] [0.0514 0.1417 0.1090]
	// 3: [0 1 2] [0.0104 0.0230 0.1090]
}

// BenchmarkAffinities measures calibration plus symmetrisation at
// perplexity 30 (k = 90) from precomputed neighbours of a seeded
// 5-dimensional Gaussian mixture (the cost does not depend on d). Run with
//
//	go test -run '^$' -bench Affinities ./tsne/
//
// PLUMB_LONG=1 adds n = 100000 (its neighbour set-up takes a while).
func BenchmarkAffinities(b *testing.B) {
	sizes := []int{10000}
	if nbtLong() {
		sizes = append(sizes, 100000)
	}
	var sink *Sparse
	for _, n := range sizes {
		x := nbtClusters(n, 5, 10, 81)
		nb, err := ExactNeighbors(x, n, 5, 90, 0)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				sink, err = Affinities(nb, 30, 0)
				if err != nil {
					b.Fatal(err)
				}
			}
		})
	}
	_ = sink
}

// BenchmarkExactAffinities measures the dense P on the digits (n = 1797).
func BenchmarkExactAffinities(b *testing.B) {
	x, n, d := nbtDigits(b)
	var sink *Sparse
	b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			var err error
			sink, err = ExactAffinities(x, n, d, 30, 0)
			if err != nil {
				b.Fatal(err)
			}
		}
	})
	_ = sink
}
