package dataset

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// TestReadGoodColumnar: the Parquet, Arrow IPC file and Arrow IPC stream
// copies of good.csv (written by TestWriteColumnarFixtures with other
// integer and float widths) read to the same data set and fingerprint as
// the CSV.
func TestReadGoodColumnar(t *testing.T) {
	ref, err := Read(in("good.csv"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"good.parquet", "good.arrow", "good.arrows"} {
		t.Run(name, func(t *testing.T) {
			ds, err := Read(in(name), goodOpt)
			if err != nil {
				t.Fatal(err)
			}
			checkGood(t, ds)
			if ds.Fingerprint != ref.Fingerprint {
				t.Errorf("fingerprint %s, want %s (as good.csv)", ds.Fingerprint, ref.Fingerprint)
			}
			if ds.SourceHash == ref.SourceHash || len(ds.SourceHash) != 64 {
				t.Errorf("source hash %q should be a SHA-256 of this file's bytes", ds.SourceHash)
			}
		})
	}
	// Explicit format on a file without a known extension.
	dir := t.TempDir()
	data, err := os.ReadFile(in("good.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(dir, "table.bin")
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	opt := goodOpt
	opt.Format = "parquet"
	ds, err := Read(p, opt)
	if err != nil {
		t.Fatal(err)
	}
	checkGood(t, ds)
	// Feature selection and a standardise+PCA pipeline behave the same.
	opt = Options{IDColumn: "id", LabelColumn: "group", Columns: []string{"c", "a"}, Standardize: true, PCA: 2}
	a, err := Read(in("good.csv"), opt)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Read(in("good.arrow"), opt)
	if err != nil {
		t.Fatal(err)
	}
	if a.Fingerprint != b.Fingerprint {
		t.Errorf("with selection, standardise and PCA: fingerprints differ: %s vs %s", a.Fingerprint, b.Fingerprint)
	}
}

func TestReadIntegerIDs(t *testing.T) {
	ds, err := Read(in("int_id.parquet"), Options{IDColumn: "id"})
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"10", "20", "30"}; !reflect.DeepEqual(ds.IDs, want) {
		t.Errorf("ids %q, want %q", ds.IDs, want)
	}
}

// TestReadBadColumnar: Parquet/Arrow rows are 1-based data rows; positions
// read off the generator in fixtures_test.go.
func TestReadBadColumnar(t *testing.T) {
	cases := []struct {
		name, file string
		opt        Options
		want       string // exact message after "FILE: " (prefix match when wantPrefix)
		prefix     bool
	}{
		{"string feature", "string_feature.parquet", Options{IDColumn: "id"},
			"column 3 (name): type utf8 is not numeric: feature columns must hold integers or floating-point numbers (make it the label column, or leave it out of the feature columns)", false},
		{"bool feature", "bool_feature.arrow", Options{},
			"column 2 (flag): type bool is not numeric: feature columns must hold integers or floating-point numbers (make it the label column, or leave it out of the feature columns)", false},
		{"float id", "good.parquet", Options{IDColumn: "a", LabelColumn: "group", Columns: []string{"b"}},
			"column 3 (a): type float64 cannot hold ids: the id column must be text or integer", false},
		{"null feature", "null_feature.parquet", Options{IDColumn: "id"}, "row 3, column 3 (b): missing value (null)", false},
		{"NaN feature", "nan_feature.arrow", Options{}, "row 4, column 1 (a): NaN is not allowed", false},
		{"duplicate id", "duplicate_id.parquet", Options{IDColumn: "id"}, `row 3, column 1 (id): duplicate id "p1" (first on row 1)`, false},
		{"misspelt label", "good.arrow", Options{IDColumn: "id", LabelColumn: "grup"},
			`unknown label column "grup"; did you mean "group"? (columns: id, group, a, b, c)`, false},
		{"truncated parquet", "truncated.parquet", goodOpt, "corrupt or truncated Parquet file: ", true},
		{"corrupt parquet", "corrupt.parquet", goodOpt, "corrupt or truncated Parquet file", true},
		// Regression: found by TestColumnarDamage, arrow-go allocated from
		// this count and the process died of out-of-memory.
		{"field count beyond the file", "huge_field_count.arrow", Options{}, "corrupt or truncated Arrow IPC file: metadata out of bounds", false},
		// Regression: found by TestColumnarDamage, the stream reader
		// allocated 2 GiB for the claimed metadata length.
		{"message length beyond the file", "huge_message_length.arrows", goodOpt,
			"corrupt or truncated Arrow IPC file: arrow/ipc: message metadata length 2147483647 exceeds limit 16777216", false},
		{"truncated arrow", "truncated.arrow", goodOpt, "corrupt or truncated Arrow IPC file: ", true},
		// A text file given as Parquet is read as text (the first bytes
		// decide); the error says so.
		{"CSV given as Parquet", "good.csv", Options{Format: "parquet"},
			`row 2, column 1 (id): not a number: "p1" (the file is a text file but is given as --format parquet; read as a text table (CSV, or TSV if its first line has a tab))`, false},
		{"parquet without rows", "zero_rows.parquet", Options{}, "no data rows", false},
		{"arrow without rows", "zero_rows.arrow", Options{}, "no data rows", false},
		{"empty parquet", "empty.csv", Options{Format: "parquet"}, "empty file", false},
		{"missing parquet", "none.parquet", Options{}, "no such file", false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := in(c.file)
			ds, err := Read(path, c.opt)
			if err == nil {
				t.Fatalf("got a %d×%d data set, want an error", ds.N, ds.D)
			}
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("got %T %v, want *InputError", err, err)
			}
			got, want := err.Error(), path+": "+c.want
			if c.prefix && !strings.HasPrefix(got, want) || !c.prefix && got != want {
				t.Errorf("got  %s\nwant %s", got, want)
			}
			if strings.ContainsAny(got, "\n\r") {
				t.Errorf("message is not one line: %q", got)
			}
		})
	}
}

// TestColumnarDamage: every truncation of the Parquet and Arrow fixtures,
// and a byte flipped at every position, gives an error or a well-formed
// data set — never a panic (common practice: robustness of binary readers).
func TestColumnarDamage(t *testing.T) {
	// Damaged sizes ask for up to the allocation cap per buffer; a lower
	// cap keeps this test's memory small (the logic is the same).
	defer func(f int64) { allocFloor = f }(allocFloor)
	allocFloor = 8 << 20
	dir := t.TempDir()
	for _, name := range []string{"good.parquet", "good.arrow", "good.arrows"} {
		data, err := os.ReadFile(in(name))
		if err != nil {
			t.Fatal(err)
		}
		path := filepath.Join(dir, name)
		format := "parquet"
		if !strings.HasSuffix(name, ".parquet") {
			format = "arrow"
		}
		try := func(b []byte, what string) {
			ds, err := readColumnar(bytes.NewReader(b), int64(len(b)), path, format, goodOpt)
			if err != nil {
				var ie *InputError
				if !errors.As(err, &ie) || strings.ContainsAny(err.Error(), "\n\r") {
					t.Fatalf("%s %s: got %T %q, want a one-line *InputError", name, what, err, err)
				}
				return
			}
			if err := ds.prepare(goodOpt); err != nil {
				t.Fatal(err)
			}
			checkConsistent(t, ds)
		}
		const step = 1
		for n := 0; n < len(data); n += step {
			try(data[:n], "truncated")
		}
		for i := 0; i < len(data); i += step {
			b := append([]byte(nil), data...)
			b[i] ^= 0xff
			try(b, "flipped")
		}
		// Large counts and lengths written over every 4-byte window (the
		// way damaged metadata asks for huge allocations).
		for _, v := range []uint32{1<<31 - 1, 1 << 28, 0xfffffff0} {
			for i := 0; i+4 <= len(data); i += step {
				b := append([]byte(nil), data...)
				binary.LittleEndian.PutUint32(b[i:], v)
				try(b, fmt.Sprintf("with %#x at byte %d", v, i))
			}
		}
	}
}

// checkConsistent checks the invariants of any data set Read returns.
func checkConsistent(t testing.TB, ds *Dataset) {
	t.Helper()
	if ds.N < 1 || ds.D < 1 || len(ds.X) != ds.N*ds.D || len(ds.IDs) != ds.N || len(ds.Columns) != ds.D {
		t.Fatalf("inconsistent sizes: N=%d D=%d len(X)=%d len(IDs)=%d len(Columns)=%d", ds.N, ds.D, len(ds.X), len(ds.IDs), len(ds.Columns))
	}
	if ds.Labels != nil && len(ds.Labels) != ds.N {
		t.Fatalf("len(Labels)=%d, want %d", len(ds.Labels), ds.N)
	}
	for i, v := range ds.X {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("X[%d] = %g is not finite", i, v)
		}
	}
	seen := make(map[string]bool, ds.N)
	for _, id := range ds.IDs {
		if seen[id] {
			t.Fatalf("duplicate id %q in a returned data set", id)
		}
		seen[id] = true
	}
	if Fingerprint(ds) != ds.Fingerprint {
		t.Fatal("stored fingerprint does not match the content")
	}
}
