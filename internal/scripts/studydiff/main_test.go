package main

import (
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"plumb/internal/parquetio"
)

// study writes a tiny study-shaped directory: a run table with a seconds
// column, a record and study.json with timings, and a plain file.
func study(t *testing.T, kl, seconds float64, created string, x float64) string {
	t.Helper()
	dir := t.TempDir()
	must(t, os.MkdirAll(filepath.Join(dir, "records"), 0o755))
	tb := &parquetio.Table{Columns: []parquetio.Column{
		{Name: "run_id", Values: []string{"r1", "r2"}},
		{Name: "kl", Values: []float64{kl, math.NaN()}, Nullable: true, Valid: []bool{true, false}},
		{Name: "x", Values: []float64{x, math.NaN()}},
		{Name: "seconds", Values: []float64{seconds, seconds * 2}},
	}, Meta: map[string]string{"plumb.table": "runs"}}
	must(t, parquetio.Write(filepath.Join(dir, "runs.parquet"), tb))
	must(t, os.WriteFile(filepath.Join(dir, "study.json"), []byte(`{"created":"`+created+`","runs":2}`), 0o644))
	must(t, os.WriteFile(filepath.Join(dir, "records", "r1.json"), []byte(`{"kl":1.5,"seconds":`+ftoa(seconds)+`}`), 0o644))
	must(t, os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("same"), 0o644))
	return dir
}

func ftoa(f float64) string { return strconv.FormatFloat(f, 'g', -1, 64) }

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

func TestCompare(t *testing.T) {
	base := study(t, 0.25, 1, "2026-01-01T00:00:00Z", 1)
	tests := []struct {
		name string
		dir  string
		want string // substring of the one difference; "" for equal
	}{
		// Timings aside: other seconds and created time are still equal
		// (the NaN in a REQUIRED column is equal to itself bit for bit).
		{"timings differ", study(t, 0.25, 7, "2027-05-05T00:00:00Z", 1), ""},
		{"a score differs", study(t, 0.25000000000000006, 1, "2026-01-01T00:00:00Z", 1), "column kl differs at row 0"},
		{"a coordinate differs", study(t, 0.25, 1, "2026-01-01T00:00:00Z", -1), "column x differs at row 0"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, diffs, err := compare(base, tc.dir)
			if err != nil {
				t.Fatal(err)
			}
			if tc.want == "" && len(diffs) != 0 {
				t.Fatalf("got %v, want no difference", diffs)
			}
			if tc.want != "" && (len(diffs) != 1 || !strings.Contains(diffs[0], tc.want)) {
				t.Fatalf("got %v, want one difference containing %q", diffs, tc.want)
			}
		})
	}
}

func TestCompareFiles(t *testing.T) {
	a := study(t, 0.25, 1, "c", 1)
	b := study(t, 0.25, 1, "c", 1)
	must(t, os.Remove(filepath.Join(b, "records", "r1.json")))
	must(t, os.WriteFile(filepath.Join(b, "notes.txt"), []byte("other"), 0o644))
	must(t, os.WriteFile(filepath.Join(b, "study.json"), []byte(`{"created":"c","runs":3}`), 0o644))
	_, diffs, err := compare(a, b)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		"records/r1.json: only in " + a,
		"notes.txt: contents differ",
		`study.json: field "runs" differs: 2 vs 3`,
	}
	if strings.Join(diffs, "\n") != strings.Join(want, "\n") {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(diffs, "\n"), strings.Join(want, "\n"))
	}
}
