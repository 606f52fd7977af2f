package sweep

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"plumb/internal/dataset"
	"plumb/tsne"
)

// TestSubsampleDraw checks the subsample's size and order, and that it
// depends on the seed only.
func TestSubsampleDraw(t *testing.T) {
	for _, tc := range []struct {
		n    int
		f    float64
		want int
	}{{150, 0.9, 135}, {1797, 0.9, 1618}, {10, 0.25, 3}, {7, 0.5, 4}} {
		a := Subsample(tc.n, tc.f, 3)
		if len(a) != tc.want || SubsampleSize(tc.n, tc.f) != tc.want {
			t.Fatalf("n=%d F=%g: got %d rows, want ⌈F·n⌉ = %d", tc.n, tc.f, len(a), tc.want)
		}
		for i := 1; i < len(a); i++ {
			if a[i] <= a[i-1] {
				t.Fatalf("rows not ascending and distinct at %d: %v", i, a[:i+1])
			}
		}
		b := Subsample(tc.n, tc.f, 3)
		c := Subsample(tc.n, tc.f, 4)
		same, other := true, true
		for i := range a {
			same = same && a[i] == b[i]
			other = other && a[i] == c[i]
		}
		if !same {
			t.Errorf("n=%d: the same seed drew another subsample", tc.n)
		}
		if other && tc.want < tc.n-1 && tc.n > 20 {
			t.Errorf("n=%d: seeds 3 and 4 drew the same subsample", tc.n)
		}
	}
	if Subsample(100, 1, 1) != nil {
		t.Error("F = 1 should mean every row (nil)")
	}
}

func digits(t testing.TB) *dataset.Dataset {
	t.Helper()
	ds, err := dataset.Read("../testdata/digits.csv", dataset.Options{IDColumn: "id", LabelColumn: "digit"})
	if err != nil {
		t.Fatal(err)
	}
	return ds
}

// TestSubsampleNeighborsExact checks the exactness claim of
// subsetNeighbors on an open dataset (UCI optical digits, testdata/digits.csv):
// the lists derived from one larger shared search equal, bit for bit, a
// fresh exact search (tsne.ExactNeighbors) of the subsample; and they stay
// equal when the shared lists are too short for many points, which are
// then searched again.
func TestSubsampleNeighborsExact(t *testing.T) {
	ds := digits(t)
	plan, err := Spec{Perplexity: "10,30", Subsample: "0.5,0.9,1"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	kBig := sharedNeighborCount(ds.N, plan)
	full, err := tsne.ExactNeighbors(ds.X, ds.N, ds.D, kBig, 0)
	if err != nil {
		t.Fatal(err)
	}
	short, err := tsne.ExactNeighbors(ds.X, ds.N, ds.D, tsne.NeighborCount(ds.N, 30), 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []float64{0.5, 0.9} {
		for _, seed := range []uint64{1, 7} {
			rows := Subsample(ds.N, f, seed)
			m := len(rows)
			k := tsne.NeighborCount(m, 30)
			want, err := tsne.ExactNeighbors(selectRows(ds.X, ds.D, rows), m, ds.D, k, 0)
			if err != nil {
				t.Fatal(err)
			}
			for _, tc := range []struct {
				name string
				from *tsne.Neighbors
			}{{"shared", full}, {"short", short}} {
				got, again, err := subsetNeighbors(tc.from, rows, ds.X, ds.D, k, 0)
				if err != nil {
					t.Fatal(err)
				}
				for i := range want.Index {
					if got.Index[i] != want.Index[i] || math.Float64bits(got.Dist[i]) != math.Float64bits(want.Dist[i]) {
						t.Fatalf("F=%g seed %d (%s lists, K=%d): row %d column %d: got %d (%v) want %d (%v)", f, seed, tc.name, tc.from.K,
							i/k, i%k, got.Index[i], got.Dist[i], want.Index[i], want.Dist[i])
					}
				}
				if tc.name == "short" && again == 0 {
					t.Errorf("F=%g: lists of k=%d cannot hold k members of a subsample for every point, yet none was searched again", f, short.K)
				}
				if tc.name == "shared" && again > m/100 {
					// The margin of sharedNeighborCount (five standard
					// deviations) makes a second search rare.
					t.Errorf("F=%g seed %d: %d of %d points searched again with K=%d", f, seed, again, m, kBig)
				}
			}
		}
	}
}

// TestGoldenSubsampleIDs pins the ids of settings on subsamples, and
// checks that F = 1 leaves every id and the plan hash as they were
// (TestGoldenIDs holds those values).
func TestGoldenSubsampleIDs(t *testing.T) {
	base, err := Spec{Perplexity: "30,5", LearningRate: "auto,200", Seeds: "1-2", Theta: "0.5"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	one, err := Spec{Perplexity: "30,5", LearningRate: "auto,200", Seeds: "1-2", Theta: "0.5", Subsample: "1"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	if one.Hash() != base.Hash() || one.Hash() != "7456a6318e07dc44" {
		t.Errorf("--subsample 1: plan hash %s, want the plan's hash without it, 7456a6318e07dc44", one.Hash())
	}
	p, err := Spec{Perplexity: "5", Seeds: "1-2", Theta: "0.5", Subsample: "1,0.9"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	ss := p.Settings()
	if len(ss) != 2 {
		t.Fatalf("got %d settings, want 2", len(ss))
	}
	// GNU coreutils sha256sum of the canonical text gave the ids below.
	want := []struct{ canonical, id string }{
		{"plumb-setting-v1|perplexity=5|learning_rate=auto|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5|subsample=0.9", "ee14e6a076"},
		{"plumb-setting-v1|perplexity=5|learning_rate=auto|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5", "66deb36dc0"},
	}
	for i, s := range ss {
		if s.Canonical() != want[i].canonical || s.ID != want[i].id {
			t.Errorf("setting %d: got %s %s want %s %s", i, s.Canonical(), s.ID, want[i].canonical, want[i].id)
		}
	}
	if got, want := p.Canonical(), "plumb-plan-v1|perplexity=5|learning_rate=auto|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5|seeds=1,2|neighbors=auto|kl_every=50|subsample=0.9,1"; got != want {
		t.Errorf("plan canonical: got %s want %s", got, want)
	}
	for _, bad := range []string{"0", "1.5", "-0.1", "0.9,0.9", "x"} {
		if _, err := (Spec{Subsample: bad}).Plan(); err == nil {
			t.Errorf("--subsample %s: got no error", bad)
		}
	}
}

// irisSubsampleStudy sweeps iris (perplexity 10, PCA start) on all points
// and on 80 % subsamples, seeds 1-3, and scores it.
func irisSubsampleStudy(t *testing.T, init string) (string, *Study) {
	t.Helper()
	ds := iris(t)
	plan, err := Spec{Perplexity: "10", Seeds: "3", Subsample: "0.8,1", Init: init, Iters: "500", ExaggerationIters: "100"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	dir := filepath.Join(t.TempDir(), "study")
	if _, err := Execute(context.Background(), ds, plan, Options{Dir: dir, Version: "test", Jobs: 2, Threads: 1}); err != nil {
		t.Fatal(err)
	}
	if _, err := Score(context.Background(), dir, ds, ScoreOptions{}); err != nil {
		t.Fatal(err)
	}
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	return dir, st
}

// TestPCAStudyNotMeasured: on a real PCA-initialised study (iris, three
// seeds) the runs on all points are bit-identical, so their stability is
// stored as null with its reason, and Varied says nothing varied; the
// runs on subsamples of the same study vary and get a reading on their
// shared points.
func TestPCAStudyNotMeasured(t *testing.T) {
	_, st := irisSubsampleStudy(t, "pca")
	if len(st.SettingScores) != 2 {
		t.Fatalf("got %d settings", len(st.SettingScores))
	}
	for _, ss := range st.SettingScores {
		runs := []*Run{}
		for _, r := range st.Planned {
			if r.Setting.ID == ss.ID {
				runs = append(runs, r)
			}
		}
		var layouts [][]float64
		var rows [][]int32
		for _, r := range runs {
			y, rr, err := readLayoutRows(st.Dir, st.Info, r)
			if err != nil {
				t.Fatal(err)
			}
			layouts, rows = append(layouts, y), append(rows, rr)
		}
		switch ss.Fraction() {
		case 1:
			if ss.Varied != "" || ss.NotMeasured != NotVariedReason {
				t.Errorf("pca on all points: varied %q, reason %q; want \"\" and NotVariedReason", ss.Varied, ss.NotMeasured)
			}
			// The after-the-fact check agrees on real layouts.
			if !identicalLayouts(layouts, rows) {
				t.Error("pca runs on all points are not bit-identical")
			}
			if !math.IsNaN(ss.Disparity.Median) || !math.IsNaN(ss.Jaccard.Median) || !math.IsNaN(ss.UnstableShare) {
				t.Errorf("not measured, yet disparity %v jaccard %v unstable %v", ss.Disparity, ss.Jaccard, ss.UnstableShare)
			}
			for _, p := range st.Pairs {
				if p.SettingID == ss.ID && (!math.IsNaN(p.Disparity) || !math.IsNaN(p.Jaccard)) {
					t.Errorf("pair %s/%s: disparity %v jaccard %v, want null", p.RunA, p.RunB, p.Disparity, p.Jaccard)
				}
			}
			for _, p := range st.Points {
				if p.SettingID == ss.ID && !math.IsNaN(p.Spread) {
					t.Fatalf("point %d: spread %v, want null", p.Point, p.Spread)
				}
			}
		default:
			if ss.Varied != VariedSubsample || ss.NotMeasured != "" {
				t.Errorf("pca on subsamples: varied %q reason %q, want subsample", ss.Varied, ss.NotMeasured)
			}
			if identicalLayouts(layouts, rows) {
				t.Error("subsample runs identical")
			}
			// A real reading: the maps differ, but far from chance
			// (disparity of unrelated layouts is near 1; common practice).
			if d := ss.Disparity.Median; !(d > 1e-6 && d < 0.5) {
				t.Errorf("subsample disparity median %v, want in (1e-6, 0.5)", d)
			}
			if j := ss.Jaccard.Median; !(j > 0.2 && j < 1) {
				t.Errorf("subsample Jaccard median %v, want in (0.2, 1)", j)
			}
			for _, p := range st.Pairs {
				if p.SettingID == ss.ID {
					// Two subsamples of 120 of 150 points share at least 90.
					if p.Points < 90 || p.Points >= 120 {
						t.Errorf("pair %s/%s on %d points, want the shared points of two 120-point subsamples", p.RunA, p.RunB, p.Points)
					}
				}
			}
			for _, r := range st.RunScores {
				if r.SettingID == ss.ID && r.Points != 120 {
					t.Errorf("run %s scored on %d points, want 120", r.RunID, r.Points)
				}
			}
		}
	}
}

// writeLayoutsCSV writes layouts as run,point,x,y with every digit.
func writeLayoutsCSV(path string, names []string, layouts [][]float64, rows [][]int32) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := csv.NewWriter(f)
	w.Write([]string{"run", "point", "x", "y"})
	for s, y := range layouts {
		for i := 0; i < len(y)/2; i++ {
			w.Write([]string{names[s], strconv.Itoa(int(rows[s][i])), strconv.FormatFloat(y[2*i], 'g', 17, 64), strconv.FormatFloat(y[2*i+1], 'g', 17, 64)})
		}
	}
	w.Flush()
	if err := w.Error(); err != nil {
		return err
	}
	return f.Close()
}

// TestPairOnCommonReference checks the pair scores on the points two
// subsample runs share against scipy.spatial.procrustes (disparity) and a
// numpy Jaccard of each shared point's k = 15 nearest neighbours among the
// shared rows: testdata/subsample_pairs/make_reference.py (Debian 12:
// Python 3.11.2, numpy 1.24.2, scipy 1.10.1; versions in reference.json) on
// layouts.csv, two runs of an iris sweep on 80 % subsamples (written by
// this test with PLUMB_WRITE_FIXTURES=1).
func TestPairOnCommonReference(t *testing.T) {
	dir := "../testdata/subsample_pairs"
	if os.Getenv("PLUMB_WRITE_FIXTURES") == "1" {
		_, st := irisSubsampleStudy(t, "random")
		var layouts [][]float64
		var rows [][]int32
		var names []string
		for _, r := range st.Planned {
			if r.Setting.Fraction() < 1 && len(layouts) < 3 {
				y, rr, err := readLayoutRows(st.Dir, st.Info, r)
				if err != nil {
					t.Fatal(err)
				}
				layouts, rows, names = append(layouts, y), append(rows, rr), append(names, r.ID)
			}
		}
		if err := writeLayoutsCSV(filepath.Join(dir, "layouts.csv"), names, layouts, rows); err != nil {
			t.Fatal(err)
		}
		t.Log("wrote layouts.csv; now run make_reference.py")
	}
	layouts, rows, names := readLayoutsCSV(t, filepath.Join(dir, "layouts.csv"))
	b, err := os.ReadFile(filepath.Join(dir, "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		K     int `json:"k"`
		Pairs []struct {
			A, B      string
			Common    int     `json:"common"`
			Disparity float64 `json:"disparity"`
			Jaccard   float64 `json:"jaccard"`
		} `json:"pairs"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Pairs) == 0 {
		t.Fatal("no reference pairs")
	}
	idx := map[string]int{}
	for i, n := range names {
		idx[n] = i
	}
	for _, p := range ref.Pairs {
		a, b := idx[p.A], idx[p.B]
		d, j, _, common := PairOnCommon(layouts[a], rows[a], layouts[b], rows[b], ref.K)
		if common != p.Common {
			t.Errorf("%s/%s: %d shared points, want %d", p.A, p.B, common, p.Common)
		}
		// scipy 1.10.1: disparity to rounding (two SVD routes); numpy: the
		// same neighbour sets, so the same mean of exact fractions.
		if math.Abs(d-p.Disparity) > 1e-12 {
			t.Errorf("%s/%s: disparity %.17g, scipy %.17g", p.A, p.B, d, p.Disparity)
		}
		if math.Abs(j-p.Jaccard) > 1e-12 {
			t.Errorf("%s/%s: Jaccard %.17g, numpy %.17g", p.A, p.B, j, p.Jaccard)
		}
	}
}

func readLayoutsCSV(t *testing.T, path string) (layouts [][]float64, rows [][]int32, names []string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	at := map[string]int{}
	for _, r := range recs[1:] {
		s, ok := at[r[0]]
		if !ok {
			s = len(names)
			at[r[0]] = s
			names = append(names, r[0])
			layouts = append(layouts, nil)
			rows = append(rows, nil)
		}
		pt, err1 := strconv.Atoi(r[1])
		x, err2 := strconv.ParseFloat(r[2], 64)
		y, err3 := strconv.ParseFloat(r[3], 64)
		if err1 != nil || err2 != nil || err3 != nil {
			t.Fatal(fmt.Sprint("bad row ", r))
		}
		layouts[s] = append(layouts[s], x, y)
		rows[s] = append(rows[s], int32(pt))
	}
	return
}
