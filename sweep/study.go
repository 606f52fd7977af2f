package sweep

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"plumb/internal/atomicfile"
	"plumb/internal/dataset"
	"plumb/internal/parquetio"
	"plumb/tsne"
)

// Names of the files and directories of a study.
const (
	StudyFile   = "study.json"
	RunsFile    = "runs.parquet"
	LayoutsDir  = "layouts"
	TracesDir   = "traces"
	RecordsDir  = "records"
	ScoresDir   = "scores"
	studyFormat = "plumb-study/1"
)

// Key-value metadata keys written into every Parquet file of a study.
const (
	MetaVersion     = "plumb.version"
	MetaPlanHash    = "plumb.plan_hash"
	MetaFingerprint = "plumb.input_fingerprint"
	MetaTable       = "plumb.table"
	MetaRunID       = "plumb.run_id"
	MetaSettingID   = "plumb.setting_id"
	MetaK           = "plumb.k"
)

// Input describes the study's input as recorded in study.json.
type Input struct {
	// Path is the input file as given; AbsPath the same made absolute.
	Path        string `json:"path"`
	AbsPath     string `json:"abs_path,omitempty"`
	Fingerprint string `json:"fingerprint"`
	N           int    `json:"n"`
	D           int    `json:"d"`
	// Columns names the features used (after PCA: pc1..pcK); Select the
	// --columns selection, if one was given.
	Columns     []string `json:"columns"`
	Select      []string `json:"select,omitempty"`
	IDColumn    string   `json:"id_column,omitempty"`
	LabelColumn string   `json:"label_column,omitempty"`
	HasLabels   bool     `json:"has_labels"`
	Standardize bool     `json:"standardize"`
	PCA         int      `json:"pca"`
	// How a text input was read, when not by its defaults (see
	// dataset.Options), so that a later command reads it the same way.
	Format       string `json:"format,omitempty"`
	Delimiter    string `json:"delimiter,omitempty"`
	DecimalComma bool   `json:"decimal_comma,omitempty"`
	NoHeader     bool   `json:"no_header,omitempty"`
}

// NewInput describes ds, read from path with opt.
func NewInput(path string, opt dataset.Options, ds *dataset.Dataset) Input {
	abs, _ := filepath.Abs(path)
	return Input{Path: path, AbsPath: abs, Select: opt.Columns, Fingerprint: ds.Fingerprint, N: ds.N, D: ds.D, Columns: ds.Columns,
		IDColumn: opt.IDColumn, LabelColumn: opt.LabelColumn, HasLabels: ds.Labels != nil,
		Standardize: opt.Standardize, PCA: opt.PCA,
		Format: opt.Format, Delimiter: opt.Delimiter, DecimalComma: opt.DecimalComma, NoHeader: opt.NoHeader}
}

// Options returns the dataset options the input was read with.
func (in Input) Options() dataset.Options {
	return dataset.Options{IDColumn: in.IDColumn, LabelColumn: in.LabelColumn, Columns: in.Select,
		Standardize: in.Standardize, PCA: in.PCA,
		Format: in.Format, Delimiter: in.Delimiter, DecimalComma: in.DecimalComma, NoHeader: in.NoHeader}
}

// Info is the content of study.json.
type Info struct {
	Format   string `json:"format"`
	Version  string `json:"plumb_version"`
	Created  string `json:"created"`
	PlanHash string `json:"plan_hash"`
	Plan     *Plan  `json:"plan"`
	Input    Input  `json:"input"`
	Settings int    `json:"settings"`
	Runs     int    `json:"runs"`
	// Env is the environment of the process that created the study (nil
	// in studies written before it was recorded).
	Env *Env `json:"env,omitempty"`
	// covers is the MetaCovers value Score writes into its tables.
	covers string
}

// MismatchError reports a study directory made from other data or another
// plan.
type MismatchError struct {
	Dir, What, Have, Want string
	// Scoring is set when the input given to Score is not the study's.
	Scoring bool
}

func (e *MismatchError) Error() string {
	if e.Scoring {
		return fmt.Sprintf("%s was made from other input data (study has %s, the input read now %s): the file changed since the sweep", e.Dir, e.Have, e.Want)
	}
	return fmt.Sprintf("%s was made from another %s (study has %s, this sweep %s)", e.Dir, e.What, e.Have, e.Want)
}

// Hint suggests how to proceed.
func (e *MismatchError) Hint() string {
	if e.Scoring {
		return "pass the study's original data with --input (its fingerprint must match), or sweep the new data into another study"
	}
	return "choose another --out directory, or pass --force to make the directory follow this sweep (its runs from the old " + e.What + " are redone)"
}

// ReadInfo reads STUDY/study.json.
func ReadInfo(dir string) (*Info, error) {
	path := filepath.Join(dir, StudyFile)
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var in Info
	if err := json.Unmarshal(b, &in); err != nil {
		return nil, fmt.Errorf("%s: not a study file: %v", path, err)
	}
	if in.Format != studyFormat {
		return nil, fmt.Errorf("%s: format %q, want %q", path, in.Format, studyFormat)
	}
	if in.Plan == nil || len(in.Plan.Perplexity) == 0 || len(in.Plan.Seeds) == 0 {
		return nil, fmt.Errorf("%s: no plan", path)
	}
	if in.Plan.Hash() != in.PlanHash {
		return nil, fmt.Errorf("%s: plan hash %s does not match its plan (%s); the file was edited", path, in.PlanHash, in.Plan.Hash())
	}
	return &in, nil
}

// prepare makes dir a study for info: it checks an existing study.json
// against the plan hash and input fingerprint (a mismatch is a
// *MismatchError unless force), writes study.json, and creates the
// subdirectories. A directory without study.json must be empty (plumb's
// lock files aside), with or without force: a directory is a study only if
// its study.json says so, and a study.json that does not decode is not
// replaced. With force, the files plumb wrote for runs outside the plan and
// the derived tables are removed (removePlumbFiles), nothing else. The
// caller holds the study's lock (LockStudy, which also created dir);
// exclusive reports whether it holds it alone, and only then are the
// temporary files of the shared files removed (see cleanStudyTemps).
func prepare(dir string, info *Info, runs []*Run, force, exclusive bool) error {
	if err := checkStudyDir(dir); err != nil {
		return err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("create study directory: %w", err)
	}
	old, err := ReadInfo(dir)
	switch {
	case err == nil:
		var mm *MismatchError
		if old.Input.Fingerprint != info.Input.Fingerprint {
			mm = &MismatchError{Dir: dir, What: "input", Have: "fingerprint " + short(old.Input.Fingerprint) + " from " + old.Input.Path,
				Want: "fingerprint " + short(info.Input.Fingerprint) + " from " + info.Input.Path}
		} else if old.PlanHash != info.PlanHash {
			mm = &MismatchError{Dir: dir, What: "plan", Have: old.PlanHash, Want: info.PlanHash}
		}
		if mm != nil && !force {
			return mm
		}
		if mm == nil {
			// The study as first written stays (its created time, the
			// input path as the first process saw it).
			v := info.Version
			*info = *old
			info.Version = v
		}
	case errors.Is(err, os.ErrNotExist):
	default:
		return fmt.Errorf("%w (plumb replaces only a study.json it can read as its own: move the file away, or choose another --out directory)", err)
	}
	if force && !exclusive {
		return fmt.Errorf("sweep: --force needs the study to itself (an exclusive lock)")
	}
	if err != nil || force {
		b, err := json.MarshalIndent(info, "", "  ")
		if err != nil {
			return err
		}
		if err := atomicfile.WriteFile(filepath.Join(dir, StudyFile), append(b, '\n')); err != nil {
			return fmt.Errorf("write %s: %w", StudyFile, err)
		}
	}
	for _, sub := range []string{LayoutsDir, TracesDir, RecordsDir} {
		if err := os.MkdirAll(filepath.Join(dir, sub), 0o755); err != nil {
			return fmt.Errorf("create %s: %w", sub, err)
		}
	}
	if exclusive {
		cleanStudyTemps(dir, 0)
	}
	if force {
		removePlumbFiles(dir, runs)
	}
	return nil
}

func short(fp string) string {
	if len(fp) > 12 {
		return fp[:12]
	}
	return fp
}

// Record is the bookkeeping file records/<run_id>.json written for every
// finished run, done or failed. runs.parquet is rebuilt from the records,
// so shards never write a shared file while they run.
type Record struct {
	RunID            string `json:"run_id"`
	SettingID        string `json:"setting_id"`
	Seed             uint64 `json:"seed"`
	PlanHash         string `json:"plan_hash"`
	InputFingerprint string `json:"input_fingerprint"`
	// Status is "done" or "failed".
	Status string `json:"status"`
	Error  string `json:"error,omitempty"`
	// KL is the final KL divergence (nil for a failed run).
	KL             *float64 `json:"kl,omitempty"`
	IterationsDone int      `json:"iterations_done"`
	// LearningRate is the value used (4-in-gradient convention).
	LearningRate float64 `json:"learning_rate"`
	// Gradient is the gradient method used ("exact", "barnes-hut", "fft").
	Gradient string  `json:"gradient"`
	Seconds  float64 `json:"seconds"`
	// Env is the environment the run was computed in (nil in records
	// written before it was recorded).
	Env *Env `json:"env,omitempty"`
}

// Status values of a run.
const (
	StatusDone   = "done"
	StatusFailed = "failed"
)

func layoutPath(dir, id string) string { return filepath.Join(dir, LayoutsDir, id+".parquet") }
func tracePath(dir, id string) string  { return filepath.Join(dir, TracesDir, id+".parquet") }
func recordPath(dir, id string) string { return filepath.Join(dir, RecordsDir, id+".json") }

func baseMeta(info *Info, table string) map[string]string {
	return map[string]string{MetaVersion: info.Version, MetaPlanHash: info.PlanHash,
		MetaFingerprint: info.Input.Fingerprint, MetaTable: table}
}

// cleanStudyTemps removes the temporary files of the study's shared files
// (study.json, runs.parquet and scores/*.parquet, which parquetio.Write
// names ".NAME.tmp-*") that are at least minAge old. Only a process holding
// the study exclusively calls it (with minAge 0): every other writer is
// then locked out, so the files can only be left by a killed process.
func cleanStudyTemps(dir string, minAge time.Duration) {
	pats := []string{atomicfile.TempPattern(filepath.Join(dir, StudyFile)), atomicfile.TempPattern(filepath.Join(dir, RunsFile)),
		filepath.Join(dir, ScoresDir, ".*.tmp-*")}
	for _, pat := range pats {
		m, _ := filepath.Glob(pat)
		for _, f := range m {
			if fi, err := os.Lstat(f); err == nil && fi.Mode().IsRegular() && time.Since(fi.ModTime()) >= minAge {
				os.Remove(f)
			}
		}
	}
}

// cleanTemps removes temporary files a killed process may have left for
// the run's own files (only the run's shard writes them).
func cleanTemps(dir, id string) {
	for _, p := range []string{layoutPath(dir, id), tracePath(dir, id), recordPath(dir, id)} {
		m, _ := filepath.Glob(atomicfile.TempPattern(p))
		for _, f := range m {
			os.Remove(f)
		}
	}
}

// writeRun writes a run's trace, record and layout, in that order: the
// layout is written last, so a run with a verified layout is complete.
// rows lists the input rows of a run on a subsample (nil: all points);
// its layout holds those rows only, with their input row numbers in the
// column point.
func writeRun(dir string, info *Info, ds *dataset.Dataset, r *Run, rows []int32, res *tsne.Result, rec *Record) error {
	meta := func(table string) map[string]string {
		m := baseMeta(info, table)
		m[MetaRunID] = r.ID
		m[MetaSettingID] = r.Setting.ID
		return m
	}
	if rec.Status == StatusDone {
		n := len(res.Trace)
		ids := make([]string, n)
		iters := make([]int32, n)
		kls := make([]float64, n)
		for i, tp := range res.Trace {
			ids[i], iters[i], kls[i] = r.ID, int32(tp.Iter), tp.KL
		}
		tr := &parquetio.Table{Meta: meta("trace"), Columns: []parquetio.Column{
			{Name: "run_id", Values: ids}, {Name: "iter", Values: iters}, {Name: "kl", Values: kls}}}
		if err := parquetio.Write(tracePath(dir, r.ID), tr); err != nil {
			return err
		}
	}
	b, err := json.MarshalIndent(rec, "", "  ")
	if err != nil {
		return err
	}
	if err := atomicfile.WriteFile(recordPath(dir, r.ID), append(b, '\n')); err != nil {
		return fmt.Errorf("write record of run %s: %w", r.ID, err)
	}
	if rec.Status != StatusDone {
		// A failed run has no layout; remove one left by an earlier plan.
		os.Remove(layoutPath(dir, r.ID))
		os.Remove(tracePath(dir, r.ID))
		return nil
	}
	n := ds.N
	pointIDs, labels := ds.IDs, ds.Labels
	if rows != nil {
		n = len(rows)
		pointIDs, labels = selectStrings(ds.IDs, rows), selectStrings(ds.Labels, rows)
	}
	ids := make([]string, n)
	pts := make([]int32, n)
	xs := make([]float64, n)
	ys := make([]float64, n)
	for i := 0; i < n; i++ {
		pt := int32(i)
		if rows != nil {
			pt = rows[i]
		}
		ids[i], pts[i], xs[i], ys[i] = r.ID, pt, res.Y[2*i], res.Y[2*i+1]
	}
	cols := []parquetio.Column{{Name: "run_id", Values: ids}, {Name: "point", Values: pts}, {Name: "id", Values: pointIDs}}
	if labels != nil {
		cols = append(cols, parquetio.Column{Name: "label", Values: labels})
	}
	cols = append(cols, parquetio.Column{Name: "x", Values: xs}, parquetio.Column{Name: "y", Values: ys})
	m := meta("layout")
	m["plumb.seed"] = strconv.FormatUint(r.Seed, 10)
	m["plumb.kl"] = formatFloat(res.KL)
	m["plumb.iterations"] = strconv.Itoa(res.Iters)
	return parquetio.Write(layoutPath(dir, r.ID), &parquetio.Table{Meta: m, Columns: cols})
}

// readRecord reads and checks a run's record against the study.
func readRecord(dir string, info *Info, r *Run) (*Record, error) {
	b, err := os.ReadFile(recordPath(dir, r.ID))
	if err != nil {
		return nil, err
	}
	var rec Record
	if err := json.Unmarshal(b, &rec); err != nil {
		return nil, fmt.Errorf("record of run %s: %v", r.ID, err)
	}
	switch {
	case rec.RunID != r.ID || rec.SettingID != r.Setting.ID || rec.Seed != r.Seed:
		return nil, fmt.Errorf("record of run %s names run %s", r.ID, rec.RunID)
	case rec.PlanHash != info.PlanHash:
		return nil, fmt.Errorf("record of run %s is from plan %s", r.ID, rec.PlanHash)
	case rec.InputFingerprint != info.Input.Fingerprint:
		return nil, fmt.Errorf("record of run %s is from other input", r.ID)
	case rec.Status != StatusDone && rec.Status != StatusFailed:
		return nil, fmt.Errorf("record of run %s has status %q", r.ID, rec.Status)
	case rec.Status == StatusDone && rec.KL == nil:
		return nil, fmt.Errorf("record of run %s has no KL", r.ID)
	}
	return &rec, nil
}

func checkMeta(path string, m map[string]string, info *Info, r *Run, table string) error {
	want := baseMeta(info, table)
	want[MetaRunID] = r.ID
	want[MetaSettingID] = r.Setting.ID
	for k, v := range want {
		if k == MetaVersion {
			continue // a newer plumb may resume an older study
		}
		if m[k] != v {
			return fmt.Errorf("%s: metadata %s is %q, want %q", path, k, m[k], v)
		}
	}
	return nil
}

// RunRows returns the input rows embedded by run r of a study of n
// points: nil (every row) for a setting on all points, the run's
// subsample (Subsample) otherwise.
func RunRows(n int, r *Run) []int32 {
	return Subsample(n, r.Setting.Fraction(), r.Seed)
}

// readLayout reads and checks a run's layout: metadata, one row per point
// the run embeds (RunRows: every input row 0..n−1, or the run's subsample)
// in that order, finite coordinates. It returns the coordinates, 2 per row.
func readLayout(dir string, info *Info, r *Run) ([]float64, error) {
	y, _, err := readLayoutRows(dir, info, r)
	return y, err
}

// readLayoutRows is readLayout, also returning the run's input rows (nil:
// all).
func readLayoutRows(dir string, info *Info, r *Run) ([]float64, []int32, error) {
	path := layoutPath(dir, r.ID)
	t, err := parquetio.Read(path)
	if err != nil {
		return nil, nil, err
	}
	if err := checkMeta(path, t.Meta, info, r, "layout"); err != nil {
		return nil, nil, err
	}
	rows := RunRows(info.Input.N, r)
	want := info.Input.N
	if rows != nil {
		want = len(rows)
	}
	if t.Rows() != want {
		return nil, nil, fmt.Errorf("%s: %d rows, want %d", path, t.Rows(), want)
	}
	pts, err := t.Int32("point")
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	xs, err := t.Float64("x")
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	ys, err := t.Float64("y")
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	y := make([]float64, 2*len(xs))
	for i := range xs {
		want := int32(i)
		if rows != nil {
			want = rows[i]
		}
		if pts[i] != want {
			return nil, nil, fmt.Errorf("%s: row %d holds point %d, want %d", path, i+1, pts[i], want)
		}
		if math.IsNaN(xs[i]) || math.IsInf(xs[i], 0) || math.IsNaN(ys[i]) || math.IsInf(ys[i], 0) {
			return nil, nil, fmt.Errorf("%s: row %d: non-finite coordinate", path, i+1)
		}
		y[2*i], y[2*i+1] = xs[i], ys[i]
	}
	return y, rows, nil
}

// verify reports whether run r is finished in dir: its record is valid
// and, for a done run, its trace and layout decode and match the study.
// It returns the record of a finished run and nil otherwise.
func verify(dir string, info *Info, r *Run) *Record {
	rec, err := readRecord(dir, info, r)
	if err != nil {
		return nil
	}
	if rec.Status == StatusFailed {
		return rec
	}
	tp := tracePath(dir, r.ID)
	m, _, err := parquetio.ReadMeta(tp)
	if err != nil || checkMeta(tp, m, info, r, "trace") != nil {
		return nil
	}
	if _, err := readLayout(dir, info, r); err != nil {
		return nil
	}
	return rec
}

// writeRunsTable rebuilds STUDY/runs.parquet from the records of every run
// of the plan that has one; it returns the number of rows written.
func writeRunsTable(dir string, info *Info, runs []*Run) (int, error) {
	var (
		runID, settingID, lrSpec, init, gradient, gradSpec, status, errs []string
		perp, lr, exag, theta, kl, secs, sub                             []float64
		exagIters, iters, itDone                                         []int32
		seed                                                             []int64
		klValid, errValid                                                []bool
	)
	for _, r := range runs {
		rec, err := readRecord(dir, info, r)
		if err != nil {
			continue
		}
		s := r.Setting
		runID = append(runID, r.ID)
		settingID = append(settingID, s.ID)
		perp = append(perp, s.Perplexity)
		lr = append(lr, rec.LearningRate)
		lrSpec = append(lrSpec, s.LearningRateSpec())
		exag = append(exag, s.Exaggeration)
		exagIters = append(exagIters, int32(s.ExaggerationIters))
		iters = append(iters, int32(s.Iters))
		init = append(init, s.Init)
		seed = append(seed, int64(r.Seed))
		gradient = append(gradient, rec.Gradient)
		gradSpec = append(gradSpec, s.Gradient)
		theta = append(theta, s.Theta)
		sub = append(sub, s.Fraction())
		status = append(status, rec.Status)
		errs = append(errs, rec.Error)
		errValid = append(errValid, rec.Error != "")
		if rec.KL != nil {
			kl = append(kl, *rec.KL)
		} else {
			kl = append(kl, 0)
		}
		klValid = append(klValid, rec.KL != nil)
		itDone = append(itDone, int32(rec.IterationsDone))
		secs = append(secs, rec.Seconds)
	}
	t := &parquetio.Table{Meta: baseMeta(info, "runs"), Columns: []parquetio.Column{
		{Name: "run_id", Values: nonNil(runID)},
		{Name: "setting_id", Values: nonNil(settingID)},
		{Name: "perplexity", Values: nonNilF(perp)},
		{Name: "learning_rate", Values: nonNilF(lr)},
		{Name: "learning_rate_spec", Values: nonNil(lrSpec)},
		{Name: "exaggeration", Values: nonNilF(exag)},
		{Name: "exaggeration_iters", Values: nonNilI(exagIters)},
		{Name: "iters", Values: nonNilI(iters)},
		{Name: "init", Values: nonNil(init)},
		{Name: "seed", Values: append([]int64{}, seed...)},
		{Name: "gradient", Values: nonNil(gradient)},
		{Name: "gradient_spec", Values: nonNil(gradSpec)},
		{Name: "theta", Values: nonNilF(theta)},
		{Name: "subsample", Values: nonNilF(sub)},
		{Name: "status", Values: nonNil(status)},
		{Name: "error", Values: nonNil(errs), Nullable: true, Valid: allTrueNil(errValid)},
		{Name: "kl", Values: nonNilF(kl), Nullable: true, Valid: allTrueNil(klValid)},
		{Name: "iterations_done", Values: nonNilI(itDone)},
		{Name: "seconds", Values: nonNilF(secs)},
	}}
	if err := parquetio.Write(filepath.Join(dir, RunsFile), t); err != nil {
		return 0, err
	}
	return len(runID), nil
}

func nonNil(v []string) []string {
	if v == nil {
		return []string{}
	}
	return v
}
func nonNilF(v []float64) []float64 {
	if v == nil {
		return []float64{}
	}
	return v
}
func nonNilI(v []int32) []int32 {
	if v == nil {
		return []int32{}
	}
	return v
}

// allTrueNil returns nil when every entry is valid (no nulls), else v.
func allTrueNil(v []bool) []bool {
	for _, b := range v {
		if !b {
			return v
		}
	}
	return nil
}

func nowUTC() string { return time.Now().UTC().Format(time.RFC3339) }
