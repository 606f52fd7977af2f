package tsne_test

import (
	"path/filepath"
	"testing"

	"plumb/internal/fixture"
	"plumb/tsne"
)

// qualityData is a labelled open data set read from testdata.
type qualityData struct {
	x      []float64
	n, d   int
	labels []string
}

// readLabelled reads a headed CSV from testdata: column "id" is skipped,
// column labelCol holds the labels, every other column is a feature.
func readLabelled(t testing.TB, name, labelCol string) qualityData {
	t.Helper()
	q, err := loadLabelled(name, labelCol)
	if err != nil {
		t.Fatal(err)
	}
	return q
}

func loadLabelled(name, labelCol string) (qualityData, error) {
	var q qualityData
	t, err := fixture.ReadCSV(filepath.Join("..", "testdata", name))
	if err != nil {
		return q, err
	}
	q.labels = t.Strings(labelCol)
	q.x, q.n, q.d, err = t.Numbers("id", labelCol)
	return q, err
}

// mapNeighbours returns the k nearest map neighbours of point i (self
// excluded, ties by index) by brute force.
func mapNeighbours(y []float64, i, k int) []int {
	n := len(y) / 2
	best := make([]int, 0, k+1)
	dist := func(j int) float64 {
		dx, dy := y[2*i]-y[2*j], y[2*i+1]-y[2*j+1]
		return dx*dx + dy*dy
	}
	for j := 0; j < n; j++ {
		if j == i {
			continue
		}
		dj := dist(j)
		pos := len(best)
		for pos > 0 && dist(best[pos-1]) > dj {
			pos--
		}
		if pos >= k {
			continue
		}
		best = append(best, 0)
		copy(best[pos+1:], best[pos:])
		best[pos] = j
		if len(best) > k {
			best = best[:k]
		}
	}
	return best
}

func TestIrisSetosaSeparated(t *testing.T) {
	// Source: known property of Fisher's (1936) iris data (the copy in
	// scikit-learn, testdata/iris.csv): setosa is linearly separable from
	// the other two species by a wide margin in petal length and width, so
	// in a faithful map every setosa point's 10 nearest neighbours are
	// setosa. The data contain duplicate rows, which must not break the run.
	q := readLabelled(t, "iris.csv", "species")
	for _, m := range []tsne.Method{tsne.MethodExact, tsne.MethodBarnesHut} {
		t.Run(string(m), func(t *testing.T) {
			res, err := tsne.Embed(q.x, q.n, q.d, tsne.EmbedConfig{
				Config:     tsne.Config{Method: m},
				Perplexity: 30,
			})
			if err != nil {
				t.Fatal(err)
			}
			bad := 0
			for i := 0; i < q.n; i++ {
				if q.labels[i] != "setosa" {
					continue
				}
				for _, j := range mapNeighbours(res.Y, i, 10) {
					if q.labels[j] != "setosa" {
						bad++
						t.Errorf("setosa point %d has %s point %d among its 10 nearest map neighbours", i, q.labels[j], j)
					}
				}
			}
			t.Logf("KL %.4f, %d foreign neighbours of setosa points", res.KL, bad)
		})
	}
}

func TestEmbedDeterministicAcrossThreads(t *testing.T) {
	// Source: project rule — same input, parameters and seed give identical
	// layout bits whatever the thread count.
	q := readLabelled(t, "iris.csv", "species")
	for _, m := range []tsne.Method{tsne.MethodExact, tsne.MethodBarnesHut} {
		for _, init := range []tsne.Init{tsne.InitPCA, tsne.InitRandom} {
			t.Run(string(m)+"/"+string(init), func(t *testing.T) {
				var ref *tsne.Result
				for _, th := range []int{1, 2, 8} {
					res, err := tsne.Embed(q.x, q.n, q.d, tsne.EmbedConfig{
						Config:     tsne.Config{Method: m, Threads: th, Iters: 400},
						Perplexity: 20, Init: init, Seed: 42,
					})
					if err != nil {
						t.Fatal(err)
					}
					if ref == nil {
						ref = res
						continue
					}
					if res.KL != ref.KL {
						t.Errorf("threads=%d: KL %v, want %v (threads=1)", th, res.KL, ref.KL)
					}
					for k := range res.Y {
						if res.Y[k] != ref.Y[k] {
							t.Fatalf("threads=%d: Y[%d] = %v, want %v (threads=1)", th, k, res.Y[k], ref.Y[k])
						}
					}
				}
			})
		}
	}
}
