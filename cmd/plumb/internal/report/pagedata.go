package report

import (
	"encoding/base64"
	"encoding/binary"
	"fmt"
	"math"
	"math/rand/v2"
	"plumb/cmd/plumb/internal/studyview"
	"strconv"
)

// The page's maps draw every point up to maxShownPoints per panel; above
// that they draw a display sample of maxShownPoints points drawn with a
// fixed seed (sampleSeed), and the page says so. The runs of a setting
// show the first maxRunPoints points of the same sample. Coordinates are
// stored quantised to 16 bits per axis over the box of all layouts (base64
// in the page), which keeps 12 settings × 100,000 points with three runs
// each within pageBudget bytes.
const (
	maxShownPoints = 100_000
	maxRunPoints   = 25_000
	sampleSeed     = 1
	// spreadScale is the fixed colour scale of per-point spread when the
	// study has no per-point stability: spread as a share of the map's RMS
	// radius, full colour at 0.1 (our choice: a point that moves a tenth of
	// the map's typical radius between seeds has left its neighbourhood in
	// any map with more than a handful of clusters).
	spreadScale = 0.1
)

// pageData is what the page's script reads (JSON in a script element).
type pageData struct {
	N        int      `json:"n"`
	Shown    int      `json:"shown"`
	RunShown int      `json:"runShown"`
	IDs      []string `json:"ids"`
	// Label data: names in colour order, their colours, and each shown
	// point's label index (uint16 little-endian, base64).
	LabelColumn string   `json:"labelColumn,omitempty"`
	LabelNames  []string `json:"labelNames,omitempty"`
	LabelColors []string `json:"labelColors,omitempty"`
	LabelOther  int      `json:"labelOther"`
	Lab         string   `json:"lab,omitempty"`
	// View is the initial view box in quantised units (x0, x1, y0, y1).
	View [4]float64 `json:"view"`
	// Box is the quantisation box in layout units (x0, x1, y0, y1).
	Box         [4]float64    `json:"box"`
	Stability   pageScale     `json:"stability"`
	Categorical []string      `json:"categorical"`
	Other       string        `json:"other"`
	Ramp        []string      `json:"ramp"`
	Settings    []pageSetting `json:"settings"`
	Recommended int           `json:"recommended"`
	Reference   int           `json:"reference"`
	HasClusters bool          `json:"hasClusters"`
}

// pageScale says what the per-point colour scale shows.
type pageScale struct {
	// Name is "stability" or "spread"; Words the legend's sentence; Unit
	// the text beside a value in tooltips.
	Name, Words, Low, High string
	// Max is the value that maps to full colour; values are stored as
	// u = value/Max (stability: 1 − value) in 0..254, 255 for none.
	Max float64
	// Invert is true when the stored u is 1 − value (stability, where
	// higher is better).
	Invert bool
}

type pageSetting struct {
	ID       string    `json:"id"`
	Label    string    `json:"label"`
	Short    string    `json:"short"`
	Number   int       `json:"number"`
	RunsDone int       `json:"runsDone"`
	XY       string    `json:"xy,omitempty"`
	U        string    `json:"u,omitempty"`
	Clusters string    `json:"clusters,omitempty"`
	Runs     []pageRun `json:"runs,omitempty"`
	Radius   float64   `json:"radius"`
}

type pageRun struct {
	ID       string `json:"id"`
	Seed     string `json:"seed"`
	XY       string `json:"xy"`
	Clusters string `json:"clusters,omitempty"`
}

// displayOrder returns the points the page shows, in drawing order: a
// permutation of all points from a fixed seed (so no label is always drawn
// on top), cut to maxShownPoints.
func displayOrder(n int) []int {
	p := rand.New(rand.NewPCG(sampleSeed, 0)).Perm(n)
	if len(p) > maxShownPoints {
		p = p[:maxShownPoints]
	}
	return p
}

// buildPageData lays out the data of the interactive maps. ref is the
// setting whose frame every layout is rotated onto; rec the recommended
// setting's index or −1.
func buildPageData(st *studyview.View, ref, rec int) (*pageData, error) {
	n := len(st.IDs)
	order := displayOrder(n)
	d := &pageData{N: n, Shown: len(order), RunShown: min(len(order), maxRunPoints), Recommended: rec, Reference: ref,
		Other: otherColor.hex(), LabelOther: -1}
	for _, c := range categorical {
		d.Categorical = append(d.Categorical, c.hex())
	}
	for _, c := range warnStops {
		d.Ramp = append(d.Ramp, c.hex())
	}
	d.IDs = make([]string, len(order))
	for k, p := range order {
		d.IDs[k] = st.IDs[p]
	}
	if st.HasLabels() {
		names, mk := labelColours(st.Labels)
		d.LabelColumn = st.Input.LabelColumn
		pos := map[string]int{}
		for i, l := range names {
			pos[l] = i
			d.LabelNames = append(d.LabelNames, l)
			d.LabelColors = append(d.LabelColors, mk[l].col.hex())
			if mk[l].col == otherColor && d.LabelOther < 0 {
				d.LabelOther = i
			}
		}
		idx := make([]uint16, len(order))
		for k, p := range order {
			idx[k] = uint16(min(pos[st.Labels[p]], math.MaxUint16))
		}
		d.Lab = b64u16(idx)
	}

	// Every layout in the reference frame.
	aligned := make([][]float64, len(st.Settings))
	runs := make([][][]float64, len(st.Settings))
	if ref >= 0 {
		var err error
		aligned, err = alignedConsensus(st, ref)
		if err != nil {
			return nil, err
		}
		for i := range st.Settings {
			if aligned[i] == nil {
				continue
			}
			for _, r := range st.Settings[i].RunLayouts {
				a, err := studyview.AlignOnto(aligned[i], r.XY)
				if err != nil {
					return nil, fmt.Errorf("report: run %s: %w", r.RunID, err)
				}
				// Same size as the consensus it was aligned onto.
				if rc, ra := rmsRadius(finitePairs(aligned[i])), rmsRadius(finitePairs(a)); ra > 0 && rc > 0 {
					cx, cy := centroid(finitePairs(a))
					f := rc / ra
					for p := 0; p+1 < len(a); p += 2 {
						a[p] = cx + f*(a[p]-cx)
						a[p+1] = cy + f*(a[p+1]-cy)
					}
				}
				runs[i] = append(runs[i], a)
			}
		}
	}
	// The quantisation box holds every shown point of every layout; the
	// initial view is the 0.5–99.5th percentile box of the consensus
	// layouts, widened by 8% (layoutBounds), so far outliers do not shrink
	// the clusters.
	x0, x1, y0, y1 := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	grow := func(y []float64) {
		for _, p := range order {
			if 2*p+1 < len(y) && finite(y[2*p]) && finite(y[2*p+1]) {
				x0, x1 = math.Min(x0, y[2*p]), math.Max(x1, y[2*p])
				y0, y1 = math.Min(y0, y[2*p+1]), math.Max(y1, y[2*p+1])
			}
		}
	}
	for i := range aligned {
		grow(aligned[i])
		for _, r := range runs[i] {
			grow(r)
		}
	}
	if !finite(x0) || x1 <= x0 || y1 <= y0 {
		x0, x1, y0, y1 = -1, 1, -1, 1
	}
	d.Box = [4]float64{x0, x1, y0, y1}
	b := layoutBounds(aligned...)
	qx := func(v float64) float64 { return math.Round((v - x0) / (x1 - x0) * 65534) }
	qy := func(v float64) float64 { return math.Round((v - y0) / (y1 - y0) * 65534) }
	d.View = [4]float64{qx(math.Max(b.x0, x0)), qx(math.Min(b.x1, x1)), qy(math.Max(b.y0, y0)), qy(math.Min(b.y1, y1))}
	quant := func(y []float64, m int) string {
		q := make([]uint16, 2*m)
		for k, p := range order[:m] {
			q[2*k], q[2*k+1] = 65535, 65535
			if finite(y[2*p]) && finite(y[2*p+1]) {
				q[2*k], q[2*k+1] = uint16(qx(y[2*p])), uint16(qy(y[2*p+1]))
			}
		}
		return b64u16(q)
	}

	// Per-point colour scale: the study's stability in [0, 1] when it has
	// one, otherwise spread relative to the map's radius.
	useStab := false
	for i := range st.Settings {
		if len(st.Settings[i].Stability) == n && n > 0 {
			useStab = true
		}
	}
	if useStab {
		d.Stability = pageScale{Name: "stability", Words: "per-point stability across runs, on its fixed scale from 1 (light: stable) to 0 (dark: unstable)",
			Low: "1 (stable)", High: "0 (unstable)", Max: 1, Invert: true}
	} else {
		d.Stability = pageScale{Name: "spread", Words: fmt.Sprintf("per-point spread across seeds (distance from the consensus after alignment) as a share of the map's RMS radius, on a fixed scale from 0 (light: stable) to %g or more (dark: unstable)", spreadScale),
			Low: "0 (stable)", High: fmt.Sprintf("≥ %g of the radius (unstable)", spreadScale), Max: spreadScale}
	}
	for i := range st.Settings {
		s := &st.Settings[i]
		ps := pageSetting{ID: s.ID, Label: st.Label(s), Short: shortLabel(st, s), Number: i + 1, RunsDone: s.RunsDone}
		if aligned[i] != nil {
			ps.XY = quant(aligned[i], len(order))
			ps.Radius = rmsRadius(s.Consensus)
			u := make([]byte, len(order))
			for k, p := range order {
				v := math.NaN()
				switch {
				case useStab && len(s.Stability) == n:
					v = 1 - s.Stability[p]
				case !useStab && len(s.Spread) == n && ps.Radius > 0:
					v = s.Spread[p] / ps.Radius / spreadScale
				}
				u[k] = 255
				if finite(v) {
					u[k] = byte(math.Round(254 * clamp01(v)))
				}
			}
			ps.U = base64.StdEncoding.EncodeToString(u)
			if len(s.Clusters) == n {
				ps.Clusters = clusterCodes(s.Clusters, order)
				d.HasClusters = true
			}
			for k, r := range s.RunLayouts {
				pr := pageRun{ID: r.RunID, Seed: strconv.FormatUint(r.Seed, 10), XY: quant(runs[i][k], d.RunShown)}
				if len(r.Clusters) == n {
					pr.Clusters = clusterCodes(r.Clusters, order[:d.RunShown])
				}
				ps.Runs = append(ps.Runs, pr)
			}
		}
		d.Settings = append(d.Settings, ps)
	}
	return d, nil
}

// clusterCodes stores cluster id + 1 per shown point (0: no cluster).
func clusterCodes(c []int32, order []int) string {
	q := make([]uint16, len(order))
	for k, p := range order {
		if c[p] >= 0 && c[p] < math.MaxUint16 {
			q[k] = uint16(c[p] + 1)
		}
	}
	return b64u16(q)
}

func b64u16(v []uint16) string {
	b := make([]byte, 2*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint16(b[2*i:], x)
	}
	return base64.StdEncoding.EncodeToString(b)
}

// finitePairs returns the points of y with both coordinates finite.
func finitePairs(y []float64) []float64 {
	out := make([]float64, 0, len(y))
	for p := 0; p+1 < len(y); p += 2 {
		if finite(y[p]) && finite(y[p+1]) {
			out = append(out, y[p], y[p+1])
		}
	}
	return out
}
