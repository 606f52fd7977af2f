package parquetio

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
)

func sample() *Table {
	return &Table{
		Columns: []Column{
			{Name: "run_id", Values: []string{"a", "b", "c"}},
			{Name: "point", Values: []int32{0, 1, 2}},
			{Name: "seed", Values: []int64{1, 2, 1 << 40}},
			{Name: "x", Values: []float64{0.5, -1.25, 3e-300}},
			{Name: "unstable", Values: []bool{true, false, true}},
			{Name: "label_accuracy", Values: []float64{0.9, 0, 0.7}, Nullable: true, Valid: []bool{true, false, true}},
			{Name: "label", Values: []string{"p", "q", "r"}, Nullable: true},
		},
		Meta: map[string]string{"plumb.table": "test", "plumb.version": "x"},
	}
}

func TestRoundTrip(t *testing.T) {
	path := filepath.Join(t.TempDir(), "t.parquet")
	want := sample()
	if err := Write(path, want); err != nil {
		t.Fatal(err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got.Meta, want.Meta) {
		t.Errorf("meta: got %v want %v", got.Meta, want.Meta)
	}
	if len(got.Columns) != len(want.Columns) {
		t.Fatalf("got %d columns want %d", len(got.Columns), len(want.Columns))
	}
	for i := range want.Columns {
		g, w := got.Columns[i], want.Columns[i]
		if g.Name != w.Name || g.Nullable != w.Nullable || !reflect.DeepEqual(g.Values, w.Values) || !reflect.DeepEqual(g.Valid, w.Valid) {
			t.Errorf("column %d: got %+v want %+v", i, g, w)
		}
	}
	meta, rows, err := ReadMeta(path)
	if err != nil || rows != 3 || meta["plumb.table"] != "test" {
		t.Errorf("ReadMeta: got %v %d %v", meta, rows, err)
	}
	if v, err := got.Float64("x"); err != nil || v[1] != -1.25 {
		t.Errorf("Float64: got %v %v", v, err)
	}
	var mc *MissingColumnError
	if _, err := got.Int32("x"); !errors.As(err, &mc) {
		t.Errorf("Int32 of a float column: got %v, want MissingColumnError", err)
	}
}

// The Parquet format specification (parquet-format, schema section) defines
// the root's repetition as a field of the schema; the issue requires
// REQUIRED so that strict readers accept the file, and zstd per column chunk.
func TestSchemaRootRequiredAndZstd(t *testing.T) {
	path := filepath.Join(t.TempDir(), "t.parquet")
	if err := Write(path, sample()); err != nil {
		t.Fatal(err)
	}
	rdr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer rdr.Close()
	sc := rdr.MetaData().Schema
	if got := sc.Root().RepetitionType(); got != parquet.Repetitions.Required {
		t.Errorf("root repetition: got %v want REQUIRED", got)
	}
	if got := sc.Column(0).SchemaNode().RepetitionType(); got != parquet.Repetitions.Required {
		t.Errorf("run_id repetition: got %v want REQUIRED", got)
	}
	if got := sc.Column(5).SchemaNode().RepetitionType(); got != parquet.Repetitions.Optional {
		t.Errorf("label_accuracy repetition: got %v want OPTIONAL", got)
	}
	rg := rdr.MetaData().RowGroup(0)
	for i := 0; i < rg.NumColumns(); i++ {
		cc, err := rg.ColumnChunk(i)
		if err != nil {
			t.Fatal(err)
		}
		if cc.Compression() != compress.Codecs.Zstd {
			t.Errorf("column %d compression: got %v want zstd", i, cc.Compression())
		}
	}
}

func TestEmptyTable(t *testing.T) {
	path := filepath.Join(t.TempDir(), "e.parquet")
	in := &Table{Columns: []Column{{Name: "run_id", Values: []string{}}, {Name: "kl", Values: []float64{}, Nullable: true}}}
	if err := Write(path, in); err != nil {
		t.Fatal(err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if got.Rows() != 0 || len(got.Columns) != 2 {
		t.Errorf("got %d rows, %d columns; want 0, 2", got.Rows(), len(got.Columns))
	}
}

func TestWriteRejectsBadTables(t *testing.T) {
	cases := map[string]*Table{
		"ragged":      {Columns: []Column{{Name: "a", Values: []int32{1}}, {Name: "b", Values: []int32{1, 2}}}},
		"duplicate":   {Columns: []Column{{Name: "a", Values: []int32{1}}, {Name: "a", Values: []int32{1}}}},
		"unsupported": {Columns: []Column{{Name: "a", Values: []uint8{1}}}},
		"validity":    {Columns: []Column{{Name: "a", Values: []int32{1}, Valid: []bool{false}}}},
	}
	for name, tb := range cases {
		t.Run(name, func(t *testing.T) {
			dir := t.TempDir()
			if err := Write(filepath.Join(dir, "x.parquet"), tb); err == nil {
				t.Error("got nil error")
			}
			if ents, _ := os.ReadDir(dir); len(ents) != 0 {
				t.Errorf("left %d files behind", len(ents))
			}
		})
	}
}

func TestReadCorrupt(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.parquet")
	if err := Write(good, sample()); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(good)
	cases := map[string][]byte{
		"empty":     {},
		"text":      []byte("id,x\n1,2\n"),
		"truncated": b[:len(b)/2],
		"no-footer": b[:len(b)-8],
	}
	for name, data := range cases {
		t.Run(name, func(t *testing.T) {
			p := filepath.Join(dir, name+".parquet")
			os.WriteFile(p, data, 0o644)
			if _, err := Read(p); !errors.Is(err, ErrCorrupt) {
				t.Errorf("Read: got %v want ErrCorrupt", err)
			}
			if _, _, err := ReadMeta(p); !errors.Is(err, ErrCorrupt) {
				t.Errorf("ReadMeta: got %v want ErrCorrupt", err)
			}
		})
	}
	if _, err := Read(filepath.Join(dir, "absent.parquet")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("absent: got %v want ErrNotExist", err)
	}
}
