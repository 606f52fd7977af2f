package sweep

// Fuzz targets of issue 7 beside those in fuzz_test.go (seed lists, plan
// files, study.json and layouts): the grid lists as given on the command
// line, shard specifications and environment variables, a finished run's
// files as resume verifies them, and the runs and score tables a study is
// read back from.

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// FuzzGridSpec: any text in the grid fields either gives a PlanError-style
// error or a plan whose lists are sorted, unique and within range, and
// whose hash survives the JSON round trip through study.json (ReadInfo
// compares the stored hash with the hash of the decoded plan, so a plan
// that does not round-trip would make its own study unreadable).
func FuzzGridSpec(f *testing.F) {
	f.Add("5,15,30,50", "auto,200", "4,12", "250", "1000", "pca,random", "auto", "0.5", "10")
	f.Add("30", "auto", "12", "250", "1000", "pca", "exact,fft,bh", "0.5", "1-5,9")
	f.Add("1e-300", "1e300", "1", "1", "1", "random", "barnes-hut", "10", "7-7")
	f.Add("0x1p-2, 5", "AUTO, 0.1", "1.0,1", "10,20", "20,10", "PCA", "barneshut", "1e-9", "0")
	f.Add("5,5", "-1", "0.5", "0", "100000001", "tsne", "", "nan", "3-1")
	f.Fuzz(func(t *testing.T, perp, lr, exag, exagIters, iters, init, grad, theta, seeds string) {
		s := Spec{Perplexity: perp, LearningRate: lr, Exaggeration: exag, ExaggerationIters: exagIters, Iters: iters,
			Init: init, Gradient: grad, Theta: theta, Seeds: seeds}
		p, err := s.Plan()
		if err != nil {
			if err.Error() == "" {
				t.Fatal("empty error message")
			}
			return
		}
		ascending := func(name string, v []float64, lo float64, allowZero bool) {
			if len(v) == 0 {
				t.Fatalf("%s: empty list", name)
			}
			for i, x := range v {
				if math.IsNaN(x) || math.IsInf(x, 0) || (x < lo && !(allowZero && x == 0)) {
					t.Fatalf("%s: value %v out of range", name, x)
				}
				if i > 0 && !(x > v[i-1]) {
					t.Fatalf("%s: not strictly ascending: %v", name, v)
				}
			}
		}
		ascending("perplexity", p.Perplexity, math.SmallestNonzeroFloat64, false)
		ascending("learning_rate", p.LearningRate, math.SmallestNonzeroFloat64, true)
		ascending("exaggeration", p.Exaggeration, 1, false)
		for i, v := range p.ExaggerationIters {
			if v < 1 || (i > 0 && v <= p.ExaggerationIters[i-1]) || v > p.Iters[0] {
				t.Fatalf("exaggeration_iters %v with iters %v", p.ExaggerationIters, p.Iters)
			}
		}
		for i, v := range p.Iters {
			if v < 1 || (i > 0 && v <= p.Iters[i-1]) {
				t.Fatalf("iters %v", p.Iters)
			}
		}
		for _, v := range p.Init {
			if v != "pca" && v != "random" {
				t.Fatalf("init %q", v)
			}
		}
		for _, v := range p.Gradient {
			if v != "auto" && v != "exact" && v != "barnes-hut" && v != "fft" {
				t.Fatalf("gradient %q", v)
			}
		}
		if !(p.Theta > 0 && p.Theta <= 10) {
			t.Fatalf("theta %v", p.Theta)
		}
		if len(p.Seeds) == 0 || len(p.Seeds) > maxSeeds {
			t.Fatalf("%d seeds", len(p.Seeds))
		}
		// The study.json round trip keeps the hash.
		b, err := json.Marshal(p)
		if err != nil {
			t.Fatal(err)
		}
		var q Plan
		if err := json.Unmarshal(b, &q); err != nil {
			t.Fatalf("plan does not decode from its own JSON: %v\n%s", err, b)
		}
		if q.Hash() != p.Hash() {
			t.Fatalf("plan hash changes through JSON: %s vs %s\n%s\n%s", p.Hash(), q.Hash(), p.Canonical(), q.Canonical())
		}
		// Writing the plan's lists back in flag syntax gives the same plan.
		again, err := Spec{Perplexity: joinF(p.Perplexity, false), LearningRate: joinF(p.LearningRate, true),
			Exaggeration: joinF(p.Exaggeration, false), ExaggerationIters: joinI(p.ExaggerationIters), Iters: joinI(p.Iters),
			Init: joinS(p.Init), Gradient: joinS(p.Gradient), Theta: formatFloat(p.Theta), Seeds: seedRanges(p.Seeds)}.Plan()
		if err != nil {
			t.Fatalf("the plan's own values are refused: %v", err)
		}
		if again.Hash() != p.Hash() {
			t.Fatalf("plan changes when its values are written back:\n%s\n%s", p.Canonical(), again.Canonical())
		}
	})
}

func joinF(v []float64, auto bool) string {
	s := ""
	for i, x := range v {
		if i > 0 {
			s += ","
		}
		if auto && x == 0 {
			s += "auto"
		} else {
			s += formatFloat(x)
		}
	}
	return s
}

func joinI(v []int) string {
	f := make([]float64, len(v))
	for i, x := range v {
		f[i] = float64(x)
	}
	return joinF(f, false)
}

func joinS(v []string) string {
	s := ""
	for i, x := range v {
		if i > 0 {
			s += ","
		}
		s += x
	}
	return s
}

// seedRanges writes seeds as explicit ranges "a-b,c-c" (never a bare count).
func seedRanges(v []uint64) string {
	s := ""
	for i := 0; i < len(v); {
		j := i
		for j+1 < len(v) && v[j+1] == v[j]+1 {
			j++
		}
		if s != "" {
			s += ","
		}
		s += formatUint(v[i]) + "-" + formatUint(v[j])
		i = j + 1
	}
	return s
}

func formatUint(v uint64) string { return strconv.FormatUint(v, 10) }

// FuzzShardSpec: --shard text, --shards and the Slurm / Kubernetes
// variables either give an error or a shard with 0 ≤ index < count, and the
// count's shards deal every run to exactly one shard.
func FuzzShardSpec(f *testing.F) {
	f.Add("0/4", 0, "", "", "", "", "", "")
	f.Add("", 0, "3", "1", "4", "", "", "")
	f.Add("", 0, "7", "1", "9", "2", "", "")
	f.Add("", 0, "2", "", "", "", "5", "")
	f.Add("", 3, "", "", "", "", "", "2")
	f.Add(" 1 / 2 ", 2, "", "", "", "", "", "")
	f.Add("-1/2", 0, "x", "", "", "", "", "")
	f.Add("", 0, "9223372036854775807", "-9223372036854775808", "9223372036854775807", "", "", "")
	f.Fuzz(func(t *testing.T, flag string, shards int, id, lo, hi, step, count, k8s string) {
		env := map[string]string{"SLURM_ARRAY_TASK_ID": id, "SLURM_ARRAY_TASK_MIN": lo, "SLURM_ARRAY_TASK_MAX": hi,
			"SLURM_ARRAY_TASK_STEP": step, "SLURM_ARRAY_TASK_COUNT": count, "JOB_COMPLETION_INDEX": k8s}
		s, err := ResolveShard(flag, shards, func(k string) string { return env[k] })
		if err != nil {
			if err.Error() == "" {
				t.Fatal("empty error")
			}
			return
		}
		if s.Count < 1 || s.Index < 0 || s.Index >= s.Count {
			t.Fatalf("shard %d of %d (flag %q, env %v)", s.Index, s.Count, flag, env)
		}
		if s.Count > 1000 {
			return
		}
		for run := 0; run < 50; run++ {
			owners := 0
			for i := 0; i < s.Count; i++ {
				if (Shard{Index: i, Count: s.Count}).Owns(run) {
					owners++
				}
			}
			if owners != 1 {
				t.Fatalf("run %d owned by %d of %d shards", run, owners, s.Count)
			}
		}
	})
}

// rfMakeStudy makes a finished, scored iris study (see iris and smallPlan
// in sweep_test.go) in a temporary directory of f.
func rfMakeStudy(f *testing.F) string {
	dir := f.TempDir()
	ds := iris(f)
	runSweep(f, ds, smallPlan(f), dir, nil)
	if _, err := Score(context.Background(), dir, ds, ScoreOptions{K: 10}); err != nil {
		f.Fatal(err)
	}
	return dir
}

// rfCopy copies the study at src into a new temporary directory.
func rfCopy(t *testing.T, src string) string {
	t.Helper()
	dst := t.TempDir()
	err := filepath.Walk(src, func(p string, fi os.FileInfo, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, p)
		if fi.IsDir() {
			return os.MkdirAll(filepath.Join(dst, rel), 0o755)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(dst, rel), b, 0o644)
	})
	if err != nil {
		t.Fatal(err)
	}
	return dst
}

// FuzzVerifyRun: resume trusts a run exactly when verify accepts its
// files. Whatever the bytes of its record, trace and layout, verify does
// not panic, and when it accepts a done run, the layout decodes to n
// finite points 0..n−1 and the record names this run, plan and input.
func FuzzVerifyRun(f *testing.F) {
	dir := rfMakeStudy(f)
	info, err := ReadInfo(dir)
	if err != nil {
		f.Fatal(err)
	}
	runs, _ := info.Plan.Runs()
	r := runs[1]
	rec, _ := os.ReadFile(recordPath(dir, r.ID))
	tr, _ := os.ReadFile(tracePath(dir, r.ID))
	lay, _ := os.ReadFile(layoutPath(dir, r.ID))
	other, _ := os.ReadFile(layoutPath(dir, runs[0].ID))
	f.Add(rec, tr, lay)
	f.Add(rec, tr, other)
	f.Add(rec[:len(rec)-3], tr, lay)
	f.Add(rec, tr[:len(tr)/2], lay)
	f.Add(rec, tr, lay[:len(lay)-8])
	f.Add([]byte(`{"run_id":"`+r.ID+`","status":"failed"}`), []byte{}, []byte{})
	f.Fuzz(func(t *testing.T, rec, tr, lay []byte) {
		d := t.TempDir()
		for _, sub := range []string{LayoutsDir, TracesDir, RecordsDir} {
			os.MkdirAll(filepath.Join(d, sub), 0o755)
		}
		os.WriteFile(recordPath(d, r.ID), rec, 0o644)
		os.WriteFile(tracePath(d, r.ID), tr, 0o644)
		os.WriteFile(layoutPath(d, r.ID), lay, 0o644)
		got := verify(d, info, r)
		if got == nil || got.Status != StatusDone {
			return
		}
		if got.RunID != r.ID || got.PlanHash != info.PlanHash || got.InputFingerprint != info.Input.Fingerprint || got.KL == nil {
			t.Fatalf("verify accepted a record of another run/plan/input: %+v", got)
		}
		y, err := readLayout(d, info, r)
		if err != nil || len(y) != 2*info.Input.N {
			t.Fatalf("verify accepted a layout that does not read back: %v (%d values)", err, len(y))
		}
		for _, v := range y {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				t.Fatal("verify accepted a non-finite layout")
			}
		}
	})
}

// FuzzStudyTables: Open reads runs.parquet, the records and the score
// tables back; damaged bytes in any of them give an error (or, for a
// record, an unfinished run), never a panic, and an opened study's
// layouts and traces can be asked for.
func FuzzStudyTables(f *testing.F) {
	dir := rfMakeStudy(f)
	info, err := ReadInfo(dir)
	if err != nil {
		f.Fatal(err)
	}
	runs, _ := info.Plan.Runs()
	read := func(rel string) []byte {
		b, err := os.ReadFile(filepath.Join(dir, rel))
		if err != nil {
			f.Fatal(err)
		}
		return b
	}
	rt := read(RunsFile)
	rec := read(filepath.Join(RecordsDir, runs[0].ID+".json"))
	ss := read(filepath.Join(ScoresDir, ScoreSettingsFile))
	sr := read(filepath.Join(ScoresDir, ScoreRunsFile))
	sp := read(filepath.Join(ScoresDir, ScorePointsFile))
	pr := read(filepath.Join(ScoresDir, ScorePairsFile))
	f.Add(rt, rec, ss, sr, sp, pr, uint8(0))
	f.Add(rt[:len(rt)/2], rec, ss, sr, sp, pr, uint8(1))
	f.Add(rt, rec, sr, ss, pr, sp, uint8(2)) // tables swapped
	f.Add(rt, rec[:5], ss[:len(ss)-1], sr, sp, pr, uint8(3))
	f.Add(sr, rec, ss, rt, sp, pr, uint8(4))
	f.Fuzz(func(t *testing.T, rt, rec, ss, sr, sp, pr []byte, which uint8) {
		d := rfCopy(t, dir)
		// which picks the files replaced (bit i: file i), so that one
		// damaged file can be met among intact ones.
		files := []struct {
			rel string
			b   []byte
		}{
			{RunsFile, rt}, {filepath.Join(RecordsDir, runs[0].ID+".json"), rec},
			{filepath.Join(ScoresDir, ScoreSettingsFile), ss}, {filepath.Join(ScoresDir, ScoreRunsFile), sr},
			{filepath.Join(ScoresDir, ScorePointsFile), sp}, {filepath.Join(ScoresDir, ScorePairsFile), pr},
		}
		for i, fl := range files {
			if which == 0 || which&(1<<i) != 0 {
				os.WriteFile(filepath.Join(d, fl.rel), fl.b, 0o644)
			}
		}
		if which&0x80 != 0 {
			os.Remove(filepath.Join(d, RunsFile)) // Open falls back to the records
		}
		st, err := Open(d)
		if err != nil {
			if err.Error() == "" {
				t.Fatal("empty error")
			}
			return
		}
		for _, row := range st.Rows {
			st.Layout(row.RunID)
			st.Trace(row.RunID)
			st.Setting(row.SettingID)
		}
		ScoredK(d)
	})
}
