package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/urfave/cli/v2"

	"plumb/internal/words"
	"plumb/stability"
	"plumb/sweep"
)

func init() {
	register(&cli.Command{
		Name:      "show",
		Usage:     "print a study's settings with their headline scores",
		UsageText: "plumb show STUDY_DIR [--sort COLUMN] [--desc] [--json]",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "sort", Usage: "sort the settings by `COLUMN` (a key of --json's settings, e.g. trustworthiness_median)"},
			&cli.BoolFlag{Name: "desc", Usage: "sort in descending order"},
			&cli.BoolFlag{Name: "json", Usage: "print JSON for machines"},
		},
		Action: showAction,
	})
}

// settingRow is one setting as shown: ordered keys and values (float64
// NaN for missing, printed as null / "-").
type settingRow struct {
	keys []string
	vals map[string]any
}

func (r *settingRow) set(k string, v any) {
	if _, ok := r.vals[k]; !ok {
		r.keys = append(r.keys, k)
	}
	r.vals[k] = v
}

func (r *settingRow) MarshalJSON() ([]byte, error) {
	var b strings.Builder
	b.WriteByte('{')
	for i, k := range r.keys {
		if i > 0 {
			b.WriteByte(',')
		}
		kb, _ := json.Marshal(k)
		b.Write(kb)
		b.WriteByte(':')
		v := r.vals[k]
		if f, ok := v.(float64); ok && (math.IsNaN(f) || math.IsInf(f, 0)) {
			v = nil
		}
		vb, err := json.Marshal(v)
		if err != nil {
			return nil, err
		}
		b.Write(vb)
	}
	b.WriteByte('}')
	return []byte(b.String()), nil
}

// showRows builds one row per setting from the score table, or, for an
// unscored study, from the runs table.
func showRows(st *sweep.Study) []*settingRow {
	byID := map[string]*sweep.SettingScore{}
	for i := range st.SettingScores {
		byID[st.SettingScores[i].ID] = &st.SettingScores[i]
	}
	var rows []*settingRow
	for _, s := range st.Settings {
		r := &settingRow{vals: map[string]any{}}
		r.set("setting_id", s.ID)
		r.set("perplexity", s.Perplexity)
		r.set("learning_rate", s.LearningRateSpec())
		r.set("exaggeration", s.Exaggeration)
		r.set("exaggeration_iters", s.ExaggerationIters)
		r.set("iters", s.Iters)
		r.set("init", s.Init)
		r.set("gradient", s.Gradient)
		r.set("subsample", s.Fraction())
		var kls []float64
		done, failed := 0, 0
		for _, row := range st.Rows {
			if row.SettingID != s.ID {
				continue
			}
			if row.Status == sweep.StatusDone {
				done++
				kls = append(kls, row.KL)
			} else {
				failed++
			}
		}
		r.set("runs_planned", len(st.Plan.Seeds))
		r.set("runs_done", done)
		r.set("runs_failed", failed)
		if ss, ok := byID[s.ID]; ok {
			add := func(name string, sp stability.MedianIQR) {
				r.set(name+"_median", sp.Median)
				r.set(name+"_iqr", sp.IQR)
			}
			add("kl", ss.KL)
			add("disparity", ss.Disparity)
			add("jaccard", ss.Jaccard)
			add("pair_spearman", ss.PairSpearman)
			add("trustworthiness", ss.Trustworthiness)
			add("continuity", ss.Continuity)
			add("knn_recall", ss.KNNRecall)
			add("distance_spearman", ss.DistanceSpearman)
			add("label_accuracy", ss.LabelAccuracy)
			add("label_purity", ss.LabelPurity)
			add("rnx_auc", ss.RNXAUC)
			add("coassignment", ss.CoAssignment)
			r.set("unstable_share", ss.UnstableShare)
			r.set("varied", ss.Varied)
			r.set("stability_measured", ss.NotMeasured == "" && ss.Varied != "" && ss.RunsDone >= 2)
			var reason any // null in JSON when measured; the reason otherwise
			if ss.NotMeasured != "" {
				reason = ss.NotMeasured
			}
			r.set("not_measured", reason)
			r.set("medoid_run", ss.MedoidRun)
			r.set("clusters", intOrNaN(ss.Clusters, ss.Clusters >= 0))
			r.set("arrangements", intOrNaN(ss.Arrangements, ss.Arrangements > 0))
			r.set("arrangement_sizes", ss.ArrangementSizes)
			r.set("bimodal", ss.Bimodal)
			r.set("consensus_shown", ss.ConsensusShown)
		} else {
			r.set("kl_median", stability.Quantile(kls, 0.5))
		}
		rows = append(rows, r)
	}
	return rows
}

func showAction(c *cli.Context) error {
	dir, err := studyArg(c)
	if err != nil {
		return err
	}
	var st *sweep.Study
	err = readStudy(c.App.ErrWriter, dir, func() (err error) {
		st, err = sweep.Open(dir)
		return err
	})
	if err != nil {
		return err
	}
	rows := showRows(st)
	if key := c.String("sort"); key != "" {
		if len(rows) > 0 {
			if _, ok := rows[0].vals[key]; !ok {
				return &exitError{code: 2, err: fmt.Errorf("--sort %q: no such column (have %s)", key, strings.Join(rows[0].keys, ", "))}
			}
		}
		desc := c.Bool("desc")
		sort.SliceStable(rows, func(i, j int) bool {
			a, b := rows[i].vals[key], rows[j].vals[key]
			less, nanA, nanB := compare(a, b)
			if nanA || nanB {
				return nanB && !nanA // missing values last
			}
			if desc {
				less, _, _ = compare(b, a)
			}
			return less
		})
	}
	if c.Bool("json") {
		return showJSON(c.App.Writer, st, rows)
	}
	showTable(c.App.Writer, st, rows)
	return nil
}

// intOrNaN is v as a float64 column value, NaN (missing) when !ok.
func intOrNaN(v int, ok bool) float64 {
	if !ok {
		return math.NaN()
	}
	return float64(v)
}

// compare orders two values of one column; NaN reports missing.
func compare(a, b any) (less, nanA, nanB bool) {
	switch x := a.(type) {
	case float64:
		y := b.(float64)
		return x < y, math.IsNaN(x), math.IsNaN(y)
	case int:
		return x < b.(int), false, false
	case string:
		return x < b.(string), false, false
	case bool:
		return !x && b.(bool), false, false
	}
	return false, false, false
}

func showJSON(w io.Writer, st *sweep.Study, rows []*settingRow) error {
	done, failed := 0, 0
	for _, r := range st.Rows {
		if r.Status == sweep.StatusDone {
			done++
		} else {
			failed++
		}
	}
	out := struct {
		Study    string        `json:"study"`
		PlanHash string        `json:"plan_hash"`
		Input    sweep.Input   `json:"input"`
		Planned  int           `json:"runs_planned"`
		Done     int           `json:"runs_done"`
		Failed   int           `json:"runs_failed"`
		Scored   bool          `json:"scored"`
		K        int           `json:"k,omitempty"`
		Problem  string        `json:"scores_problem,omitempty"`
		Settings []*settingRow `json:"settings"`
	}{st.Dir, st.Info.PlanHash, st.Info.Input, len(st.Planned), done, failed, st.SettingScores != nil, st.ScoresK, st.ScoresProblem, rows}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}

func showTable(w io.Writer, st *sweep.Study, rows []*settingRow) {
	done, failed := 0, 0
	for _, r := range st.Rows {
		if r.Status == sweep.StatusDone {
			done++
		} else {
			failed++
		}
	}
	fmt.Fprintf(w, "study %s: plan %s, %s, %d of %s done, %d failed", st.Dir, st.Info.PlanHash, words.Count(st.Info.Input.N, "point"), done, words.Count(len(st.Planned), "run"), failed)
	if st.SettingScores != nil {
		fmt.Fprintf(w, ", scored at k=%d\n", st.ScoresK)
	} else if st.ScoresProblem != "" {
		fmt.Fprintf(w, ", not scored: %s (run plumb score %s)\n", st.ScoresProblem, st.Dir)
	} else {
		fmt.Fprintf(w, ", not scored (run plumb score %s)\n", st.Dir)
	}
	cols := []struct{ key, head string }{
		{"setting_id", "setting"}, {"perplexity", "perp"}, {"learning_rate", "lr"}, {"exaggeration", "exag"},
		{"iters", "iters"}, {"init", "init"}, {"gradient", "gradient"}, {"runs_done", "done"}, {"runs_failed", "failed"},
		{"kl_median", "kl"},
	}
	if len(st.Plan.Fractions()) > 1 || st.Plan.MinFraction() < 1 {
		cols = append(cols[:7], append([]struct{ key, head string }{{"subsample", "subsample"}}, cols[7:]...)...)
	}
	if st.SettingScores != nil {
		cols = append(cols, []struct{ key, head string }{
			{"rnx_auc_median", "rnx_auc"}, {"trustworthiness_median", "trust"}, {"continuity_median", "contin"},
			{"knn_recall_median", "recall"}, {"disparity_median", "disparity"}, {"jaccard_median", "jaccard"},
			{"arrangements", "arrang"}, {"unstable_share", "unstable"}, {"clusters", "clusters"}, {"varied", "varied"}}...)
		if st.Info.Input.HasLabels {
			cols = append(cols, struct{ key, head string }{"label_accuracy_median", "label_acc"})
		}
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	for i, c := range cols {
		if i > 0 {
			fmt.Fprint(tw, "\t")
		}
		fmt.Fprint(tw, c.head)
	}
	fmt.Fprintln(tw, "\t")
	unmeasured := 0
	for _, r := range rows {
		reason, _ := r.vals["not_measured"].(string)
		if reason != "" && r.vals["varied"] == "" {
			unmeasured++
		}
		for i, c := range cols {
			if i > 0 {
				fmt.Fprint(tw, "\t")
			}
			fmt.Fprint(tw, showCell(r, c.key))
		}
		fmt.Fprintln(tw, "\t")
	}
	tw.Flush()
	if unmeasured > 0 {
		what := "1 setting"
		if unmeasured > 1 {
			what = fmt.Sprintf("%d settings", unmeasured)
		}
		fmt.Fprintf(w, "not measured: for %s %s\n", what, sweep.NotVariedReason)
	}
	if st.SettingScores != nil {
		fmt.Fprintln(w, "medians over the runs (kl, rnx_auc, trust, contin, recall) or pairs of runs (disparity, jaccard) of each setting;")
		fmt.Fprintln(w, "rnx_auc: area under R_NX(K) on a log-K axis; arrang: distinct arrangements of the runs;")
		fmt.Fprintln(w, "unstable: share of points with co-assignment < 0.75; clusters: map clusters of the medoid run;")
		fmt.Fprintln(w, "not measured: nothing varied between the runs (or one run), so no between-run reading;")
		fmt.Fprintln(w, "varied: what differed between the runs of a setting (seed: random start; subsample: the points embedded)")
		seen := map[string]bool{}
		for _, r := range rows {
			if done, ok := r.vals["runs_done"].(int); ok && done >= 2 && r.vals["stability_measured"] == true {
				if warn := stability.SeedWarning(done); warn != "" && !seen[warn] {
					seen[warn] = true
					fmt.Fprintf(w, "seeds rule: %s\n", warn)
				}
			}
		}
	}
}

// betweenRun are the columns that compare a setting's runs.
var betweenRun = map[string]bool{"disparity_median": true, "jaccard_median": true, "arrangements": true, "unstable_share": true}

// showCell prints the value of key in row r: "not measured" for a
// between-run reading of a setting whose stability was not measured.
func showCell(r *settingRow, key string) string {
	v := r.vals[key]
	if key == "varied" && v == "" {
		return "nothing"
	}
	if betweenRun[key] {
		if m, ok := r.vals["stability_measured"].(bool); ok && !m {
			if done, _ := r.vals["runs_done"].(int); done > 0 {
				return "not measured"
			}
		}
	}
	return cell(v)
}

func cell(v any) string {
	switch x := v.(type) {
	case float64:
		if math.IsNaN(x) {
			return "-"
		}
		if x == math.Trunc(x) && math.Abs(x) < 1e6 {
			return strconv.FormatFloat(x, 'f', -1, 64)
		}
		if math.Abs(x) < 0.1 {
			return strconv.FormatFloat(x, 'g', 3, 64)
		}
		return strconv.FormatFloat(x, 'f', 3, 64)
	case int:
		return strconv.Itoa(x)
	case string:
		if x == "" {
			return "-"
		}
		return x
	}
	return fmt.Sprint(v)
}
