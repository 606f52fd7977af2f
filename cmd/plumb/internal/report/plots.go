package report

import (
	"fmt"
	"math"
	"plumb/cmd/plumb/internal/studyview"
	"strings"
)

// The figures, laid out in points for a journal page (see render.go for
// the sizes and fonts): layouts, the four headline heatmaps, the per-point
// stability map, the seed-to-seed spreads and the KL traces.

// wrapText breaks s into lines no wider than w points at the size, at most
// two (the second is cut with an ellipsis).
func wrapText(s string, size, w float64, bold bool) []string {
	if textWidth(s, size, bold) <= w {
		return []string{s}
	}
	var lines []string
	cur := ""
	for _, word := range strings.Fields(s) {
		try := word
		if cur != "" {
			try = cur + " " + word
		}
		if cur != "" && textWidth(try, size, bold) > w {
			lines = append(lines, cur)
			cur = word
			continue
		}
		cur = try
	}
	lines = append(lines, cur)
	if len(lines) > 2 {
		lines = []string{lines[0], strings.Join(lines[1:], " ")}
	}
	for i, l := range lines {
		lines[i] = fitText(l, size, w, bold)
	}
	return lines
}

// fitText cuts s with an ellipsis to at most w points.
func fitText(s string, size, w float64, bold bool) string {
	if textWidth(s, size, bold) <= w {
		return s
	}
	r := []rune(s)
	for len(r) > 1 && textWidth(string(r)+"…", size, bold) > w {
		r = r[:len(r)-1]
	}
	return string(r) + "…"
}

// dotRadius is the radius in points of a map's dots for n drawn points.
func dotRadius(n int, panel float64) float64 {
	r := panel / 90
	switch {
	case n > 2000:
		r *= 0.55
	case n > 500:
		r *= 0.75
	}
	return math.Max(0.45, math.Min(1.6, r))
}

// layoutsFigure draws the aligned small multiples.
func layoutsFigure(st *studyview.View, ref int, chosen string) (*Figure, error) {
	aligned, err := alignedConsensus(st, ref)
	if err != nil {
		return nil, err
	}
	n := len(st.Settings)
	cols, rows := gridDims(n)
	const margin, gap, head = 6.0, 8.0, 20.0
	panel := (fullWidth - 2*margin - float64(cols-1)*gap) / float64(cols)
	var order []string
	var mk map[string]marker
	legendRows := 1
	if st.HasLabels() {
		order, mk = labelColours(st.Labels)
		legendRows = (min(len(order), maxMarkers) + 3) / 4
	}
	top := 18.0
	h := top + float64(rows)*(panel+head+gap) + 12*float64(legendRows) + 6
	c := newCanvas(fullWidth, h, "Medoid run of each setting, aligned onto one frame")
	c.bold(margin, 11, fitText("Medoid run per setting, rotated onto the frame of "+st.Label(&st.Settings[ref]), titleSize, fullWidth-2*margin, true), titleSize, "start")
	b := layoutBounds(aligned...)
	idx := drawIndex(len(st.IDs))
	r := dotRadius(len(idx), panel)
	for i := range st.Settings {
		s := &st.Settings[i]
		px := margin + float64(i%cols)*(panel+gap)
		py := top + float64(i/cols)*(panel+head+gap)
		title := fmt.Sprintf("#%d %s", i+1, shortLabel(st, s))
		if s.ID == chosen {
			title += " (recommended)"
		}
		for k, l := range wrapText(title, textSize, panel, s.ID == chosen) {
			if s.ID == chosen {
				c.bold(px, py+8+float64(k)*8.5, l, textSize, "start")
			} else {
				c.text(px, py+8+float64(k)*8.5, l, textSize, "start", black)
			}
		}
		y0 := py + head
		c.rect(px, y0, panel, panel, rgb{0xfa, 0xfa, 0xfa}, nil, "")
		if s.ID == chosen {
			c.outline(px, y0, panel, panel, black, 1.2)
		} else {
			c.outline(px, y0, panel, panel, light, 0.5)
		}
		y := aligned[i]
		if y == nil {
			c.text(px+panel/2, y0+panel/2, "no finished runs", textSize, "middle", grey)
			continue
		}
		m := newMapper(b, px, y0, panel)
		for _, p := range idx {
			x0, yy := m.at(y[2*p], y[2*p+1])
			col := categorical[0]
			if mk != nil {
				col = mk[st.Labels[p]].col
			} else if len(s.Spread) > p {
				col = warnRamp(spreadShare(s, p))
			}
			c.circle(x0, yy, r, col, 0.85)
		}
	}
	ly := top + float64(rows)*(panel+head+gap) + 4
	if mk != nil {
		own := len(order)
		if own > maxMarkers {
			own = maxMarkers - 1
		}
		colW := (fullWidth - 2*margin) / 4
		for k := 0; k < min(len(order), maxMarkers); k++ {
			x := margin + float64(k%4)*colW
			yy := ly + float64(k/4)*12
			name := ""
			col := otherColor
			if k < own {
				name, col = order[k], mk[order[k]].col
			} else {
				name = fmt.Sprintf("other (%d smaller labels)", len(order)-own)
			}
			c.circle(x+3, yy+3, 2.6, col, 1)
			c.text(x+9, yy+5.5, fitText(name, textSize, colW-12, false), textSize, "start", black)
		}
	} else {
		warnBar(c, margin, ly, 100, spreadWords)
	}
	caption := "One panel per setting: its medoid run (the run closest in total Procrustes disparity to its other runs, a map a run produced; the consensus of its runs only where the medoid does not place every point), rotated and reflected by ordinary Procrustes onto the reference setting and scaled to its size so that panels are comparable; the few points beyond the 0.5th–99.5th percentile box are drawn on the frame. "
	if mk != nil {
		caption += "Colour shows the label (" + st.Input.LabelColumn + ")"
		if len(order) > maxMarkers {
			caption += fmt.Sprintf("; the %d largest labels have colours of their own and the other %d share grey", maxMarkers-1, len(order)-maxMarkers+1)
		}
		caption += ". "
	} else {
		caption += "Colour shows each point's spread across seeds: " + spreadWords + ". "
	}
	if len(idx) < len(st.IDs) {
		caption += fmt.Sprintf("%d of %d points drawn (evenly spaced subset). ", len(idx), len(st.IDs))
	}
	return finish(c, "layouts", caption)
}

// spreadWords describes the fixed per-point colour scale of the figures.
var spreadWords = fmt.Sprintf("light grey = stable, dark red = spread of %g of the map's RMS radius or more (fixed scale)", spreadScale)

// spreadShare is point p's spread as a share of spreadScale × the map's
// RMS radius, in [0, 1] (NaN if unknown).
func spreadShare(s *studyview.Setting, p int) float64 {
	if len(s.Stability) > p {
		return 1 - s.Stability[p]
	}
	r := rmsRadius(s.Consensus)
	if len(s.Spread) <= p || r <= 0 {
		return math.NaN()
	}
	return clamp01(s.Spread[p] / r / spreadScale)
}

// warnRamp maps t in [0, 1] to the per-point ramp (warnStops); NaN gives
// light grey.
func warnRamp(t float64) rgb {
	if math.IsNaN(t) {
		return light
	}
	return rampOf(warnStops, t)
}

// rampOf interpolates linearly in sRGB between the stops.
func rampOf(stops []rgb, t float64) rgb {
	t = clamp01(t)
	pos := t * float64(len(stops)-1)
	i := int(pos)
	if i >= len(stops)-1 {
		return stops[len(stops)-1]
	}
	f := pos - float64(i)
	a, b := stops[i], stops[i+1]
	mix := func(x, y uint8) uint8 { return uint8(math.Round(float64(x)*(1-f) + float64(y)*f)) }
	return rgb{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B)}
}

func warnBar(c *canvas, x, y, w float64, label string) {
	steps := 40
	for k := 0; k < steps; k++ {
		c.rect(x+float64(k)*w/float64(steps), y, w/float64(steps)+0.3, 5, warnRamp(float64(k)/float64(steps-1)), nil, "")
	}
	c.text(x+w+5, y+5, fitText(label, tickSize, fullWidth-x-w-10, false), tickSize, "start", black)
}

// heatmapFigure draws one score over two parameters, one facet per
// combination of the other varied parameters. Colour always means the
// same thing: darker is better (the ramp runs from the worst value in the
// study, light, to the best, dark, whichever way the score points). The
// recommended setting's cell is outlined. KL divergence is coloured only
// within each perplexity (KL values at different perplexities measure
// against different P and are not comparable).
func heatmapFigure(st *studyview.View, sd scoreDef, chosen string) (*Figure, error) {
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
	// The groups within which colours compare: all settings, or for KL
	// each perplexity.
	group := func(s *studyview.Setting) string { return "" }
	if sd.key == "kl" {
		group = func(s *studyview.Setting) string { return s.Param("perplexity") }
	}
	lo, hi := map[string]float64{}, map[string]float64{}
	count := map[string]int{}
	for i := range st.Settings {
		s := &st.Settings[i]
		v := sd.get(s).Median
		if !finite(v) {
			continue
		}
		g := group(s)
		if count[g] == 0 {
			lo[g], hi[g] = v, v
		}
		lo[g], hi[g] = math.Min(lo[g], v), math.Max(hi[g], v)
		count[g]++
	}
	const cw, ch, left = 46.0, 18.0, 62.0
	fw := left + float64(len(xs))*cw + 12
	fh := 16 + float64(len(ys))*ch + 26
	fcols := max(1, min(len(keys), int(math.Floor((fullWidth-12)/fw))))
	frows := (len(keys) + fcols - 1) / fcols
	better := "higher is better"
	if sd.lowerBetter {
		better = "lower is better"
	}
	W := math.Min(fullWidth, math.Max(float64(fcols)*fw+12, colWidth))
	H := 30 + float64(frows)*fh
	c := newCanvas(W, H, "Heatmap of "+sd.title)
	c.bold(6, 11, fitText(fmt.Sprintf("%s (%s)", sd.title, better), titleSize, W-12, true), titleSize, "start")
	sub := "darker = better; outlined: the recommended setting"
	if sd.key == "kl" {
		sub = "darker = lower KL within the same perplexity only; not comparable across perplexities"
	}
	c.text(6, 21, fitText(sub, tickSize, W-12, false), tickSize, "start", grey)
	for fi, key := range keys {
		ox := 6 + float64(fi%fcols)*fw
		oy := 28 + float64(fi/fcols)*fh
		if key != "" {
			c.text(ox+left, oy+7, fitText(key, textSize, fw-left, false), textSize, "start", black)
		}
		top := oy + 11
		for yi, yv := range ys {
			if yp != nil {
				c.text(ox+left-4, top+float64(yi)*ch+ch/2+2.5, fitText(shortName(yp.Name)+" "+yv, textSize, left-6, false), textSize, "end", black)
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
					c.rect(x0, y0, cw-1.5, ch-1.5, white, &light, "not in the plan")
					continue
				}
				v := sd.get(s)
				g := group(s)
				fill := light
				if finite(v.Median) && count[g] > 1 && hi[g] > lo[g] {
					t := (v.Median - lo[g]) / (hi[g] - lo[g])
					if sd.lowerBetter {
						t = 1 - t
					}
					fill = ramp(0.05 + 0.9*t)
				} else if finite(v.Median) {
					fill = white
				}
				c.rect(x0, y0, cw-1.5, ch-1.5, fill, &light, fmt.Sprintf("%s: %s = %s (IQR %s)", st.Label(s), sd.key, fmtScore(v.Median), fmtScore(v.IQR)))
				c.text(x0+(cw-1.5)/2, y0+ch/2+1.8, fmtScore(v.Median), tickSize, "middle", textOn(fill))
				if s.ID == chosen {
					c.outline(x0-0.6, y0-0.6, cw-0.3, ch-0.3, black, 1.4)
				}
			}
		}
		for xi, xv := range xs {
			if xp != nil {
				c.text(ox+left+float64(xi)*cw+cw/2, top+float64(len(ys))*ch+7, fitText(xv, textSize, cw, false), textSize, "middle", black)
			}
		}
		if xp != nil {
			c.text(ox+left+float64(len(xs))*cw/2, top+float64(len(ys))*ch+16, xp.Name, textSize, "middle", black)
		}
	}
	caption := fmt.Sprintf("The %s of each setting (%s). Darker always means better: the colour runs from the worst value in the study (light) to the best (dark). The outlined cell is the recommended setting. Hover a cell in the page for the interquartile range.", sd.title, better)
	if sd.key == "kl" {
		caption = fmt.Sprintf("The %s of each setting (lower is better). KL divergence depends on the perplexity (it is measured against P, which the perplexity sets), so colours compare settings of the same perplexity only: darker = lower KL among the settings of that perplexity; white cells have no other setting of their perplexity to compare with. The outlined cell is the recommended setting.", sd.title)
	}
	return finish(c, "heatmap-"+sd.key, caption)
}

// stabilityFigure draws the chosen setting's consensus coloured by
// per-point stability on a fixed scale, flagged points ringed.
func stabilityFigure(st *studyview.View, si int) (*Figure, error) {
	s := &st.Settings[si]
	const size = 230.0
	W := colWidth + 40
	c := newCanvas(W, size+52, "Per-point stability of the recommended setting")
	c.bold(6, 11, fitText(fmt.Sprintf("Per-point stability, %s", st.Label(s)), titleSize, W-12, true), titleSize, "start")
	c.text(6, 21, fmt.Sprintf("%s of points flagged unstable (ringed)", fmtShare(s.UnstableShare)), tickSize, "start", grey)
	c.rect(6, 26, size, size, rgb{0xfa, 0xfa, 0xfa}, &light, "")
	if len(s.Consensus) == 0 {
		c.text(6+size/2, 26+size/2, "no finished runs", textSize, "middle", grey)
		return finish(c, "stability", "The recommended setting has no consensus layout.")
	}
	shown, what := picture(s)
	m := newMapper(layoutBounds(shown), 6, 26, size)
	idx := drawIndex(len(shown) / 2)
	r := dotRadius(len(idx), size)
	// Stable points first, so unstable ones stay on top.
	order := append([]int(nil), idx...)
	share := make([]float64, len(s.Consensus)/2)
	for _, p := range idx {
		share[p] = spreadShare(s, p)
	}
	sortByKey(order, func(p int) float64 {
		if math.IsNaN(share[p]) {
			return -1
		}
		return share[p]
	})
	for _, p := range order {
		x0, y0 := m.at(shown[2*p], shown[2*p+1])
		c.circle(x0, y0, r, warnRamp(share[p]), 0.95)
		if len(s.Unstable) > p && s.Unstable[p] {
			c.ring(x0, y0, r+1.4, black)
		}
	}
	lx := 6 + size + 6
	steps := 30
	for k := 0; k < steps; k++ {
		c.rect(lx, 30+float64(steps-1-k)*4, 8, 4.3, warnRamp(float64(k)/float64(steps-1)), nil, "")
	}
	c.text(lx+11, 34, "unstable", tickSize, "start", black)
	c.text(lx+11, 30+float64(steps)*4, "stable", tickSize, "start", black)
	c.ring(lx+4, 30+float64(steps)*4+12, 2.4, black)
	c.text(lx+11, 30+float64(steps)*4+14, "flagged", tickSize, "start", black)
	scale := fmt.Sprintf("spread across seeds (distance from the consensus after alignment) as a share of the map's RMS radius, on a fixed scale: light grey 0, dark red %g or more", spreadScale)
	if len(s.Stability) > 0 {
		scale = "co-assignment score (the mean Jaccard similarity, over pairs of runs, of the map-cluster groups holding it) on its fixed scale from 1 (light grey) to 0 (dark red)"
	}
	caption := fmt.Sprintf("%s of %s; each point's colour is its %s, over the %d finished seeds. Rings mark points flagged unstable (%s). The scale is fixed, not stretched to the values, so a map with little spread stays light.",
		strings.ToUpper(what[:1])+what[1:], st.Label(s), scale, s.RunsDone, fmtShare(s.UnstableShare))
	return finish(c, "stability", caption)
}

// sortByKey sorts idx by key ascending, ties by index (a stable order).
func sortByKey(idx []int, key func(int) float64) {
	type kv struct {
		k float64
		i int
	}
	v := make([]kv, len(idx))
	for j, i := range idx {
		v[j] = kv{key(i), i}
	}
	sortSlice(v, func(a, b kv) bool {
		if a.k != b.k {
			return a.k < b.k
		}
		return a.i < b.i
	})
	for j := range v {
		idx[j] = v[j].i
	}
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
		{"trustworthiness per run (higher is better)", runVals(func(r *studyview.Run) float64 { return r.Trustworthiness })},
		{"Procrustes disparity per pair of runs (lower is better)", pairVals(func(p *studyview.Pair) float64 { return p.Disparity })},
		{"kNN Jaccard per pair of runs (higher is better)", pairVals(func(p *studyview.Pair) float64 { return p.Jaccard })},
	}
	n := len(st.Settings)
	const left, rh = 44.0, 74.0
	colW := (fullWidth - left - 10) / float64(max(n, 1))
	H := 18 + float64(len(rows))*rh + 18
	c := newCanvas(fullWidth, H, "Seed-to-seed spread of each score")
	c.bold(6, 11, "Seed-to-seed spread per setting (one dot per run or pair of runs; bar = median)", titleSize, "start")
	for ri, r := range rows {
		top := 18 + float64(ri)*rh
		plotH := rh - 22
		lo, hi := math.Inf(1), math.Inf(-1)
		all := make([][]float64, n)
		for i := range st.Settings {
			all[i] = r.vals(st.Settings[i].ID)
			for _, v := range all[i] {
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		c.text(left, top+8, r.title, textSize, "start", black)
		y0 := top + 12
		c.rect(left, y0, float64(n)*colW, plotH, rgb{0xfa, 0xfa, 0xfa}, &light, "")
		if !finite(lo) {
			c.text(left+6, y0+plotH/2, "no values", textSize, "start", grey)
			continue
		}
		if hi == lo {
			lo, hi = lo-0.5*math.Max(math.Abs(lo)*0.01, 1e-6), hi+0.5*math.Max(math.Abs(hi)*0.01, 1e-6)
		}
		pad := (hi - lo) * 0.08
		lo, hi = lo-pad, hi+pad
		yAt := func(v float64) float64 { return y0 + plotH - (v-lo)/(hi-lo)*plotH }
		c.text(left-3, y0+5, fmtScore(hi-pad), tickSize, "end", black)
		c.text(left-3, y0+plotH, fmtScore(lo+pad), tickSize, "end", black)
		for i := range st.Settings {
			cx := left + (float64(i)+0.5)*colW
			for k, v := range all[i] {
				c.circle(cx+jitter(k)*colW*0.22, yAt(v), 1.5, categorical[0], 0.75)
			}
			if med := quantile(all[i], 0.5); finite(med) {
				c.line(categorical[1], 1.2, 1, cx-colW*0.33, yAt(med), cx+colW*0.33, yAt(med))
			}
			if ri == len(rows)-1 {
				c.text(cx, y0+plotH+7, fmt.Sprintf("#%d", i+1), tickSize, "middle", black)
			}
		}
	}
	c.text(left, H-3, "setting number (see the settings table)", textSize, "start", black)
	return finish(c, "seed-spread", "Each dot is one run (trustworthiness) or one pair of runs of the same setting (disparity, Jaccard); the orange bar is the median. Wide strips mean the seed matters. Final KL is left out here because it is not comparable across perplexities; the settings table lists it.")
}

// traceFigure draws the KL traces, one panel per setting. The y axis is
// shared by the settings of one perplexity only (KL is not comparable
// across perplexities); a dashed line marks the end of early exaggeration.
func traceFigure(st *studyview.View) (*Figure, error) {
	n := len(st.Settings)
	cols, rows := gridDims(n)
	const left, head, foot = 32.0, 12.0, 22.0
	gap := left // each panel has its own y ticks and title
	pw := (fullWidth - left - 8 - float64(cols-1)*gap) / float64(cols)
	ph := math.Min(80, pw*0.6)
	H := 28 + float64(rows)*(ph+head+foot)
	c := newCanvas(fullWidth, H, "KL divergence by iteration")
	c.bold(6, 11, "KL divergence by iteration, one line per seed", titleSize, "start")
	c.dashed(grey, 0.6, []float64{2, 1.5}, 6, 19, 18, 19)
	c.text(21, 21, "end of early exaggeration; y axes shared within a perplexity only", tickSize, "start", grey)
	maxIt := 0
	lo, hi := map[string]float64{}, map[string]float64{}
	for _, r := range st.Runs {
		s := st.Setting(r.SettingID)
		if s == nil {
			continue
		}
		g := s.Param("perplexity")
		for _, tp := range r.Trace {
			if !finite(tp.KL) {
				continue
			}
			maxIt = max(maxIt, tp.Iter)
			if _, ok := lo[g]; !ok {
				lo[g], hi[g] = tp.KL, tp.KL
			}
			lo[g], hi[g] = math.Min(lo[g], tp.KL), math.Max(hi[g], tp.KL)
		}
	}
	if maxIt == 0 {
		c.text(20, 40, "no KL traces in this study", textSize, "start", grey)
		return finish(c, "kl-traces", "The study holds no KL traces.")
	}
	for i := range st.Settings {
		s := &st.Settings[i]
		g := s.Param("perplexity")
		px := left + float64(i%cols)*(pw+gap)
		py := 26 + float64(i/cols)*(ph+head+foot)
		c.text(px, py+7, fitText(fmt.Sprintf("#%d %s", i+1, shortLabel(st, s)), textSize, pw, false), textSize, "start", black)
		top := py + head
		c.rect(px, top, pw, ph, rgb{0xfa, 0xfa, 0xfa}, &light, "")
		l, h := lo[g], hi[g]
		if _, ok := lo[g]; !ok {
			c.text(px+pw/2, top+ph/2, "no trace", textSize, "middle", grey)
			continue
		}
		if h == l {
			h = l + 1
		}
		if ex, err := parseInt(s.Param("exaggeration_iters")); err == nil && ex > 0 && ex < maxIt {
			x := px + float64(ex)/float64(maxIt)*pw
			c.dashed(grey, 0.6, []float64{2, 1.5}, x, top, x, top+ph)
		}
		k := 0
		for _, r := range st.Runs {
			if r.SettingID != s.ID || len(r.Trace) == 0 {
				continue
			}
			var pts []float64
			for _, tp := range r.Trace {
				if finite(tp.KL) {
					pts = append(pts, px+float64(tp.Iter)/float64(maxIt)*pw, top+ph-(tp.KL-l)/(h-l)*ph)
				}
			}
			c.line(categorical[k%len(categorical)], 0.8, 0.9, pts...)
			k++
		}
		c.text(px, top+ph+7, "0", tickSize, "start", black)
		c.text(px+pw, top+ph+7, fmt.Sprint(maxIt), tickSize, "end", black)
		c.text(px+pw/2, top+ph+15, "iteration", textSize, "middle", black)
		c.text(px-2, top+5, fmtScore(h), tickSize, "end", black)
		c.text(px-2, top+ph, fmtScore(l), tickSize, "end", black)
		c.rotated(px-left+8, top+ph/2, "KL divergence", textSize, "middle", black, -90)
	}
	return finish(c, "kl-traces", "KL divergence recorded during optimisation, one line per seed; the dashed line marks the end of early exaggeration (the KL of the unexaggerated P is recorded throughout). Panels of the same perplexity share their y axis; KL is not comparable across perplexities. Lines that have not flattened by the end suggest more iterations.")
}
