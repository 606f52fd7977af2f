package report

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"plumb/cmd/plumb/internal/recommend"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/internal/atomicfile"
)

// Options configures Write.
type Options struct {
	// Rule holds the recommendation tolerances (zero fields: defaults).
	Rule Rule
}

// Output describes what Write produced.
type Output struct {
	// Dir is the report directory; Index the path of index.html.
	Dir, Index string
	// Files lists every file written, index.html last.
	Files []string
	// Recommendation is nil when no setting could be recommended.
	Recommendation *Recommendation
	// Chosen is the recommended setting's label ("" if none).
	Chosen string
	// Figures are the figures in page order.
	Figures []*Figure
}

// Rule and Recommendation are the recommendation rule's (package
// recommend), named here for the report's callers.
type (
	Rule           = recommend.Rule
	Recommendation = recommend.Recommendation
)

// Candidates turns the study's settings into the rule's score table: the
// median and IQR of the R_NX AUC, disparity, Jaccard and KL, what varied
// between the runs and their number of distinct arrangements.
func Candidates(st *studyview.View) []recommend.Setting {
	var cs []recommend.Setting
	for _, s := range st.Settings {
		p := 0.0
		if s.Param("perplexity") != "" {
			fmt.Sscan(s.Param("perplexity"), &p)
		}
		cs = append(cs, recommend.Setting{ID: s.ID, Perplexity: p, Runs: s.RunsDone, Varied: s.Varied,
			RNXAUC: s.RNXAUC, Disparity: s.Disparity, Jaccard: s.Jaccard, Arrangements: s.Arrangements, KL: s.KL})
	}
	return cs
}

// Build computes the recommendation, the figures and the methods text
// without touching the disk.
func Build(st *studyview.View, opt Options) (rec *Recommendation, recErr error, figs []*Figure, methods []string, err error) {
	if len(st.Settings) == 0 {
		return nil, nil, nil, nil, errors.New("report: the study has no settings")
	}
	for i := range st.Settings {
		if c := st.Settings[i].Consensus; len(c) != 0 && len(c) != 2*len(st.IDs) {
			return nil, nil, nil, nil, fmt.Errorf("report: setting %s: consensus has %d coordinates for %d points", st.Settings[i].ID, len(c), len(st.IDs))
		}
	}
	rec, recErr = recommend.Recommend(Candidates(st), opt.Rule)
	if recErr != nil && !errors.Is(recErr, recommend.ErrNoSetting) {
		return nil, nil, nil, nil, recErr
	}
	ref, chosen := -1, ""
	if rec != nil {
		chosen = rec.Chosen.ID
		for i := range st.Settings {
			if st.Settings[i].ID == chosen && len(st.Settings[i].Consensus) > 0 {
				ref = i
			}
		}
	}
	if ref < 0 {
		for i := range st.Settings {
			if len(st.Settings[i].Consensus) > 0 {
				ref = i
				break
			}
		}
	}
	add := func(f *Figure, e error) {
		if e != nil && err == nil {
			err = e
		}
		if f != nil {
			figs = append(figs, f)
		}
	}
	if ref >= 0 {
		add(layoutsFigure(st, ref, chosen))
	}
	for _, sd := range headline {
		add(heatmapFigure(st, sd, chosen))
	}
	if rec != nil && ref >= 0 && st.Settings[ref].ID == chosen {
		add(stabilityFigure(st, ref))
	}
	add(spreadFigure(st))
	add(traceFigure(st))
	if err != nil {
		return nil, nil, nil, nil, err
	}
	return rec, recErr, figs, Methods(st, rec), nil
}

// mapsData lays out the interactive maps' data (nil when no setting has a
// consensus layout), in the frame of the recommended setting or else the
// first one with a consensus.
func mapsData(st *studyview.View, rec *Recommendation) (*pageData, error) {
	ref, chosen := -1, -1
	for i := range st.Settings {
		if rec != nil && st.Settings[i].ID == rec.Chosen.ID {
			chosen = i
			if len(st.Settings[i].Consensus) > 0 {
				ref = i
			}
		}
	}
	for i := range st.Settings {
		if ref < 0 && len(st.Settings[i].Consensus) > 0 {
			ref = i
		}
	}
	if ref < 0 || len(st.IDs) == 0 {
		return nil, nil
	}
	return buildPageData(st, ref, chosen)
}

// Write builds the report and writes it into dir: figures/NAME.pdf,
// figures/NAME.png and figures/NAME.svg for each figure, methods.md and index.html (last, so a
// present index.html means a complete report). Every file is written
// atomically (temporary file in the same directory, then rename).
func Write(st *studyview.View, dir string, opt Options) (*Output, error) {
	rec, recErr, figs, methods, err := Build(st, opt)
	if err != nil {
		return nil, err
	}
	out := &Output{Dir: dir, Index: filepath.Join(dir, "index.html"), Recommendation: rec, Figures: figs}
	if rec != nil {
		out.Chosen = st.Label(st.Setting(rec.Chosen.ID))
	}
	figDir := filepath.Join(dir, "figures")
	if err := os.MkdirAll(figDir, 0o755); err != nil {
		return nil, fmt.Errorf("report: %w", err)
	}
	put := func(path string, data []byte) error {
		if err := atomicfile.WriteFile(path, data); err != nil {
			return fmt.Errorf("report: %w", err)
		}
		out.Files = append(out.Files, path)
		return nil
	}
	for _, f := range figs {
		for _, file := range []struct {
			ext  string
			data []byte
		}{{".pdf", f.PDF}, {".png", f.PNG}, {".svg", f.SVG}} {
			if err := put(filepath.Join(figDir, f.Name+file.ext), file.data); err != nil {
				return nil, err
			}
		}
	}
	if err := put(filepath.Join(dir, "methods.md"), []byte(MethodsMarkdown(st, rec))); err != nil {
		return nil, err
	}
	data, err := mapsData(st, rec)
	if err != nil {
		return nil, err
	}
	html, err := page(st, rec, recErr, figs, methods, data)
	if err != nil {
		return nil, err
	}
	if err := put(out.Index, html); err != nil {
		return nil, err
	}
	return out, nil
}
