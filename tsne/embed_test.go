package tsne_test

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"plumb/tsne"
)

func TestEmbedConfigErrors(t *testing.T) {
	// Source: engine issue — bad settings get one clear error before any
	// work; n − 1 ≥ 3·perplexity is the usual requirement of k = 3·perplexity
	// neighbours (van der Maaten 2014).
	q := readLabelled(t, "iris.csv", "species") // n = 150, d = 4
	for _, tc := range []struct {
		name string
		cfg  tsne.EmbedConfig
		want string
	}{
		{"negative perplexity", tsne.EmbedConfig{Perplexity: -5}, "perplexity -5 must be positive"},
		{"NaN perplexity", tsne.EmbedConfig{Perplexity: math.NaN()}, "must be positive"},
		{"perplexity too large", tsne.EmbedConfig{Perplexity: 50}, "needs at least 151 points"},
		{"negative learning rate", tsne.EmbedConfig{Config: tsne.Config{LearningRate: -10}}, "learning rate -10"},
		{"exaggeration below 1", tsne.EmbedConfig{Config: tsne.Config{Exaggeration: 0.9}}, "exaggeration 0.9 must be at least 1"},
		{"iterations below exaggeration", tsne.EmbedConfig{Config: tsne.Config{Iters: 200}}, "fewer than the 250 exaggeration iterations"},
		{"unknown method", tsne.EmbedConfig{Config: tsne.Config{Method: "fast"}}, "unknown gradient method"},
		{"unknown init", tsne.EmbedConfig{Init: "spectral"}, "unknown initialisation"},
		{"unknown neighbours", tsne.EmbedConfig{Neighbors: "lsh"}, "unknown neighbour search"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := tsne.Embed(q.x, q.n, q.d, tc.cfg)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got %v, want an error containing %q", err, tc.want)
			}
		})
	}
	if _, err := tsne.Embed(q.x[:150], 150, 1, tsne.EmbedConfig{}); err == nil || !strings.Contains(err.Error(), "PCA initialisation needs at least 2 features") {
		t.Errorf("one feature with PCA init: got %v", err)
	}
	if _, err := tsne.Embed(q.x[:150], 150, 1, tsne.EmbedConfig{Init: tsne.InitRandom, Config: tsne.Config{Iters: 300}}); err != nil {
		t.Errorf("one feature with random init: got %v, want success", err)
	}
}

func TestEmbedDuplicatePoints(t *testing.T) {
	// Source: engine issue — duplicate points are allowed and must not
	// divide by zero. Half of the 120 points are copies of the other half.
	q := readLabelled(t, "iris.csv", "species")
	x := append([]float64(nil), q.x[:60*q.d]...)
	x = append(x, q.x[:60*q.d]...)
	for _, m := range []tsne.Method{tsne.MethodExact, tsne.MethodBarnesHut} {
		res, err := tsne.Embed(x, 120, q.d, tsne.EmbedConfig{Perplexity: 10, Config: tsne.Config{Method: m, Iters: 300}})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		if math.IsNaN(res.KL) || math.IsInf(res.KL, 0) || res.KL < 0 {
			t.Errorf("%s: KL %v, want finite and non-negative", m, res.KL)
		}
	}
}

func BenchmarkEmbedDigits(b *testing.B) {
	// The digits run of TestDigitsQuality (Barnes-Hut, perplexity 30, PCA,
	// 1000 iterations), end to end: neighbours, P, init, optimisation.
	q := readLabelled(b, "digits.csv", "digit")
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := tsne.Embed(q.x, q.n, q.d, tsne.EmbedConfig{Config: tsne.Config{Method: tsne.MethodBarnesHut}}); err != nil {
			b.Fatal(err)
		}
	}
}

func ExampleLearningRateAuto() {
	// 4-in-gradient convention: max(n/(4·12), 50).
	fmt.Printf("%.1f %.1f\n", tsne.LearningRateAuto(1797, 12), tsne.LearningRateAuto(70000, 12))
	// Output: 50.0 1458.3
}

func ExampleKL() {
	// Three points, all pairs weighted equally: p_ij = 1/6.
	p := &tsne.Sparse{N: 3, RowPtr: []int{0, 2, 4, 6},
		Col: []int32{1, 2, 0, 2, 0, 1},
		Val: []float64{1. / 6, 1. / 6, 1. / 6, 1. / 6, 1. / 6, 1. / 6}}
	// An equilateral triangle makes Q uniform too, so KL = 0 (printed as
	// |KL| to hide a rounding-level sign). On a line with spacing 1,
	// w = 1/2, 1/2, 1/5, Z = 2.4, q = 5/24 (four entries) and 1/12 (two), so
	// KL = (4 ln 0.8 + 2 ln 2)/6 = 0.082287 (plain arithmetic).
	tri := []float64{0, 0, 1, 0, 0.5, math.Sqrt(3) / 2}
	line := []float64{0, 0, 1, 0, 2, 0}
	fmt.Printf("%.6f %.6f\n", math.Abs(tsne.ExactKL(tri, p, 1)), tsne.ExactKL(line, p, 1))
	// Output: 0.000000 0.082287
}

func ExampleEmbed() {
	q, err := loadLabelled("iris.csv", "species")
	if err != nil {
		fmt.Println(err)
		return
	}
	res, err := tsne.Embed(q.x, q.n, q.d, tsne.EmbedConfig{Perplexity: 30})
	if err != nil {
		fmt.Println(err)
		return
	}
	// 150 points: exact gradient, auto learning rate max(150/48, 50).
	fmt.Println(res.Method, res.Iters, len(res.Y), res.LearningRate)
	// Output: exact 1000 300 50
}
