package report

import (
	"fmt"
	"math"
	"sort"
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
	col    rgb
	hollow bool
}

// labelColours assigns markers to labels by decreasing frequency (ties
// alphabetical), so the largest groups get the most distinct ones: first
// the seven palette colours filled, then the same colours as rings; labels
// past those fourteen share a grey filled marker ("other").
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
	n := len(categorical)
	for i, l := range order {
		switch {
		case i < n:
			mk[l] = marker{categorical[i], false}
		case i < 2*n:
			mk[l] = marker{categorical[i-n], true}
		default:
			mk[l] = marker{otherColor, false}
		}
	}
	return order, mk
}

// maxMarkers is the number of labels with a marker of their own.
var maxMarkers = 2 * len(categorical)

func (c *canvas) mark(x, y, r float64, m marker, alpha float64) {
	if m.hollow {
		c.ring(x, y, r, m.col)
		return
	}
	c.circle(x, y, r, m.col, alpha)
}

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
	return mapper{ox: px + size/2, oy: py + size/2, s: (size - 20) / span, cx: (b.x0 + b.x1) / 2, cy: (b.y0 + b.y1) / 2, half: size/2 - 3}
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
	base := st.Settings[ref].Consensus
	rb := rmsRadius(base)
	for i := range st.Settings {
		c := st.Settings[i].Consensus
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

// layoutsFigure draws the aligned small multiples.
func layoutsFigure(st *studyview.View, ref int, chosen string) (*Figure, error) {
	aligned, err := alignedConsensus(st, ref)
	if err != nil {
		return nil, err
	}
	n := len(st.Settings)
	cols, rows := gridDims(n)
	panel := math.Max(200, math.Min(320, 1000/float64(cols)-14))
	head := 34.0
	legendH := 0.0
	var order []string
	var cols2 map[string]marker
	if st.HasLabels() {
		order, cols2 = labelColours(st.Labels)
		legendH = 22 * math.Ceil(float64(min(len(order), maxMarkers+1))/4)
	} else {
		legendH = 30
	}
	w := 20 + float64(cols)*(panel+14)
	h := 30 + float64(rows)*(panel+head+8) + legendH + 10
	c := newCanvas(w, h, "Consensus layout of each setting, aligned onto one frame")
	c.bold(10, 20, "Consensus layout per setting, all rotated onto the reference frame of "+st.Label(&st.Settings[ref]), 13, "start")
	b := layoutBounds(aligned...)
	var spreadMax float64
	for _, s := range st.Settings {
		spreadMax = math.Max(spreadMax, quantile(s.Spread, 0.95))
	}
	idx := drawIndex(len(st.IDs))
	for i := range st.Settings {
		s := &st.Settings[i]
		px := 10 + float64(i%cols)*(panel+14)
		py := 30 + float64(i/cols)*(panel+head+8)
		title := fmt.Sprintf("#%d %s", i+1, shortLabel(st, s))
		if s.ID == chosen {
			title += " (recommended)"
		}
		lines := wrap(title, int(panel/6.2))
		for k, l := range lines {
			c.text(px, py+12+float64(k)*13, l, 11, "start", black)
		}
		top := py + head
		frame := light
		if s.ID == chosen {
			frame = black
		}
		c.rect(px, top, panel, panel, rgb{0xfa, 0xfa, 0xfa}, &frame, "")
		y := aligned[i]
		if y == nil {
			c.text(px+panel/2, top+panel/2, "no finished runs", 11, "middle", grey)
			continue
		}
		m := newMapper(b, px, top, panel)
		for _, p := range idx {
			x0, y0 := m.at(y[2*p], y[2*p+1])
			mk := marker{col: categorical[0]}
			if cols2 != nil {
				mk = cols2[st.Labels[p]]
			} else if len(s.Spread) > p && spreadMax > 0 {
				mk.col = ramp(s.Spread[p] / spreadMax)
			}
			c.mark(x0, y0, 2.3, mk, 0.85)
		}
	}
	ly := 30 + float64(rows)*(panel+head+8) + 6
	if cols2 != nil {
		shown := order
		other := false
		if len(order) > maxMarkers {
			shown, other = order[:maxMarkers], true
		}
		for k, l := range shown {
			x := 14 + float64(k%4)*160
			yy := ly + float64(k/4)*22
			c.mark(x, yy+6, 5, cols2[l], 1)
			c.text(x+10, yy+10, l, 11, "start", black)
		}
		if other {
			k := len(shown)
			x := 14 + float64(k%4)*160
			yy := ly + float64(k/4)*22
			c.circle(x, yy+6, 5, otherColor, 1)
			c.text(x+10, yy+10, fmt.Sprintf("other (%d more labels)", len(order)-len(shown)), 11, "start", black)
		}
	} else {
		colourBar(c, 14, ly, 200, "per-point spread (0 to 95th percentile)")
	}
	caption := "One panel per setting: the consensus of its seeds, rotated and reflected by ordinary Procrustes onto the reference setting and scaled to its size so that panels are comparable; the few points beyond the 0.5th–99.5th percentile box are drawn on the frame. Where seeds disagree (high disparity) the consensus is an average of different maps and can place points between their positions in any single run. "
	if cols2 != nil {
		caption += "Colour shows the label (" + st.Input.LabelColumn + "). "
	} else {
		caption += "Colour shows each point's spread across seeds (darker = less stable). "
	}
	if len(idx) < len(st.IDs) {
		caption += fmt.Sprintf("%d of %d points drawn (evenly spaced subset). ", len(idx), len(st.IDs))
	}
	return finish(c, "layouts", caption)
}

func colourBar(c *canvas, x, y, w float64, label string) {
	steps := 40
	for k := 0; k < steps; k++ {
		c.rect(x+float64(k)*w/float64(steps), y, w/float64(steps)+0.5, 10, ramp(float64(k)/float64(steps-1)), nil, "")
	}
	c.text(x, y+24, "low", 10, "start", black)
	c.text(x+w, y+24, "high", 10, "end", black)
	c.text(x+w+10, y+9, label, 11, "start", black)
}

func wrap(s string, width int) []string {
	if len([]rune(s)) <= width {
		return []string{s}
	}
	words := strings.Fields(s)
	var lines []string
	cur := ""
	for _, w := range words {
		if cur != "" && len([]rune(cur))+1+len([]rune(w)) > width {
			lines = append(lines, cur)
			cur = w
			continue
		}
		if cur != "" {
			cur += " "
		}
		cur += w
	}
	lines = append(lines, cur)
	if len(lines) > 2 {
		lines = []string{lines[0], strings.Join(lines[1:], " ")}
	}
	return lines
}

func finish(c *canvas, name, caption string) (*Figure, error) {
	p, err := c.png()
	if err != nil {
		return nil, fmt.Errorf("report: figure %s: %w", name, err)
	}
	return &Figure{Name: name, Caption: caption, SVG: c.svg(), PNG: p}, nil
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

// heatmapFigure draws one score over two parameters, one facet per
// combination of the other varied parameters.
func heatmapFigure(st *studyview.View, sd scoreDef) (*Figure, error) {
	xp, yp, facets := heatmapAxes(st)
	xs, ys := []string{""}, []string{""}
	if xp != nil {
		xs = xp.Values
	}
	if yp != nil {
		ys = yp.Values
	}
	var keys []string
	seen := map[string]bool{}
	for i := range st.Settings {
		k := facetKey(&st.Settings[i], facets)
		if !seen[k] {
			seen[k] = true
			keys = append(keys, k)
		}
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i := range st.Settings {
		v := sd.get(&st.Settings[i]).Median
		if finite(v) {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	cw, ch := 74.0, 34.0
	left := 110.0
	fw := left + float64(len(xs))*cw + 20
	fh := 40 + float64(len(ys))*ch + 40
	fcols := max(1, min(len(keys), int(math.Floor(900/fw))))
	frows := (len(keys) + fcols - 1) / fcols
	better := "higher is better"
	if sd.lowerBetter {
		better = "lower is better"
	}
	W := math.Max(float64(fcols)*fw+20, 7.4*float64(len([]rune(sd.title)))+260)
	H := 36 + float64(frows)*fh
	c := newCanvas(W, H, "Heatmap of "+sd.title)
	c.bold(10, 20, fmt.Sprintf("%s (%s; darker = larger value)", sd.title, better), 13, "start")
	for fi, key := range keys {
		ox := 10 + float64(fi%fcols)*fw
		oy := 36 + float64(fi/fcols)*fh
		if key != "" {
			c.text(ox+left, oy+12, key, 11, "start", black)
		}
		top := oy + 20
		for yi, yv := range ys {
			if yp != nil {
				c.text(ox+left-6, top+float64(yi)*ch+ch/2+4, shortName(yp.Name)+" "+yv, 11, "end", black)
			}
			for xi, xv := range xs {
				var s *studyview.Setting
				for i := range st.Settings {
					t := &st.Settings[i]
					if facetKey(t, facets) != key {
						continue
					}
					if (xp == nil || t.Param(xp.Name) == xv) && (yp == nil || t.Param(yp.Name) == yv) {
						s = t
						break
					}
				}
				x0, y0 := ox+left+float64(xi)*cw, top+float64(yi)*ch
				if s == nil {
					c.rect(x0, y0, cw-2, ch-2, white, &light, "not in the plan")
					continue
				}
				v := sd.get(s)
				t := 0.5
				if hi > lo {
					t = (v.Median - lo) / (hi - lo)
				}
				if !finite(v.Median) {
					t = math.NaN()
				}
				fill := ramp(0.05 + 0.9*t)
				if math.IsNaN(t) {
					fill = light
				}
				c.rect(x0, y0, cw-2, ch-2, fill, nil, fmt.Sprintf("%s: %s = %s (IQR %s)", st.Label(s), sd.key, fmtScore(v.Median), fmtScore(v.IQR)))
				c.text(x0+cw/2-1, y0+ch/2+4, fmtScore(v.Median), 11, "middle", textOn(fill))
			}
		}
		for xi, xv := range xs {
			if xp != nil {
				c.text(ox+left+float64(xi)*cw+cw/2, top+float64(len(ys))*ch+14, xv, 11, "middle", black)
			}
		}
		if xp != nil {
			c.text(ox+left+float64(len(xs))*cw/2, top+float64(len(ys))*ch+30, xp.Name, 11, "middle", black)
		}
	}
	caption := fmt.Sprintf("The %s of each setting (%s). Cells are coloured from the smallest value in the study (light) to the largest (dark); hover a cell in the page for the IQR.", sd.title, better)
	return finish(c, "heatmap-"+sd.key, caption)
}

// stabilityFigure draws the chosen setting's medoid run (a map a run
// produced; the consensus only when the medoid could not be read), each
// point coloured by its co-assignment score on the fixed scale 0–1 (never
// stretched to the data, so a map where nothing is unstable stays light),
// flagged points (score < 0.75) ringed, points without a score grey.
func stabilityFigure(st *studyview.View, si int) (*Figure, error) {
	s := &st.Settings[si]
	size := 460.0
	c := newCanvas(size+260, size+70, "Per-point stability of the recommended setting")
	share := "not measured"
	if finite(s.UnstableShare) {
		share = fmt.Sprintf("%.1f%% of points unstable", 100*s.UnstableShare)
	}
	c.bold(10, 20, fmt.Sprintf("Per-point co-assignment across runs, %s: %s", st.Label(s), share), 13, "start")
	c.rect(10, 40, size, size, rgb{0xfa, 0xfa, 0xfa}, &light, "")
	layout, what := s.Medoid, "the medoid run "+s.MedoidRun
	if len(layout) != 2*len(st.IDs) {
		layout, what = s.Consensus, "the consensus layout (the medoid run could not be read)"
	}
	if len(layout) == 0 {
		c.text(10+size/2, 40+size/2, "no finished runs", 12, "middle", grey)
		return finish(c, "stability", "The recommended setting has no layout to show.")
	}
	m := newMapper(layoutBounds(layout), 10, 40, size)
	idx := drawIndex(len(layout) / 2)
	// Draw stable points first so unstable ones stay on top.
	for pass := 0; pass < 2; pass++ {
		for _, p := range idx {
			unst := len(s.Unstable) > p && s.Unstable[p]
			if (pass == 1) != unst || math.IsNaN(layout[2*p]) {
				continue
			}
			x0, y0 := m.at(layout[2*p], layout[2*p+1])
			col := grey
			if len(s.PointScore) > p && finite(s.PointScore[p]) {
				col = ramp(1 - s.PointScore[p])
			}
			c.circle(x0, y0, 2.6, col, 0.9)
			if unst {
				c.ring(x0, y0, 4.5, hexColor("#c0392b"))
			}
		}
	}
	lx := size + 24
	steps := 40
	for k := 0; k < steps; k++ {
		c.rect(lx+float64(k)*120/float64(steps), 50, 120/float64(steps)+0.5, 10, ramp(1-float64(k)/float64(steps-1)), nil, "")
	}
	c.text(lx, 74, "0", 10, "start", black)
	c.text(lx+120*0.75, 74, "0.75", 10, "middle", black)
	c.text(lx+120, 74, "1", 10, "end", black)
	c.text(lx, 92, "co-assignment (fixed 0–1 scale)", 11, "start", black)
	c.ring(lx+5, 112, 4.5, hexColor("#c0392b"))
	c.text(lx+16, 116, "flagged unstable (< 0.75)", 11, "start", black)
	c.circle(lx+5, 134, 2.6, grey, 0.9)
	c.text(lx+16, 138, "not measured", 11, "start", black)
	caption := fmt.Sprintf("%s of %s. Each point's colour is its co-assignment score across the %d finished runs: the mean Jaccard similarity, over pairs of runs, of the map-cluster groups holding it (1 = always with the same points; light), on a fixed 0–1 scale; red rings mark points below 0.75 (%s), grey points were not measured.",
		strings.ToUpper(what[:1])+what[1:], st.Label(s), s.RunsDone, share)
	return finish(c, "stability", caption)
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

// spreadFigure draws seed-to-seed strip plots of four scores.
func spreadFigure(st *studyview.View) (*Figure, error) {
	type row struct {
		title string
		vals  func(id string) []float64
	}
	runVals := func(get func(*studyview.Run) float64) func(string) []float64 {
		return func(id string) []float64 {
			var v []float64
			for i := range st.Runs {
				r := &st.Runs[i]
				if r.SettingID == id && r.Status == "done" && finite(get(r)) {
					v = append(v, get(r))
				}
			}
			return v
		}
	}
	pairVals := func(get func(*studyview.Pair) float64) func(string) []float64 {
		return func(id string) []float64 {
			var v []float64
			for i := range st.Pairs {
				if st.Pairs[i].SettingID == id && finite(get(&st.Pairs[i])) {
					v = append(v, get(&st.Pairs[i]))
				}
			}
			return v
		}
	}
	rows := []row{
		{"trustworthiness per run", runVals(func(r *studyview.Run) float64 { return r.Trustworthiness })},
		{"final KL divergence per run", runVals(func(r *studyview.Run) float64 { return r.KL })},
		{"Procrustes disparity per pair of runs", pairVals(func(p *studyview.Pair) float64 { return p.Disparity })},
		{"kNN Jaccard per pair of runs", pairVals(func(p *studyview.Pair) float64 { return p.Jaccard })},
	}
	n := len(st.Settings)
	colW := math.Max(36, math.Min(80, 760/float64(max(n, 1))))
	left := 70.0
	rh := 130.0
	W := left + float64(n)*colW + 30
	W = math.Max(W, 480)
	H := 30 + float64(len(rows))*rh + 30
	c := newCanvas(W, H, "Seed-to-seed spread of each score")
	c.bold(10, 20, "Seed-to-seed spread per setting (one dot per run or pair; bar = median)", 13, "start")
	for ri, r := range rows {
		top := 34 + float64(ri)*rh
		plotH := rh - 40
		lo, hi := math.Inf(1), math.Inf(-1)
		all := make([][]float64, n)
		for i := range st.Settings {
			all[i] = r.vals(st.Settings[i].ID)
			for _, v := range all[i] {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		c.text(left, top+10, r.title, 11, "start", black)
		y0 := top + 18
		c.rect(left, y0, float64(n)*colW, plotH, rgb{0xfa, 0xfa, 0xfa}, &light, "")
		if !finite(lo) {
			c.text(left+10, y0+plotH/2, "no values", 11, "start", grey)
			continue
		}
		if hi == lo {
			lo, hi = lo-0.5*math.Max(math.Abs(lo)*0.01, 1e-6), hi+0.5*math.Max(math.Abs(hi)*0.01, 1e-6)
		}
		pad := (hi - lo) * 0.08
		lo, hi = lo-pad, hi+pad
		yAt := func(v float64) float64 { return y0 + plotH - (v-lo)/(hi-lo)*plotH }
		c.text(left-4, y0+10, fmtScore(hi-pad), 10, "end", grey)
		c.text(left-4, y0+plotH, fmtScore(lo+pad), 10, "end", grey)
		for i := range st.Settings {
			cx := left + (float64(i)+0.5)*colW
			for k, v := range all[i] {
				c.circle(cx+jitter(k)*colW*0.25, yAt(v), 2.8, categorical[0], 0.75)
			}
			if med := quantile(all[i], 0.5); finite(med) {
				c.line(categorical[1], 2, 1, cx-colW*0.35, yAt(med), cx+colW*0.35, yAt(med))
			}
			if ri == len(rows)-1 {
				c.text(cx, y0+plotH+14, fmt.Sprintf("#%d", i+1), 10, "middle", black)
			}
		}
	}
	c.text(left, H-6, "setting number (see the settings table)", 11, "start", black)
	return finish(c, "seed-spread", "Each dot is one run (trustworthiness, KL) or one pair of runs of the same setting (disparity, Jaccard); the orange bar is the median. Wide strips mean the seed matters.")
}

// traceFigure draws the KL traces, one panel per setting, shared axes.
func traceFigure(st *studyview.View) (*Figure, error) {
	n := len(st.Settings)
	cols, rows := gridDims(n)
	pw, ph := 210.0, 120.0
	W := 60 + float64(cols)*(pw+20)
	H := 40 + float64(rows)*(ph+44) + 20
	c := newCanvas(W, H, "KL divergence by iteration")
	c.bold(10, 20, "KL divergence by iteration, one line per seed (shared axes)", 13, "start")
	maxIt, lo, hi := 0, math.Inf(1), math.Inf(-1)
	for _, r := range st.Runs {
		for _, tp := range r.Trace {
			if finite(tp.KL) {
				maxIt = max(maxIt, tp.Iter)
				lo, hi = math.Min(lo, tp.KL), math.Max(hi, tp.KL)
			}
		}
	}
	if maxIt == 0 || !finite(lo) {
		c.text(20, 60, "no KL traces in this study", 12, "start", grey)
		return finish(c, "kl-traces", "The study holds no KL traces.")
	}
	if hi == lo {
		hi = lo + 1
	}
	for i := range st.Settings {
		s := &st.Settings[i]
		px := 50 + float64(i%cols)*(pw+20)
		py := 34 + float64(i/cols)*(ph+44)
		c.text(px, py+10, fmt.Sprintf("#%d %s", i+1, truncate(shortLabel(st, s), 32)), 11, "start", black)
		top := py + 16
		c.rect(px, top, pw, ph, rgb{0xfa, 0xfa, 0xfa}, &light, "")
		k := 0
		for _, r := range st.Runs {
			if r.SettingID != s.ID || len(r.Trace) == 0 {
				continue
			}
			var pts []float64
			for _, tp := range r.Trace {
				if !finite(tp.KL) {
					continue
				}
				pts = append(pts, px+float64(tp.Iter)/float64(maxIt)*pw, top+ph-(tp.KL-lo)/(hi-lo)*ph)
			}
			c.line(categorical[k%len(categorical)], 1.4, 0.9, pts...)
			k++
		}
		c.text(px, top+ph+12, "0", 9, "start", grey)
		c.text(px+pw, top+ph+12, fmt.Sprint(maxIt), 9, "end", grey)
		if i%cols == 0 {
			c.text(px-4, top+9, fmtScore(hi), 9, "end", grey)
			c.text(px-4, top+ph, fmtScore(lo), 9, "end", grey)
		}
	}
	return finish(c, "kl-traces", "KL divergence recorded during optimisation, one line per seed. The early-exaggeration phase shows as the high plateau at the start; lines that have not flattened by the end suggest more iterations.")
}

func truncate(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}
