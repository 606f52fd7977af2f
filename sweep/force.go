package sweep

import (
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"

	"plumb/internal/parquetio"
)

// runFileName matches the names plumb gives a run's files:
// <setting_id>-<seed>.parquet (layouts/, traces/) and .json (records/).
var runFileName = regexp.MustCompile(`^([0-9a-f]{10}-[0-9]+)\.(parquet|json)$`)

// plumbTable reports whether path is a Parquet file whose key-value
// metadata names a plumb table accepted by want.
func plumbTable(path string, want func(table string) bool) bool {
	m, _, err := parquetio.ReadMeta(path)
	return err == nil && m[MetaPlanHash] != "" && want(m[MetaTable])
}

// plumbRecord reports whether path is a run record plumb wrote for run id.
func plumbRecord(path, id string) bool {
	b, err := os.ReadFile(path)
	if err != nil || len(b) > 1<<20 {
		return false
	}
	var rec Record
	return json.Unmarshal(b, &rec) == nil && rec.RunID == id && rec.PlanHash != "" && rec.Status != ""
}

// removePlumbFiles removes, for --force, the files plumb wrote that do not
// belong to the plan's runs, and the derived tables: layouts, traces and
// records of runs outside the plan, runs.parquet and the score tables. A
// file is removed only when both its name and its contents (Parquet
// metadata, or a record naming the run) say plumb wrote it; anything else
// stays where it is.
func removePlumbFiles(dir string, runs []*Run) {
	inPlan := map[string]bool{}
	for _, r := range runs {
		inPlan[r.ID] = true
	}
	for _, sub := range []string{LayoutsDir, TracesDir, RecordsDir} {
		ents, _ := os.ReadDir(filepath.Join(dir, sub))
		for _, e := range ents {
			m := runFileName.FindStringSubmatch(e.Name())
			if m == nil || inPlan[m[1]] || !e.Type().IsRegular() {
				continue
			}
			p := filepath.Join(dir, sub, e.Name())
			var ours bool
			switch sub {
			case LayoutsDir:
				ours = m[2] == "parquet" && plumbTable(p, func(t string) bool { return t == "layout" })
			case TracesDir:
				ours = m[2] == "parquet" && plumbTable(p, func(t string) bool { return t == "trace" })
			case RecordsDir:
				ours = m[2] == "json" && plumbRecord(p, m[1])
			}
			if ours {
				os.Remove(p)
			}
		}
	}
	if p := filepath.Join(dir, RunsFile); plumbTable(p, func(t string) bool { return t == "runs" }) {
		os.Remove(p)
	}
	ents, _ := os.ReadDir(filepath.Join(dir, ScoresDir))
	for _, e := range ents {
		p := filepath.Join(dir, ScoresDir, e.Name())
		if e.Type().IsRegular() && strings.HasSuffix(e.Name(), ".parquet") &&
			plumbTable(p, func(t string) bool { return strings.HasPrefix(t, "scores.") }) {
			os.Remove(p)
		}
	}
	os.Remove(filepath.Join(dir, ScoresDir)) // only if now empty
}
