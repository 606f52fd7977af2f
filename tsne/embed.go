package tsne

import (
	"fmt"
	"math"
)

// EmbedConfig holds the settings of Embed: the optimiser's Config plus the
// input-side choices.
type EmbedConfig struct {
	Config
	// Perplexity sets the effective number of neighbours of each point.
	// If Perplexity is 0, 30 is used. It needs N − 1 ≥ 3·Perplexity.
	Perplexity float64
	// Init selects the initial layout. If Init is "", InitPCA is used.
	Init Init
	// Seed drives every random choice (the random initialisation).
	Seed uint64
	// Neighbors selects the neighbour search: "exact" (ExactNeighbors),
	// "approx" (ApproxNeighbors, seeded by Seed), or "" / "auto": as
	// Choose decides.
	Neighbors string
}

// Embed computes a two-dimensional t-SNE embedding of x (n×d, row-major):
// the k = NeighborCount(n, perplexity) nearest neighbours of each point,
// the joint affinities P over them (Affinities), the initial layout
// (PCAInit or RandomInit from Seed) and gradient descent (Optimize).
//
// For n ≥ LocalityMinN the points are renumbered internally
// (LocalityOrder) so that neighbours are near in memory; the result, and
// the layout passed to a Progress callback, are in input order.
//
// Configuration errors (perplexity ≤ 0 or too large for n, learning rate
// < 0, exaggeration < 1, fewer iterations than exaggeration iterations,
// unknown method, initialisation or neighbour search) are reported before
// any work is done.
func Embed(x []float64, n, d int, cfg EmbedConfig) (*Result, error) {
	if err := checkEmbedConfig(&cfg, n, d, len(x)); err != nil {
		return nil, err
	}
	threads := resolveThreads(cfg.Threads)
	k := NeighborCount(n, cfg.Perplexity)
	nb, err := FindNeighbors(x, n, d, k, cfg.Neighbors, cfg.Seed, threads)
	if err != nil {
		return nil, fmt.Errorf("tsne: neighbours: %w", err)
	}
	// Large inputs are renumbered so that neighbours are near in memory;
	// the initial layout follows and the result is put back in input order.
	order := Localize(nb, localityMinN)
	p, err := Affinities(nb, cfg.Perplexity, threads)
	nb = nil
	if err != nil {
		return nil, fmt.Errorf("tsne: affinities (perplexity %g): %w", cfg.Perplexity, err)
	}
	var init []float64
	switch cfg.Init {
	case InitPCA:
		if init, err = PCAInit(x, n, d); err != nil {
			return nil, err
		}
	case InitRandom:
		init = RandomInit(n, cfg.Seed)
	}
	if order == nil {
		return Optimize(p, init, cfg.Config)
	}
	if user := cfg.Progress; user != nil {
		// The callback sees the layout in input order.
		buf := make([]float64, 2*n)
		cfg.Progress = func(pr Progress) bool {
			unpermuteInto(buf, pr.Y, order)
			pr.Y = buf
			return user(pr)
		}
	}
	res, err := Optimize(p, PermuteLayout(init, order), cfg.Config)
	if res != nil {
		res.Y = UnpermuteLayout(res.Y, order)
	}
	return res, err
}

// checkEmbedConfig fills defaults in cfg and reports the first problem.
func checkEmbedConfig(cfg *EmbedConfig, n, d, lenX int) error {
	if n < 2 || d < 1 || lenX != n*d {
		return fmt.Errorf("tsne: need at least 2 points with at least 1 feature, got %d values for %d×%d", lenX, n, d)
	}
	if cfg.Perplexity == 0 {
		cfg.Perplexity = 30
	}
	switch {
	case !(cfg.Perplexity > 0) || math.IsInf(cfg.Perplexity, 0):
		return fmt.Errorf("tsne: perplexity %g must be positive", cfg.Perplexity)
	case float64(n-1) < 3*cfg.Perplexity:
		return fmt.Errorf("tsne: perplexity %g needs at least %d points (n − 1 ≥ 3·perplexity), got %d",
			cfg.Perplexity, int(math.Ceil(3*cfg.Perplexity))+1, n)
	}
	switch cfg.Init {
	case "":
		cfg.Init = InitPCA
	case InitPCA, InitRandom:
	default:
		return fmt.Errorf("tsne: unknown initialisation %q (want pca or random)", cfg.Init)
	}
	if cfg.Init == InitPCA && d < 2 {
		return fmt.Errorf("tsne: PCA initialisation needs at least 2 features, got %d (use random initialisation)", d)
	}
	s, err := ResolveNeighbors(cfg.Neighbors, n, d)
	if err != nil {
		return err
	}
	cfg.Neighbors = s
	if cfg.Method == "" || cfg.Method == MethodAuto {
		cfg.Method = Choose(n, d).Method
	}
	_, err = resolveConfig(cfg.Config, n)
	return err
}
