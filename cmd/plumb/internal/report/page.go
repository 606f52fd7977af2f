package report

import (
	"bytes"
	_ "embed"
	"fmt"
	"html/template"
	"plumb/cmd/plumb/internal/recommend"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
	"strings"
)

// The page is built with html/template, which escapes every value for the
// context it lands in (text, attribute, URL, script); the style sheet and
// scripts are embedded files; the maps' data is a JSON value in a
// <script type="application/json"> element, which html/template escapes so
// that no id, label or column name can end the element. The figures' SVG
// is inserted as it is: svg() escapes every text it writes.
var (
	//go:embed assets/page.html
	pageHTML string
	//go:embed assets/page.css
	pageCSS string
	//go:embed assets/table.js
	tableJS string
	//go:embed assets/maps.js
	mapsJS string

	pageTemplate = template.Must(template.New("page").Funcs(template.FuncMap{"fmtScore": fmtScore}).Parse(pageHTML))
)

type pageView struct {
	Title, Tool, Version, Created string
	N, D, NSettings, NSeeds       int
	Done, NRuns, Failed           int
	Rec                           *recView
	NoRec, Seedless, Rule         string
	Excluded                      []recommend.Exclusion
	Cautions                      []string
	Maps                          bool
	StabilityName                 string
	SampleNote, RunNote           string
	Data                          *pageData
	DPI                           int
	Width, TextPt                 string
	Figures                       []figView
	Table                         tableView
	FailedRuns                    []studyview.Run
	Methods, References           []string
	Fingerprint, PlanHash         string
	CSS                           template.CSS
	TableJS, MapsJS               template.JS
}

type recView struct {
	Label, ID                   string
	Summary, NotMeasured, Seeds string
	RunnerUp, Step, Margin, Why string
	Compare                     []compareRow
	Indistinguishable           string
	// ClustersCaption, Clusters and Labels are the per-cluster and
	// per-label tables of the recommended setting.
	ClustersCaption string
	Clusters        []studyview.Cluster
	HasLabels       bool
	Labels          []labelRow
}

type labelRow struct {
	Label, Points, Stable, Mean, With, Share string
}

func clusterRows(st *studyview.View, id string) []studyview.Cluster {
	out := st.ClustersOf(id)
	for i := range out {
		out[i].Labels = shorten(out[i].Labels, 5)
	}
	return out
}

func labelRows(st *studyview.View, id string) []labelRow {
	var out []labelRow
	for _, l := range st.LabelsOf(id) {
		out = append(out, labelRow{Label: l.Label, Points: fmt.Sprint(l.Points), Stable: fmtShare(l.Stable), Mean: fmtScore(l.MeanScore),
			With: nonEmpty(l.MixesWith, "–"), Share: fmtScore(l.MixesShare)})
	}
	return out
}

// shorten keeps the first k comma-separated items of a list.
func shorten(list string, k int) string {
	parts := strings.Split(list, ", ")
	if len(parts) <= k {
		return list
	}
	return strings.Join(parts[:k], ", ") + fmt.Sprintf(", … (%d more)", len(parts)-k)
}

type compareRow struct{ Name, A, B, Diff string }

type figView struct {
	Name, Caption string
	SVG           template.HTML
	// Big is the SVG's size when it is too large to inline (0 otherwise).
	Big int
}

// maxInlineSVG is the largest figure SVG put into the page itself; larger
// ones (the layouts of big studies, thousands of dots) are linked, since
// the interactive maps above show the same layouts.
const maxInlineSVG = 512 << 10

type tableView struct {
	Params, Scores []string
	Rows           []rowView
}

type rowView struct {
	Num            int
	ID             string
	Chosen         bool
	Params         []string
	RunsDone, Runs int
	Scores         []cellView
	Unstable       string
	UnstableV      string
	Arrangements   string
	ArrangementsV  string
	Medoid         string
	Rank, RankV    string
}

type cellView struct {
	V, Text, IQR string
	OK           bool
}

// page renders index.html.
func page(st *studyview.View, rec *Recommendation, recErr error, figs []*Figure, methods []string, data *pageData) ([]byte, error) {
	v := pageView{Tool: nonEmpty(st.Tool, "plumb"), Version: st.Version, Created: nonEmpty(st.Created, "(time not recorded)"),
		N: st.Input.N, D: st.Input.D, NSettings: len(st.Settings), NSeeds: len(st.Seeds), NRuns: len(st.Runs),
		Rule: rec0(rec).Words(), Cautions: Cautions, Methods: methods, References: Cited(strings.Join(methods, " ")),
		Fingerprint: nonEmpty(st.Input.Fingerprint, "not recorded"), PlanHash: nonEmpty(st.PlanHash, "not recorded"),
		DPI: pngDPI, Width: fmt.Sprintf("two-column (%.0f mm)", fullWidth/72*25.4), TextPt: fmt.Sprintf("%g–%g", tickSize, titleSize),
		CSS: template.CSS(pageCSS), TableJS: template.JS(tableJS), MapsJS: template.JS(mapsJS)}
	v.Title = "t-SNE stability study"
	if st.Dir != "" {
		v.Title += ": " + st.Dir
	}
	for _, r := range st.Runs {
		switch r.Status {
		case "done":
			v.Done++
		case "failed":
			v.Failed++
			v.FailedRuns = append(v.FailedRuns, r)
		}
	}
	if rec == nil {
		if recErr != nil {
			v.NoRec = strings.TrimPrefix(recErr.Error(), "recommend: ")
		} else {
			v.NoRec = "no setting could be recommended"
		}
	} else {
		s := st.Setting(rec.Chosen.ID)
		r := &recView{Label: st.Label(s), ID: s.ID, Summary: settingSummary(s), ClustersCaption: ClustersCaption(s),
			Clusters: clusterRows(st, s.ID), HasLabels: st.HasLabels(), Labels: labelRows(st, s.ID)}
		if !rec.StabilityMeasured {
			r.NotMeasured = notMeasuredWhy(s)
		} else {
			r.Seeds = stability.SeedWarning(s.RunsDone)
		}
		if rec.RunnerUp != nil {
			r.RunnerUp = st.Label(st.Setting(rec.RunnerUp.ID))
			r.Step, r.Margin, r.Why = StepWords(rec.DecidedBy), MarginWords(rec.DecidedBy, rec.Margin), rec.Why
			for _, row := range []struct {
				name string
				a, b float64
			}{
				{"R_NX AUC (higher is more faithful)", rec.Chosen.RNXAUC.Median, rec.RunnerUp.RNXAUC.Median},
				{"distinct arrangements (fewer is more stable; 0 = not measured)", float64(rec.Chosen.Arrangements), float64(rec.RunnerUp.Arrangements)},
				{"disparity (lower is better)", rec.Chosen.Disparity.Median, rec.RunnerUp.Disparity.Median},
				{"kNN Jaccard (higher is better)", rec.Chosen.Jaccard.Median, rec.RunnerUp.Jaccard.Median},
				{"final KL (lower is better; compared only at one perplexity)", rec.Chosen.KL.Median, rec.RunnerUp.KL.Median},
			} {
				r.Compare = append(r.Compare, compareRow{row.name, fmtScore(row.a), fmtScore(row.b), fmtScore(row.a - row.b)})
			}
		}
		var names []string
		for _, id := range rec.Indistinguishable {
			names = append(names, st.Label(st.Setting(id)))
		}
		r.Indistinguishable = strings.Join(names, "; ")
		v.Rec = r
		v.Excluded = rec.Excluded
	}
	v.Seedless = strings.Join(unmeasured(st), "; ")
	if data != nil {
		v.Maps, v.Data = true, data
		v.StabilityName = data.Stability.Name
		if data.Shown < data.N {
			v.SampleNote = fmt.Sprintf("The maps show a display sample of %d of the %d points (drawn with the fixed seed %d; the same points in every map). The figures and every score use all points.", data.Shown, data.N, sampleSeed)
		} else {
			v.SampleNote = fmt.Sprintf("The maps show all %d points (up to %d per map are drawn in full; larger studies show a seeded display sample).", data.N, maxShownPoints)
		}
		if data.RunShown < data.Shown {
			v.RunNote = fmt.Sprintf("Run maps show the first %d points of the display sample, so a selection there covers only the selected points among them.", data.RunShown)
		}
	}
	for _, f := range figs {
		fv := figView{Name: f.Name, Caption: f.Caption}
		if len(f.SVG) <= maxInlineSVG {
			fv.SVG = template.HTML(f.SVG)
		} else {
			fv.Big = len(f.SVG)
		}
		v.Figures = append(v.Figures, fv)
	}
	v.Table = settingsTableView(st, rec)
	var b bytes.Buffer
	if err := pageTemplate.Execute(&b, &v); err != nil {
		return nil, fmt.Errorf("report: page: %w", err)
	}
	return b.Bytes(), nil
}

func settingsTableView(st *studyview.View, rec *Recommendation) tableView {
	varied := st.Varied()
	cols := []struct {
		name string
		get  func(*studyview.Setting) stability.MedianIQR
	}{
		{"R_NX AUC", func(s *studyview.Setting) stability.MedianIQR { return s.RNXAUC }},
		{"trustworthiness", func(s *studyview.Setting) stability.MedianIQR { return s.Trustworthiness }},
		{"continuity", func(s *studyview.Setting) stability.MedianIQR { return s.Continuity }},
		{"kNN recall", func(s *studyview.Setting) stability.MedianIQR { return s.KNNRecall }},
		{"distance Spearman", func(s *studyview.Setting) stability.MedianIQR { return s.DistanceSpearman }},
		{"label accuracy", func(s *studyview.Setting) stability.MedianIQR { return s.LabelAccuracy }},
		{"label purity", func(s *studyview.Setting) stability.MedianIQR { return s.LabelPurity }},
		{"disparity", func(s *studyview.Setting) stability.MedianIQR { return s.Disparity }},
		{"kNN Jaccard", func(s *studyview.Setting) stability.MedianIQR { return s.Jaccard }},
		{"seed distance Spearman", func(s *studyview.Setting) stability.MedianIQR { return s.PairSpearman }},
		{"final KL", func(s *studyview.Setting) stability.MedianIQR { return s.KL }},
	}
	// Leave out score columns with no value anywhere (e.g. label accuracy
	// without labels).
	var keep []int
	for ci, c := range cols {
		for i := range st.Settings {
			if finite(c.get(&st.Settings[i]).Median) {
				keep = append(keep, ci)
				break
			}
		}
	}
	rank := map[string]int{}
	if rec != nil {
		for i, id := range rec.Ranking {
			rank[id] = i + 1
		}
	}
	var t tableView
	for _, p := range varied {
		t.Params = append(t.Params, p.Name)
	}
	for _, ci := range keep {
		t.Scores = append(t.Scores, cols[ci].name)
	}
	for i := range st.Settings {
		s := &st.Settings[i]
		r := rowView{Num: i + 1, ID: s.ID, Chosen: rec != nil && rec.Chosen.ID == s.ID, RunsDone: s.RunsDone, Runs: s.Runs,
			Unstable: fmt.Sprintf("%.1f", 100*s.UnstableShare), UnstableV: fmt.Sprintf("%g", s.UnstableShare), Rank: "–", RankV: "9999",
			Arrangements: "not measured", ArrangementsV: "NaN", Medoid: nonEmpty(s.MedoidRun, "–")}
		if !finite(s.UnstableShare) {
			r.Unstable = "not measured"
		}
		if s.Arrangements > 0 {
			r.Arrangements, r.ArrangementsV = fmt.Sprintf("%d (%s)", s.Arrangements, s.ArrangementSizes), fmt.Sprint(s.Arrangements)
		}
		for _, p := range varied {
			r.Params = append(r.Params, s.Param(p.Name))
		}
		for _, ci := range keep {
			v := cols[ci].get(s)
			c := cellView{V: "NaN"}
			if finite(v.Median) {
				c = cellView{V: fmt.Sprintf("%g", v.Median), Text: fmtScore(v.Median), IQR: fmtScore(v.IQR), OK: true}
			}
			r.Scores = append(r.Scores, c)
		}
		if k, ok := rank[s.ID]; ok {
			r.Rank, r.RankV = fmt.Sprint(k), fmt.Sprint(k)
		}
		t.Rows = append(t.Rows, r)
	}
	return t
}

func rec0(r *Recommendation) Rule {
	if r == nil {
		return Rule{}
	}
	return r.Rule
}
