// Command studydiff compares two plumb studies file for file, timings aside:
// both directories must hold the same files; Parquet files must decode to
// the same columns, values (floats bit for bit) and key-value metadata,
// except the values of a `seconds` column; JSON files must decode to the
// same value, except study.json's top-level `created` and a record's
// top-level `seconds`; any other file must match byte for byte. Temporary
// files are not expected and count as differences.
//
//	go run ./internal/scripts/studydiff STUDY_A STUDY_B
//
// It prints one line per difference (at most the first per file) and exits
// 1 when there is any, 2 on a usage error, 0 with a one-line summary when
// the studies are equal. The shard tests use it to check that a study made
// by several processes equals a single-process sweep (README, "Shards").
package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strings"

	"plumb/internal/parquetio"
)

func main() {
	if len(os.Args) != 3 {
		fmt.Fprintln(os.Stderr, "usage: studydiff STUDY_A STUDY_B")
		os.Exit(2)
	}
	sum, diffs, err := compare(os.Args[1], os.Args[2])
	if err != nil {
		fmt.Fprintln(os.Stderr, "studydiff: error:", err)
		os.Exit(2)
	}
	for _, d := range diffs {
		fmt.Println(d)
	}
	if len(diffs) > 0 {
		fmt.Printf("studydiff: %d difference(s) between %s and %s\n", len(diffs), os.Args[1], os.Args[2])
		os.Exit(1)
	}
	fmt.Printf("studydiff: equal, timings aside: %s\n", sum)
}

// summary counts the files compared, by kind.
type summary struct{ parquet, json, other int }

func (s summary) String() string {
	return fmt.Sprintf("%d files (%d Parquet, %d JSON, %d other)", s.parquet+s.json+s.other, s.parquet, s.json, s.other)
}

// compare returns the differences between studies a and b, one line each.
func compare(a, b string) (summary, []string, error) {
	var sum summary
	fa, err := files(a)
	if err != nil {
		return sum, nil, err
	}
	fb, err := files(b)
	if err != nil {
		return sum, nil, err
	}
	var diffs []string
	inB := map[string]bool{}
	for _, f := range fb {
		inB[f] = true
	}
	inA := map[string]bool{}
	for _, f := range fa {
		inA[f] = true
		if !inB[f] {
			diffs = append(diffs, f+": only in "+a)
		}
	}
	for _, f := range fb {
		if !inA[f] {
			diffs = append(diffs, f+": only in "+b)
		}
	}
	for _, f := range fa {
		if !inB[f] {
			continue
		}
		pa, pb := filepath.Join(a, f), filepath.Join(b, f)
		var d string
		switch filepath.Ext(f) {
		case ".parquet":
			sum.parquet++
			d, err = diffParquet(pa, pb)
		case ".json":
			sum.json++
			d, err = diffJSON(f, pa, pb)
		default:
			sum.other++
			d, err = diffBytes(pa, pb)
		}
		if err != nil {
			return sum, nil, err
		}
		if d != "" {
			diffs = append(diffs, f+": "+d)
		}
	}
	return sum, diffs, nil
}

// files lists the regular files under dir, relative and sorted.
func files(dir string) ([]string, error) {
	var out []string
	err := filepath.WalkDir(dir, func(path string, e fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if e.IsDir() || strings.HasPrefix(e.Name(), ".plumb.lock") {
			return nil // directories; the study's lock files (sweep/lock.go), bookkeeping of the processes that ran
		}
		rel, err := filepath.Rel(dir, path)
		if err != nil {
			return err
		}
		out = append(out, filepath.ToSlash(rel))
		return nil
	})
	sort.Strings(out)
	return out, err
}

func diffBytes(pa, pb string) (string, error) {
	x, err := os.ReadFile(pa)
	if err != nil {
		return "", err
	}
	y, err := os.ReadFile(pb)
	if err != nil {
		return "", err
	}
	if !bytes.Equal(x, y) {
		return "contents differ", nil
	}
	return "", nil
}

// ignoredJSON names the top-level fields of a study's JSON files that hold
// timings: when the study was created, how long a run took.
var ignoredJSON = map[string]bool{"created": true, "seconds": true}

func diffJSON(rel, pa, pb string) (string, error) {
	var x, y any
	for _, p := range []struct {
		path string
		dst  *any
	}{{pa, &x}, {pb, &y}} {
		raw, err := os.ReadFile(p.path)
		if err != nil {
			return "", err
		}
		dec := json.NewDecoder(bytes.NewReader(raw))
		dec.UseNumber() // compare numbers as written, not as rounded floats
		if err := dec.Decode(p.dst); err != nil {
			return "", fmt.Errorf("%s: %v", p.path, err)
		}
	}
	mx, okx := x.(map[string]any)
	my, oky := y.(map[string]any)
	if okx && oky {
		for k := range ignoredJSON {
			delete(mx, k)
			delete(my, k)
		}
		keys := map[string]bool{}
		for k := range mx {
			keys[k] = true
		}
		for k := range my {
			keys[k] = true
		}
		var names []string
		for k := range keys {
			names = append(names, k)
		}
		sort.Strings(names)
		for _, k := range names {
			if !reflect.DeepEqual(mx[k], my[k]) {
				return fmt.Sprintf("field %q differs: %s vs %s", k, short(mx[k]), short(my[k])), nil
			}
		}
		return "", nil
	}
	if !reflect.DeepEqual(x, y) {
		return "contents differ", nil
	}
	return "", nil
}

func short(v any) string {
	b, _ := json.Marshal(v)
	s := string(b)
	if len(s) > 80 {
		s = s[:77] + "..."
	}
	return s
}

func diffParquet(pa, pb string) (string, error) {
	x, err := parquetio.Read(pa)
	if err != nil {
		return "", err
	}
	y, err := parquetio.Read(pb)
	if err != nil {
		return "", err
	}
	if !reflect.DeepEqual(x.Meta, y.Meta) {
		return fmt.Sprintf("metadata differs: %v vs %v", x.Meta, y.Meta), nil
	}
	if len(x.Columns) != len(y.Columns) {
		return fmt.Sprintf("%d columns vs %d", len(x.Columns), len(y.Columns)), nil
	}
	for i := range x.Columns {
		cx, cy := &x.Columns[i], &y.Columns[i]
		if cx.Name != cy.Name || cx.Nullable != cy.Nullable {
			return fmt.Sprintf("column %d: %s (nullable %v) vs %s (nullable %v)", i+1, cx.Name, cx.Nullable, cy.Name, cy.Nullable), nil
		}
		if cx.Len() != cy.Len() {
			return fmt.Sprintf("column %s: %d rows vs %d", cx.Name, cx.Len(), cy.Len()), nil
		}
		if cx.Name == "seconds" {
			continue // timings differ by design
		}
		if r := firstDiff(cx, cy); r >= 0 {
			return fmt.Sprintf("column %s differs at row %d", cx.Name, r), nil
		}
	}
	return "", nil
}

// firstDiff returns the first row where two columns of equal length and type
// differ (nulls compared as nulls, floats bit for bit), or -1.
func firstDiff(cx, cy *parquetio.Column) int {
	n := cx.Len()
	for r := 0; r < n; r++ {
		if cx.IsNull(r) != cy.IsNull(r) {
			return r
		}
		if cx.IsNull(r) {
			continue
		}
		if !sameValue(cx.Values, cy.Values, r) {
			return r
		}
	}
	return -1
}

func sameValue(x, y any, r int) bool {
	switch vx := x.(type) {
	case []float64:
		vy, ok := y.([]float64)
		return ok && math.Float64bits(vx[r]) == math.Float64bits(vy[r])
	case []int32:
		vy, ok := y.([]int32)
		return ok && vx[r] == vy[r]
	case []int64:
		vy, ok := y.([]int64)
		return ok && vx[r] == vy[r]
	case []string:
		vy, ok := y.([]string)
		return ok && vx[r] == vy[r]
	case []bool:
		vy, ok := y.([]bool)
		return ok && vx[r] == vy[r]
	}
	return false
}
