package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/urfave/cli/v2"
	"golang.org/x/term"

	"plumb/internal/dataset"
	"plumb/internal/words"
	"plumb/sweep"
	"plumb/tsne"
)

func init() {
	register(&cli.Command{
		Name:      "embed",
		Usage:     "compute one t-SNE layout of a table",
		ArgsUsage: " ",
		Description: "Reads the input table, builds the perplexity-calibrated affinities and optimises one\n" +
			"two-dimensional layout. The layout is written with one row per point (id, label, x, y);\n" +
			"Parquet files carry the run's parameters and final KL in their metadata, CSV files in a\n" +
			"sidecar FILE.json. Learning rates use the convention with the constant 4 in the gradient\n" +
			"(auto = max(n / (4·exaggeration), 50)).",
		Flags: append(inputFlags(),
			&cli.Float64Flag{Name: "perplexity", Value: 30, Usage: "effective number of neighbours"},
			&cli.StringFlag{Name: "learning-rate", Value: "auto", Usage: "step size, or auto = max(n/(4·exaggeration), 50)"},
			&cli.Float64Flag{Name: "exaggeration", Value: 12, Usage: "early exaggeration factor (1: off)"},
			&cli.IntFlag{Name: "exaggeration-iters", Value: 250, Usage: "iterations with early exaggeration"},
			&cli.IntFlag{Name: "iters", Value: 1000, Usage: "total iterations, exaggeration phase included"},
			&cli.Uint64Flag{Name: "seed", Value: 1, Usage: "random seed (random init; approximate neighbours)"},
			&cli.StringFlag{Name: "init", Value: "pca", Usage: "initial layout: pca or random"},
			&cli.StringFlag{Name: "gradient", Value: "auto", Usage: "gradient method: auto, exact, barnes-hut or fft"},
			&cli.Float64Flag{Name: "theta", Value: tsne.DefaultTheta, Usage: "Barnes-Hut opening angle (smaller is more exact; the default matches scikit-learn's accuracy at its 0.5)"},
			&cli.StringFlag{Name: "neighbors", Value: "auto", Usage: "neighbour search: auto, exact or approx"},
			threadsFlag,
			&cli.StringFlag{Name: "out", Aliases: []string{"o"}, Required: true, Usage: "layout file to write: .parquet or .csv"},
			&cli.BoolFlag{Name: "quiet", Aliases: []string{"q"}, Usage: "no progress or summary on stderr"},
		),
		Action: embedAction,
	})
}

// embedRecord is the run description stored with a layout.
type embedRecord struct {
	Tool              string  `json:"tool"`
	Version           string  `json:"version"`
	Input             string  `json:"input"`
	InputFingerprint  string  `json:"input_fingerprint"`
	N                 int     `json:"n"`
	D                 int     `json:"d"`
	Perplexity        float64 `json:"perplexity"`
	LearningRate      float64 `json:"learning_rate"`
	LearningRateSpec  string  `json:"learning_rate_spec"`
	Exaggeration      float64 `json:"exaggeration"`
	ExaggerationIters int     `json:"exaggeration_iters"`
	Iters             int     `json:"iters"`
	Seed              uint64  `json:"seed"`
	Init              string  `json:"init"`
	Gradient          string  `json:"gradient"`
	Theta             float64 `json:"theta"`
	Neighbors         string  `json:"neighbors"`
	KL                float64 `json:"kl"`
	Seconds           float64 `json:"seconds"`
}

func embedAction(c *cli.Context) error {
	if c.NArg() > 0 {
		return &exitError{code: 2, err: fmt.Errorf("embed takes no arguments, got %q (did you mean --input?)", c.Args().First())}
	}
	path, opt, err := inputOptions(c)
	if err != nil {
		return err
	}
	out := c.String("out")
	format, err := layoutFormat(out)
	if err != nil {
		return err
	}
	if err := checkLayoutOut(out, format, path); err != nil {
		return err
	}
	nthreads, err := threads(c)
	if err != nil {
		return err
	}
	cfg := tsne.EmbedConfig{
		Perplexity: c.Float64("perplexity"),
		Init:       tsne.Init(c.String("init")),
		Seed:       c.Uint64("seed"),
		Neighbors:  c.String("neighbors"),
	}
	cfg.Exaggeration = c.Float64("exaggeration")
	cfg.ExaggerationIters = c.Int("exaggeration-iters")
	cfg.Iters = c.Int("iters")
	cfg.Method = tsne.Method(c.String("gradient"))
	cfg.Theta = c.Float64("theta")
	cfg.Threads = nthreads
	lrSpec := strings.TrimSpace(c.String("learning-rate"))
	if err := checkEmbedFlags(c, lrSpec); err != nil {
		return err
	}
	if lrSpec != "auto" {
		cfg.LearningRate, _ = strconv.ParseFloat(lrSpec, 64)
	}

	data, err := dataset.Read(path, opt)
	if err != nil {
		return err
	}
	quiet := c.Bool("quiet")
	stderr := c.App.ErrWriter
	if !quiet {
		for _, w := range data.Warnings {
			fmt.Fprintf(stderr, "plumb: warning: %s\n", w)
		}
	}
	// The same data checks as a sweep: perplexity against n, variance, and
	// enough features for PCA initialisation.
	one := &sweep.Plan{Perplexity: []float64{cfg.Perplexity}, Init: []string{string(cfg.Init)}}
	if err := sweep.Validate(one, data); err != nil {
		return err
	}
	if cfg.Method == "" || cfg.Method == tsne.MethodAuto {
		cfg.Method = tsne.Choose(data.N, data.D).Method
	}
	if !quiet {
		fmt.Fprintf(stderr, "plumb: %s × %s, perplexity %g, gradient %s\n", words.Count(data.N, "point"), words.Count(data.D, "feature"), cfg.Perplexity, cfg.Method)
	}
	ctx, stop := interruptContext()
	defer stop()
	var bar *progressLine
	if !quiet && isTerminal(stderr) {
		bar = &progressLine{w: stderr}
		defer bar.done()
	}
	cfg.Progress = func(p tsne.Progress) bool {
		if bar != nil {
			bar.update(p)
		}
		return ctx.Err() == nil
	}

	start := time.Now()
	res, err := tsne.Embed(data.X, data.N, data.D, cfg)
	if err != nil && ctx.Err() != nil {
		return interrupted("run the same command again", "no layout was written")
	}
	if err != nil {
		return fmt.Errorf("embed %s: %w", path, err)
	}
	secs := time.Since(start).Seconds()
	rec := embedRecord{
		Tool: "plumb", Version: version, Input: path, InputFingerprint: data.Fingerprint,
		N: data.N, D: data.D, Perplexity: cfg.Perplexity, LearningRate: res.LearningRate,
		LearningRateSpec: lrSpec, Exaggeration: cfg.Exaggeration, ExaggerationIters: cfg.ExaggerationIters,
		Iters: res.Iters, Seed: cfg.Seed, Init: string(cfg.Init), Gradient: string(res.Method),
		Theta: cfg.Theta, Neighbors: cfg.Neighbors, KL: res.KL, Seconds: secs,
	}
	if err := writeLayout(out, format, data, res.Y, rec); err != nil {
		return err
	}
	if !quiet {
		fmt.Fprintf(stderr, "plumb: KL %.4f after %s in %.2fs → %s\n", res.KL, words.Count(res.Iters, "iteration"), secs, out)
	}
	return nil
}

// checkEmbedFlags validates the numeric flags before any data is read.
func checkEmbedFlags(c *cli.Context, lrSpec string) error {
	if p := c.Float64("perplexity"); !(p >= 1) || p > 1e9 {
		// The entropy of p_j|i is at least 0 nats, so perplexity = exp(entropy) ≥ 1.
		return fmt.Errorf("--perplexity %g: must be at least 1", p)
	}
	if lrSpec != "auto" {
		lr, err := strconv.ParseFloat(lrSpec, 64)
		if err != nil || !(lr > 0) || lr > 1e12 {
			return fmt.Errorf("--learning-rate %q: must be auto or a positive number", lrSpec)
		}
	}
	if e := c.Float64("exaggeration"); !(e >= 1) || e > 1e6 {
		return fmt.Errorf("--exaggeration %g: must be at least 1 (1 switches early exaggeration off)", e)
	}
	ei, it := c.Int("exaggeration-iters"), c.Int("iters")
	if ei < 0 {
		return fmt.Errorf("--exaggeration-iters %d: must not be negative", ei)
	}
	if it < 1 {
		return fmt.Errorf("--iters %d: must be positive", it)
	}
	if it < ei {
		return fmt.Errorf("--iters %d is less than --exaggeration-iters %d", it, ei)
	}
	switch v := c.String("init"); v {
	case "pca", "random":
	default:
		return fmt.Errorf("--init %q: must be pca or random", v)
	}
	switch v := c.String("gradient"); v {
	case "auto", "exact", "barnes-hut", "fft":
	default:
		return fmt.Errorf("--gradient %q: must be auto, exact, barnes-hut or fft", v)
	}
	switch v := c.String("neighbors"); v {
	case "auto", "exact", "approx":
	default:
		return fmt.Errorf("--neighbors %q: must be auto, exact or approx", v)
	}
	if th := c.Float64("theta"); !(th > 0) || th > 10 {
		return fmt.Errorf("--theta %g: must be positive", th)
	}
	return nil
}

// layoutFormat tells the output format from the file name.
func layoutFormat(out string) (string, error) {
	switch strings.ToLower(filepath.Ext(out)) {
	case ".parquet":
		return "parquet", nil
	case ".csv":
		return "csv", nil
	}
	return "", fmt.Errorf("--out %s: the file name must end in .parquet or .csv", out)
}

// isTerminal reports whether w is a terminal (term.IsTerminal: a character
// device such as /dev/null is not one).
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// progressLine redraws one status line on a terminal.
type progressLine struct {
	w      io.Writer
	kl     float64
	haveKL bool
	last   time.Time
}

func (b *progressLine) update(p tsne.Progress) {
	if p.HaveKL {
		b.kl, b.haveKL = p.KL, true
	}
	if time.Since(b.last) < 100*time.Millisecond && p.Iter != p.Iters {
		return
	}
	b.last = time.Now()
	const width = 30
	fill := width * p.Iter / max(p.Iters, 1)
	kl := ""
	if b.haveKL {
		kl = fmt.Sprintf("  KL %.4f", b.kl)
	}
	fmt.Fprintf(b.w, "\r[%s%s] %d/%d%s", strings.Repeat("#", fill), strings.Repeat(".", width-fill), p.Iter, p.Iters, kl)
}

func (b *progressLine) done() { fmt.Fprint(b.w, "\r\033[K") }
