package report

import (
	"encoding/base64"
	"encoding/binary"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
	"testing"
)

// pageBudget is the stated ceiling on index.html for a study of 12
// settings × 100,000 points with three runs each (our choice: it loads in
// a few seconds from a local disk; see internal/scripts/browser/big.sh for
// the measured size and time).
const pageBudget = 16 << 20

// scaledStudy builds a seeded, made-up study of n points in labels groups
// of falling size, with perplexities × learning rates settings (12 for
// 4 × 3) and runs aligned layouts per setting. Synthetic data for the page's
// size and speed, not a claim about t-SNE.
func scaledStudy(n, runs, labels int) *studyview.View {
	r := rand.New(rand.NewPCG(21, 22))
	perps, lrs := []string{"5", "15", "30", "50"}, []string{"auto", "200", "1000"}
	st := &studyview.View{Dir: "scaled", Tool: "plumb", Version: "test", Created: "2026-01-01T00:00:00Z", PlanHash: "abc",
		Input: studyview.Input{Path: "scaled.csv", Fingerprint: "f", N: n, D: 20, LabelColumn: "group", Preprocessing: "none"},
		Grid:  []studyview.Param{{Name: "perplexity", Values: perps}, {Name: "learning_rate", Values: lrs}, {Name: "exaggeration_iters", Values: []string{"250"}}},
		K:     15, Gradient: "FFT-accelerated interpolation"}
	for s := 1; s <= runs; s++ {
		st.Seeds = append(st.Seeds, uint64(s))
	}
	// Group g holds a share ∝ 1/(g+1) of the points, around its own centre.
	var w []float64
	tot := 0.0
	for g := 0; g < labels; g++ {
		w = append(w, 1/float64(g+1))
		tot += w[g]
	}
	base := make([]float64, 2*n)
	wobble := make([]float64, n)
	for i := 0; i < n; i++ {
		u, g := r.Float64()*tot, 0
		for g < labels-1 && u > w[g] {
			u -= w[g]
			g++
		}
		a := 2 * math.Pi * float64(g) / float64(labels)
		rad := 30 + 10*float64(g%3)
		st.IDs = append(st.IDs, fmt.Sprintf("pt-%06d", i))
		st.Labels = append(st.Labels, fmt.Sprintf("group %02d", g))
		base[2*i] = rad*math.Cos(a) + 3*r.NormFloat64()
		base[2*i+1] = rad*math.Sin(a) + 3*r.NormFloat64()
		wobble[i] = math.Abs(r.NormFloat64())
		if r.IntN(50) == 0 {
			wobble[i] *= 8 // some points move a lot between runs
		}
	}
	for pi, perp := range perps {
		for li, lr := range lrs {
			id := fmt.Sprintf("s-%s-%s", perp, lr)
			noise := 2 / float64(pi+1)
			s := studyview.Setting{ID: id, RunsDone: runs, Runs: runs, Params: []studyview.Field{{Name: "perplexity", Value: perp}, {Name: "learning_rate", Value: lr}, {Name: "exaggeration_iters", Value: "250"}}}
			th := float64(pi*3+li) * 0.5
			cs, sn := math.Cos(th), math.Sin(th)
			s.Consensus = make([]float64, 2*n)
			s.Spread = make([]float64, n)
			s.Unstable = make([]bool, n)
			for i := 0; i < n; i++ {
				x, y := base[2*i]+noise*r.NormFloat64(), base[2*i+1]+noise*r.NormFloat64()
				s.Consensus[2*i], s.Consensus[2*i+1] = cs*x-sn*y, sn*x+cs*y
				s.Spread[i] = noise * wobble[i]
				s.Unstable[i] = wobble[i] > 3
			}
			for k := 0; k < runs; k++ {
				xy := make([]float64, 2*n)
				for i := 0; i < n; i++ {
					xy[2*i] = s.Consensus[2*i] + s.Spread[i]*r.NormFloat64()
					xy[2*i+1] = s.Consensus[2*i+1] + s.Spread[i]*r.NormFloat64()
				}
				s.RunLayouts = append(s.RunLayouts, studyview.RunLayout{RunID: fmt.Sprintf("%s-%d", id, k+1), Seed: uint64(k + 1), XY: xy})
				st.Runs = append(st.Runs, studyview.Run{ID: fmt.Sprintf("%s-%d", id, k+1), SettingID: id, Seed: uint64(k + 1), Status: "done", KL: 2 - 0.2*float64(pi),
					Trustworthiness: 0.9 + 0.01*float64(pi), Continuity: 0.9, KNNRecall: 0.4, DistanceSpearman: 0.5, LabelAccuracy: 0.9,
					Trace: []studyview.TracePoint{{Iter: 0, KL: 6}, {Iter: 250, KL: 4}, {Iter: 500, KL: 2.2 - 0.2*float64(pi)}, {Iter: 1000, KL: 2 - 0.2*float64(pi)}}})
			}
			s.Trustworthiness = stability.MedianIQR{Median: 0.9 + 0.01*float64(pi) - 0.002*float64(li), IQR: 0.002}
			s.Continuity, s.KNNRecall, s.DistanceSpearman = stability.MedianIQR{Median: 0.9, IQR: 0.01}, stability.MedianIQR{Median: 0.4, IQR: 0.01}, stability.MedianIQR{Median: 0.5, IQR: 0.01}
			s.LabelAccuracy, s.LabelPurity, s.PairSpearman = stability.MedianIQR{Median: 0.9, IQR: 0.01}, stability.MedianIQR{Median: 0.9, IQR: 0.01}, stability.MedianIQR{Median: 0.8, IQR: 0.01}
			s.Disparity = stability.MedianIQR{Median: 0.02 * noise, IQR: 0.005}
			s.Jaccard = stability.MedianIQR{Median: 0.8 - 0.1*noise, IQR: 0.01}
			s.KL = stability.MedianIQR{Median: 2 - 0.2*float64(pi) + 0.01*float64(li), IQR: 0.01}
			st.Settings = append(st.Settings, s)
		}
	}
	return st
}

// TestBigPage writes the report of a 12 settings × 100,000 points × 3 runs
// study into $PLUMB_BIG_PAGE and checks index.html against pageBudget; it
// is skipped unless that variable names a directory to write into.
// internal/scripts/browser/big.sh runs it, then measures the page's load
// time in chromium and drives it.
func TestBigPage(t *testing.T) {
	dir := os.Getenv("PLUMB_BIG_PAGE")
	if dir == "" {
		t.Skip("set PLUMB_BIG_PAGE=DIR to write the large page (internal/scripts/browser/big.sh)")
	}
	st := scaledStudy(100_000, 3, 25)
	out, err := Write(st, filepath.Join(dir, "report"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(out.Index)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("index.html: %d bytes (%.1f MiB; budget %.0f MiB)", fi.Size(), float64(fi.Size())/(1<<20), float64(pageBudget)/(1<<20))
	if fi.Size() > pageBudget {
		t.Errorf("index.html is %d bytes, over the budget of %d", fi.Size(), pageBudget)
	}
}

// The page's display sample: all points up to maxShownPoints, in a seeded
// order that is the same on every write; beyond it, maxShownPoints distinct
// points. Runs show a prefix of the same order.
func TestDisplayOrder(t *testing.T) {
	for _, n := range []int{0, 1, 10, maxShownPoints, maxShownPoints + 7} {
		a, b := displayOrder(n), displayOrder(n)
		if want := min(n, maxShownPoints); len(a) != want {
			t.Errorf("n=%d: got %d points want %d", n, len(a), want)
		}
		seen := make(map[int]bool, len(a))
		for k, p := range a {
			if p < 0 || p >= n || seen[p] || b[k] != p {
				t.Fatalf("n=%d: order not a fixed sample of distinct points (at %d: %d)", n, k, p)
			}
			seen[p] = true
		}
	}
}

// The page carries run layouts: on a small scaled study every run of every
// setting is in the data with the sample's points.
func TestPageDataRuns(t *testing.T) {
	st := scaledStudy(500, 2, 25)
	d, err := buildPageData(st, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Settings) != 12 || len(d.Settings[3].Runs) != 2 {
		t.Fatalf("got %d settings, %d runs in the fourth; want 12 and 2", len(d.Settings), len(d.Settings[3].Runs))
	}
	// 25 labels: 19 keep their colours, the rest are "other" from index 19.
	if d.LabelOther != 19 || len(d.LabelNames) != 25 {
		t.Errorf("labels: other from %d of %d, want 19 of 25", d.LabelOther, len(d.LabelNames))
	}
}

// Map clusters and per-point stability, when the study has them, reach the
// page: cluster id + 1 per shown point (0 for none), stability stored as
// 1 − value on its own fixed [0, 1] scale.
func TestPageDataClustersAndStability(t *testing.T) {
	st := scaledStudy(300, 2, 3)
	for i := range st.Settings {
		s := &st.Settings[i]
		s.Clusters = make([]int32, 300)
		s.Stability = make([]float64, 300)
		for p := range s.Clusters {
			s.Clusters[p] = int32(p%4) - 1 // −1 (none), 0, 1, 2
			s.Stability[p] = float64(p%5) / 4
		}
	}
	d, err := buildPageData(st, 0, 0)
	if err != nil {
		t.Fatal(err)
	}
	if !d.HasClusters || d.Stability.Name != "stability" || !d.Stability.Invert {
		t.Fatalf("got clusters %v, scale %+v; want clusters and the stability scale", d.HasClusters, d.Stability)
	}
	order := displayOrder(300)
	codes, _ := base64.StdEncoding.DecodeString(d.Settings[2].Clusters)
	u, _ := base64.StdEncoding.DecodeString(d.Settings[2].U)
	for k, p := range order {
		if got, want := int(binary.LittleEndian.Uint16(codes[2*k:])), p%4; got != want {
			t.Fatalf("point %d: cluster code %d want %d", p, got, want)
		}
		if got, want := int(u[k]), int(math.Round(254*(1-float64(p%5)/4))); got != want {
			t.Fatalf("point %d: stored stability %d want %d", p, got, want)
		}
	}
}
