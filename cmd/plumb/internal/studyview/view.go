package studyview

import (
	"strings"

	"plumb/stability"
)

// View is everything a report or a gate is made from: the plan, the input,
// and the score tables of one study directory, already read into memory.
// The sweep package's reader is adapted to it by FromSweep; tests build it
// by hand.
type View struct {
	// Dir is the study directory (shown in the page; may be empty).
	Dir string
	// Tool and Version name the program that made the study.
	Tool, Version string
	// Created is when the study was made, as written in study.json.
	Created string
	// PlanHash identifies the plan.
	PlanHash string
	Input    Input
	// Grid lists the parameters of the plan and their values, in plan
	// order; a parameter with one value is fixed.
	Grid []Param
	// Seeds are the seeds every setting was run with.
	Seeds []uint64
	// Gradient describes the gradient method and its accuracy settings
	// (for example "exact" or "Barnes-Hut, θ = 0.5").
	Gradient string
	// K is the neighbourhood size the scores were computed with.
	K int
	// Sampled is the number of points the faithfulness scores used (0 or N
	// means all).
	Sampled int
	// IDs and Labels describe the points in the order of every per-point
	// slice below; Labels is nil when the study has no labels.
	IDs, Labels []string
	Settings    []Setting
	Runs        []Run
	Pairs       []Pair
	// Clusters holds the map clusters of every setting's medoid run with
	// their stability (scores/clusters.parquet); Labels the per-label
	// stability (scores/labels.parquet; LabelReadings), empty without labels.
	Clusters      []Cluster
	LabelReadings []LabelStability
}

// Cluster is one map cluster of a setting's medoid run.
type Cluster struct {
	SettingID, MedoidRun string
	Cluster, Size        int
	// Jaccard is the mean best-match Jaccard similarity over the other
	// runs, Min the smallest (NaN when not measured); Runs the runs
	// compared, Dissolved those with a best match ≤ 0.5.
	Jaccard, Min    float64
	Runs, Dissolved int
	// Reading is Hennig's word for Jaccard ("not measured" when nothing
	// varied); Labels the label composition ("label:count, …").
	Reading, Labels string
}

// LabelStability is how stable the points of one label are in a setting.
type LabelStability struct {
	SettingID, Label string
	Points           int
	// Stable is the share not flagged, MeanScore the mean co-assignment
	// score (NaN when not measured); Mixes the labels their group-mates
	// carry ("label:share, …"), MixesWith the other label with the
	// largest share, MixesShare that share.
	Stable, MeanScore float64
	Mixes, MixesWith  string
	MixesShare        float64
}

// Input describes the data a study was made from.
type Input struct {
	Path, Fingerprint string
	N, D              int
	Columns           []string
	IDColumn          string
	LabelColumn       string
	// Preprocessing describes standardisation or PCA ("none" if none).
	Preprocessing string
}

// Param is one parameter of the plan with its values as written in the
// plan ("auto" stays "auto").
type Param struct {
	Name   string
	Values []string
}

// Field is one parameter value of a setting.
type Field struct {
	Name, Value string
}

// Setting is one combination of parameters with its scores across seeds.
type Setting struct {
	ID string
	// Params holds the value of every grid parameter, in Grid order.
	Params []Field
	// RunsDone counts finished runs, Runs all planned runs.
	RunsDone, Runs int
	// Disparity is the seed-to-seed Procrustes disparity (lower is more
	// stable) and Jaccard the seed-to-seed kNN Jaccard overlap (higher is
	// more stable), both over pairs of runs.
	Disparity, Jaccard stability.MedianIQR
	// PairSpearman is the seed-to-seed Spearman correlation of pairwise
	// map distances (higher is more stable).
	PairSpearman stability.MedianIQR
	// Faithfulness to the input, across runs (higher is better); the label
	// scores are NaN without labels.
	Trustworthiness, Continuity, KNNRecall, DistanceSpearman, LabelAccuracy, LabelPurity stability.MedianIQR
	// KL is the final KL divergence across runs (lower is better).
	KL stability.MedianIQR
	// RNXAUC is the R_NX AUC across runs (higher is more faithful over
	// every neighbourhood size); CoAssignment the co-assignment score
	// across points.
	RNXAUC, CoAssignment stability.MedianIQR
	// UnstableShare is the share of points flagged unstable by
	// co-assignment (score < 0.75); NaN when not measured.
	UnstableShare float64
	// Varied names what varied between the runs ("seed", or "": nothing,
	// so between-run readings are not measured).
	Varied string
	// NotMeasured says why the between-run readings are missing ("" when
	// they were measured, or not recorded).
	NotMeasured string
	// MedoidRun is the run shown as the setting's picture, Medoid its
	// layout (2N, row-major, by input row; nil if it could not be read),
	// MapClusters its number of map clusters (−1: not clustered).
	MedoidRun   string
	Medoid      []float64
	MapClusters int
	// Arrangements is the number of distinct arrangements of the runs (0:
	// not measured), ArrangementSizes their run counts ("3+2"), Bimodal
	// whether there are two or more.
	Arrangements     int
	ArrangementSizes string
	Bimodal          bool
	// ConsensusShown says whether the averaged consensus may be shown
	// beside the medoid; ConsensusNote why not.
	ConsensusShown bool
	ConsensusNote  string
	// Consensus is the consensus layout (2N, row-major) of the setting's
	// runs; Spread and Unstable hold the per-point spread and flag. Any may
	// be nil when the setting has no finished runs.
	Consensus []float64
	Spread    []float64
	Unstable  []bool
	// Stability is each point's co-assignment score in [0, 1], higher is
	// more stable (NaN: not measured); Unstable is its flag (< 0.75) and
	// Spread the point's distance from the consensus (global placement).
	// Stability is nil when the study has no such score, and the page
	// then shows Spread on its own fixed scale.
	Stability []float64
	// Clusters holds each point's map cluster id in the layout shown for
	// the setting (−1: no cluster); nil when the study has no map clusters.
	Clusters []int32
	// RunLayouts are the layouts of the setting's finished runs, each
	// rotated onto the setting's consensus (NaN for points a run did not
	// place); nil when not loaded.
	RunLayouts []RunLayout
}

// RunLayout is one run's layout, aligned onto its setting's consensus.
type RunLayout struct {
	RunID string
	Seed  uint64
	// XY is the layout (2N, row-major, in point order).
	XY []float64
	// Clusters holds each point's map cluster id in this run (−1: none);
	// nil without map clusters.
	Clusters []int32
}

// Run is one finished or failed run.
type Run struct {
	ID, SettingID string
	Seed          uint64
	Status, Error string
	KL            float64
	Iters         int
	Seconds       float64
	// Faithfulness scores of this run (NaN when not scored).
	Trustworthiness, Continuity, KNNRecall, DistanceSpearman, LabelAccuracy float64
	// RNXAUC is the run's R_NX AUC (NaN when not scored).
	RNXAUC float64
	Trace  []TracePoint
}

// TracePoint is the KL divergence at one iteration.
type TracePoint struct {
	Iter int
	KL   float64
}

// Pair holds the agreement between two runs of one setting.
type Pair struct {
	SettingID, RunA, RunB string
	Disparity, Jaccard    float64
}

// Varied returns the grid parameters with more than one value.
func (s *View) Varied() []Param {
	var v []Param
	for _, p := range s.Grid {
		if len(p.Values) > 1 {
			v = append(v, p)
		}
	}
	return v
}

// Param returns the value of the named parameter in the setting, or "".
func (s *Setting) Param(name string) string {
	for _, f := range s.Params {
		if f.Name == name {
			return f.Value
		}
	}
	return ""
}

// Label names a setting by the parameters that vary in the study, for
// example "perplexity 30, learning_rate auto"; with nothing varied it is
// the setting id.
func (s *View) Label(st *Setting) string {
	var parts []string
	for _, p := range s.Varied() {
		parts = append(parts, p.Name+" "+st.Param(p.Name))
	}
	if len(parts) == 0 {
		return st.ID
	}
	return strings.Join(parts, ", ")
}

// Setting returns the setting with the id, or nil.
func (s *View) Setting(id string) *Setting {
	for i := range s.Settings {
		if s.Settings[i].ID == id {
			return &s.Settings[i]
		}
	}
	return nil
}

// HasLabels reports whether the points carry labels.
func (s *View) HasLabels() bool { return len(s.Labels) == len(s.IDs) && len(s.Labels) > 0 }
