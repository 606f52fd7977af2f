package report

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"plumb/align"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

// Figure is one rendered figure.
type Figure struct {
	// Name is the file stem under figures/ ("layouts", "heatmap-kl", …).
	Name string
	// Caption says what the figure shows, in a sentence or two.
	Caption string
	SVG     []byte
	PDF     []byte
	PNG     []byte
}

// maxPanelPoints caps the points drawn per panel; beyond it a fixed,
// evenly spaced subset is drawn (the caption says so).
const maxPanelPoints = 3000

// shortName abbreviates the usual parameter names for panel titles.
func shortName(p string) string {
	switch p {
	case "perplexity":
		return "perp"
	case "learning_rate":
		return "lr"
	case "exaggeration":
		return "exag"
	case "exaggeration_iters":
		return "exag it"
	case "iters":
		return "iters"
	}
	return p
}

func shortLabel(s *studyview.View, st *studyview.Setting) string {
	var parts []string
	for _, p := range s.Varied() {
		parts = append(parts, shortName(p.Name)+" "+st.Param(p.Name))
	}
	if len(parts) == 0 {
		return st.ID
	}
	return strings.Join(parts, " · ")
}

// drawIndex returns the point indices to draw for n points.
func drawIndex(n int) []int {
	idx := make([]int, 0, min(n, maxPanelPoints))
	if n <= maxPanelPoints {
		for i := 0; i < n; i++ {
			idx = append(idx, i)
		}
		return idx
	}
	for k := 0; k < maxPanelPoints; k++ {
		idx = append(idx, k*n/maxPanelPoints)
	}
	return idx
}

// marker is how the points of one label are drawn.
type marker struct {
	col rgb
}

// labelColours assigns markers to labels by decreasing frequency (ties
// alphabetical), so the largest groups get the most distinct colours. Up to
// len(categorical) labels each get a colour of their own; beyond that the
// len(categorical)−1 largest keep theirs and the rest share otherColor
// ("other" in the legend). Every marker is a filled dot: a ring of a
// filled class's hue reads as that class in dense clusters.
func labelColours(labels []string) (order []string, mk map[string]marker) {
	count := map[string]int{}
	for _, l := range labels {
		if count[l] == 0 {
			order = append(order, l)
		}
		count[l]++
	}
	sort.Slice(order, func(i, j int) bool {
		if count[order[i]] != count[order[j]] {
			return count[order[i]] > count[order[j]]
		}
		return order[i] < order[j]
	})
	mk = map[string]marker{}
	own := len(order)
	if own > len(categorical) {
		own = len(categorical) - 1
	}
	for i, l := range order {
		if i < own {
			mk[l] = marker{col: categorical[i]}
		} else {
			mk[l] = marker{col: otherColor}
		}
	}
	return order, mk
}

// maxMarkers is the number of labels that can have a colour of their own.
var maxMarkers = len(categorical)

type bounds struct{ x0, x1, y0, y1 float64 }

func layoutBounds(ls ...[]float64) bounds {
	var xs, ys []float64
	for _, y := range ls {
		for i := 0; i+1 < len(y); i += 2 {
			if finite(y[i]) && finite(y[i+1]) {
				xs = append(xs, y[i])
				ys = append(ys, y[i+1])
			}
		}
	}
	if len(xs) == 0 {
		return bounds{-1, 1, -1, 1}
	}
	// The box from the 0.5th to the 99.5th percentile, widened by 8%: a
	// few far outliers should not shrink every cluster to a dot. Points
	// outside are drawn on the frame (see mapper.at).
	b := bounds{quantile(xs, 0.005), quantile(xs, 0.995), quantile(ys, 0.005), quantile(ys, 0.995)}
	px, py := 0.08*(b.x1-b.x0), 0.08*(b.y1-b.y0)
	return bounds{b.x0 - px, b.x1 + px, b.y0 - py, b.y1 + py}
}

// mapper places layout coordinates into a square panel with equal scales
// on both axes (a t-SNE map has no preferred axis).
type mapper struct{ ox, oy, s, cx, cy, half float64 }

func newMapper(b bounds, px, py, size float64) mapper {
	span := math.Max(b.x1-b.x0, b.y1-b.y0)
	if span <= 0 {
		span = 1
	}
	return mapper{ox: px + size/2, oy: py + size/2, s: 0.94 * size / span, cx: (b.x0 + b.x1) / 2, cy: (b.y0 + b.y1) / 2, half: size/2 - 1.5}
}

// at maps a layout point into the panel, clamping points beyond the
// bounds onto the frame.
func (m mapper) at(x, y float64) (float64, float64) {
	dx := math.Max(-m.half, math.Min(m.half, (x-m.cx)*m.s))
	dy := math.Max(-m.half, math.Min(m.half, (y-m.cy)*m.s))
	return m.ox + dx, m.oy - dy
}

// alignedConsensus rotates (and reflects) every setting's consensus onto
// the reference setting's with ordinary Procrustes without scaling, then
// scales it about its centroid to the reference's RMS radius. (Fitting the
// scale by least squares would shrink maps that disagree with the
// reference, s = tr Σ / ‖B‖², and make them look small.) It returns the
// layouts by setting index (nil where a setting has no consensus).
func alignedConsensus(st *studyview.View, ref int) ([][]float64, error) {
	out := make([][]float64, len(st.Settings))
	base, _ := picture(&st.Settings[ref])
	rb := rmsRadius(base)
	for i := range st.Settings {
		c, _ := picture(&st.Settings[i])
		if len(c) == 0 {
			continue
		}
		if i == ref {
			out[i] = c
			continue
		}
		a, _, err := align.Procrustes(base, c, false)
		if err != nil {
			return nil, fmt.Errorf("report: aligning setting %s onto %s: %w", st.Settings[i].ID, st.Settings[ref].ID, err)
		}
		if ra := rmsRadius(a); ra > 0 && rb > 0 {
			cx, cy := centroid(a)
			f := rb / ra
			for p := 0; p+1 < len(a); p += 2 {
				a[p] = cx + f*(a[p]-cx)
				a[p+1] = cy + f*(a[p+1]-cy)
			}
		}
		out[i] = a
	}
	return out, nil
}

func centroid(y []float64) (cx, cy float64) {
	n := len(y) / 2
	for p := 0; p < n; p++ {
		cx += y[2*p]
		cy += y[2*p+1]
	}
	return cx / float64(n), cy / float64(n)
}

// rmsRadius is the root-mean-square distance of the points from their
// centroid.
func rmsRadius(y []float64) float64 {
	if len(y) < 2 {
		return 0
	}
	cx, cy := centroid(y)
	var ss float64
	for p := 0; p+1 < len(y); p += 2 {
		ss += (y[p]-cx)*(y[p]-cx) + (y[p+1]-cy)*(y[p+1]-cy)
	}
	return math.Sqrt(ss / float64(len(y)/2))
}

func gridDims(n int) (cols, rows int) {
	cols = min(n, 4)
	if cols == 0 {
		cols = 1
	}
	return cols, (n + cols - 1) / cols
}

func finish(c *canvas, name, caption string) (*Figure, error) {
	p, err := c.png()
	if err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", name, err)
	}
	d, err := c.pdf()
	if err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", name, err)
	}
	return &Figure{Name: name, Caption: caption, SVG: c.svg(), PDF: d, PNG: p}, nil
}

// quantile returns stability.Quantile of the finite values of v, NaN if
// none.
func quantile(v []float64, q float64) float64 {
	var s []float64
	for _, x := range v {
		if finite(x) {
			s = append(s, x)
		}
	}
	return stability.Quantile(s, q)
}

// scoreDef names one headline score for heatmaps and tables.
type scoreDef struct {
	key, title  string
	lowerBetter bool
	get         func(*studyview.Setting) stability.MedianIQR
}

var headline = []scoreDef{
	{"disparity", "median seed-to-seed Procrustes disparity", true, func(s *studyview.Setting) stability.MedianIQR { return s.Disparity }},
	{"jaccard", "median seed-to-seed kNN Jaccard", false, func(s *studyview.Setting) stability.MedianIQR { return s.Jaccard }},
	{"trustworthiness", "median trustworthiness", false, func(s *studyview.Setting) stability.MedianIQR { return s.Trustworthiness }},
	{"kl", "median final KL divergence", true, func(s *studyview.Setting) stability.MedianIQR { return s.KL }},
}

// heatmapAxes picks the two parameters on the axes (the first two that
// vary; perplexity first when it varies) and the facet parameters.
func heatmapAxes(st *studyview.View) (x, y *studyview.Param, facets []studyview.Param) {
	v := st.Varied()
	sort.SliceStable(v, func(i, j int) bool { return v[i].Name == "perplexity" && v[j].Name != "perplexity" })
	if len(v) > 0 {
		x = &v[0]
	}
	if len(v) > 1 {
		y = &v[1]
	}
	if len(v) > 2 {
		facets = v[2:]
	}
	return
}

func facetKey(s *studyview.Setting, facets []studyview.Param) string {
	var parts []string
	for _, f := range facets {
		parts = append(parts, shortName(f.Name)+" "+s.Param(f.Name))
	}
	return strings.Join(parts, " · ")
}

func fmtScore(x float64) string {
	if !finite(x) {
		return "–"
	}
	a := math.Abs(x)
	switch {
	case a >= 100:
		return fmt.Sprintf("%.0f", x)
	case a >= 1:
		return fmt.Sprintf("%.3f", x)
	default:
		return fmt.Sprintf("%.4f", x)
	}
}

// jitter returns a fixed offset in [-1, 1] for the k-th point of a strip.
func jitter(k int) float64 {
	// Van der Corput sequence in base 2, mapped to [-1, 1]: evenly spread,
	// deterministic.
	v, f := 0.0, 0.5
	for i := k + 1; i > 0; i >>= 1 {
		if i&1 == 1 {
			v += f
		}
		f /= 2
	}
	return 2*v - 1
}

func truncate(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}

func sortSlice[T any](v []T, less func(a, b T) bool) {
	sort.SliceStable(v, func(i, j int) bool { return less(v[i], v[j]) })
}

func parseInt(s string) (int, error) { return strconv.Atoi(s) }
