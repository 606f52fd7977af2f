package dataset

import (
	"bytes"
	"encoding/binary"
	"flag"
	"os"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/float16"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// The Parquet and Arrow fixtures in testdata/inputs are written by this
// test (no pyarrow on the build machines):
//
//	go test ./internal/dataset -run TestWriteColumnarFixtures -update
//
// The good.* files hold the same table as testdata/inputs/good.csv with
// features of different widths (float64, int64/int32, float32/float16 —
// every value is exact in each width), so every format must read to the
// same fingerprint.
var update = flag.Bool("update", false, "rewrite the Parquet/Arrow fixtures in testdata/inputs")

type fixCol struct {
	name string
	arr  func(b array.Builder)
	typ  arrow.DataType
}

func strs(v ...string) func(array.Builder) {
	return func(b array.Builder) {
		for _, s := range v {
			b.(*array.StringBuilder).Append(s)
		}
	}
}

func f64s(v []float64, nulls ...int) func(array.Builder) {
	return func(b array.Builder) {
		fb := b.(*array.Float64Builder)
		for i, x := range v {
			if contains(nulls, i) {
				fb.AppendNull()
			} else {
				fb.Append(x)
			}
		}
	}
}

func contains(s []int, v int) bool {
	for _, u := range s {
		if u == v {
			return true
		}
	}
	return false
}

func record(cols []fixCol) arrow.RecordBatch {
	mem := memory.NewGoAllocator()
	fields := make([]arrow.Field, len(cols))
	for i, c := range cols {
		fields[i] = arrow.Field{Name: c.name, Type: c.typ, Nullable: true}
	}
	sc := arrow.NewSchema(fields, nil)
	rb := array.NewRecordBuilder(mem, sc)
	defer rb.Release()
	for i, c := range cols {
		c.arr(rb.Field(i))
	}
	return rb.NewRecordBatch()
}

var (
	goodIDs    = strs("p1", "p2", "p3", "p4")
	goodGroups = strs("x", "y", "x", "y")
	goodA      = f64s([]float64{1.5, 3, -1e-3, 7.25})
)

func goodColumns(bType arrow.DataType, cType arrow.DataType) []fixCol {
	b := []int64{2, 4, 0, 10}
	c := []float64{-0.25, 0.5, 2, 1}
	return []fixCol{
		{"id", goodIDs, arrow.BinaryTypes.String},
		{"group", goodGroups, arrow.BinaryTypes.String},
		{"a", goodA, arrow.PrimitiveTypes.Float64},
		{"b", func(bl array.Builder) {
			for _, v := range b {
				switch bb := bl.(type) {
				case *array.Int64Builder:
					bb.Append(v)
				case *array.Int32Builder:
					bb.Append(int32(v))
				case *array.Uint8Builder:
					bb.Append(uint8(v))
				}
			}
		}, bType},
		{"c", func(bl array.Builder) {
			for _, v := range c {
				switch cb := bl.(type) {
				case *array.Float32Builder:
					cb.Append(float32(v))
				case *array.Float16Builder:
					cb.Append(float16.New(float32(v)))
				case *array.Float64Builder:
					cb.Append(v)
				}
			}
		}, cType},
	}
}

func writeParquet(t *testing.T, name string, rec arrow.RecordBatch, rowGroup int64) []byte {
	t.Helper()
	tbl := array.NewTableFromRecords(rec.Schema(), []arrow.RecordBatch{rec})
	defer tbl.Release()
	var buf bytes.Buffer
	props := parquet.NewWriterProperties(parquet.WithCreatedBy("plumb test fixtures"))
	if err := pqarrow.WriteTable(tbl, &buf, rowGroup, props, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	writeFixture(t, name, buf.Bytes())
	return buf.Bytes()
}

func writeArrowFile(t *testing.T, name string, rec arrow.RecordBatch, stream bool) []byte {
	t.Helper()
	var buf bytes.Buffer
	var w interface {
		Write(arrow.RecordBatch) error
		Close() error
	}
	if stream {
		w = ipc.NewWriter(&buf, ipc.WithSchema(rec.Schema()))
	} else {
		fw, err := ipc.NewFileWriter(&buf, ipc.WithSchema(rec.Schema()))
		if err != nil {
			t.Fatal(err)
		}
		w = fw
	}
	// Two record batches, to exercise row offsets across batches.
	n := rec.NumRows()
	for _, part := range []arrow.RecordBatch{rec.NewSlice(0, n/2), rec.NewSlice(n/2, n)} {
		if err := w.Write(part); err != nil {
			t.Fatal(err)
		}
		part.Release()
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	writeFixture(t, name, buf.Bytes())
	return buf.Bytes()
}

// writeFixture rewrites testdata/inputs/name with -update and otherwise
// checks that the committed file has exactly these bytes (golden-file
// pattern), so a change to the generator or the writer libraries shows.
func writeFixture(t *testing.T, name string, data []byte) {
	t.Helper()
	if *update {
		if err := os.WriteFile(in(name), data, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	got, err := os.ReadFile(in(name))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, data) {
		t.Errorf("%s: committed fixture (%d bytes) differs from the generator's output (%d bytes); rerun with -update if the change is intended", name, len(got), len(data))
	}
}

// TestWriteColumnarFixtures makes the Parquet and Arrow fixtures: with
// -update it writes them, otherwise it checks the committed ones.
func TestWriteColumnarFixtures(t *testing.T) {
	good := writeParquet(t, "good.parquet", record(goodColumns(arrow.PrimitiveTypes.Int64, arrow.PrimitiveTypes.Float32)), 2)
	writeArrowFile(t, "good.arrow", record(goodColumns(arrow.PrimitiveTypes.Int32, arrow.FixedWidthTypes.Float16)), false)
	writeArrowFile(t, "good.arrows", record(goodColumns(arrow.PrimitiveTypes.Uint8, arrow.PrimitiveTypes.Float64)), true)

	// Integer ids.
	writeParquet(t, "int_id.parquet", record([]fixCol{
		{"id", func(b array.Builder) { b.(*array.Int64Builder).AppendValues([]int64{10, 20, 30}, nil) }, arrow.PrimitiveTypes.Int64},
		{"a", f64s([]float64{1, 2, 3}), arrow.PrimitiveTypes.Float64},
	}), 1024)
	// A string column among the default features.
	writeParquet(t, "string_feature.parquet", record([]fixCol{
		{"id", strs("p1", "p2"), arrow.BinaryTypes.String},
		{"a", f64s([]float64{1, 2}), arrow.PrimitiveTypes.Float64},
		{"name", strs("ann", "bob"), arrow.BinaryTypes.String},
	}), 1024)
	// A boolean feature column.
	writeArrowFile(t, "bool_feature.arrow", record([]fixCol{
		{"a", f64s([]float64{1, 2}), arrow.PrimitiveTypes.Float64},
		{"flag", func(b array.Builder) { b.(*array.BooleanBuilder).AppendValues([]bool{true, false}, nil) }, arrow.FixedWidthTypes.Boolean},
	}), false)
	// A null on data row 3 (second row group of two rows).
	writeParquet(t, "null_feature.parquet", record([]fixCol{
		{"id", strs("p1", "p2", "p3", "p4"), arrow.BinaryTypes.String},
		{"a", f64s([]float64{1, 2, 3, 4}), arrow.PrimitiveTypes.Float64},
		{"b", f64s([]float64{1, 2, 3, 4}, 2), arrow.PrimitiveTypes.Float64},
	}), 2)
	// NaN on data row 4 (second record batch).
	writeArrowFile(t, "nan_feature.arrow", record([]fixCol{
		{"a", f64s([]float64{1, 2, 3, nan()}), arrow.PrimitiveTypes.Float64},
	}), false)
	// Duplicate ids on data rows 1 and 3.
	writeParquet(t, "duplicate_id.parquet", record([]fixCol{
		{"id", strs("p1", "p2", "p1"), arrow.BinaryTypes.String},
		{"a", f64s([]float64{1, 2, 3}), arrow.PrimitiveTypes.Float64},
	}), 1024)
	// A schema with no rows.
	empty := record([]fixCol{{"a", f64s(nil), arrow.PrimitiveTypes.Float64}})
	writeParquet(t, "zero_rows.parquet", empty, 1024)
	writeArrowFile(t, "zero_rows.arrow", empty, false)
	// Truncated and corrupted copies of good.parquet and good.arrow.
	writeFixture(t, "truncated.parquet", good[:len(good)/2])
	bad := bytes.Clone(good)
	for i := 4; i < len(bad)/2; i++ {
		bad[i] ^= 0x5a
	}
	writeFixture(t, "corrupt.parquet", bad)
	ar, err := os.ReadFile(in("good.arrow"))
	if err != nil {
		t.Fatal(err)
	}
	writeFixture(t, "truncated.arrow", ar[:len(ar)*2/3])
	writeFixture(t, "huge_field_count.arrow", hugeFieldCount(t, ar))
	st, err := os.ReadFile(in("good.arrows"))
	if err != nil {
		t.Fatal(err)
	}
	writeFixture(t, "huge_message_length.arrows", hugeMessageLength(t, st))
}

// hugeMessageLength returns a copy of the Arrow IPC stream data whose
// second message (the first record batch) claims 2³¹−1 bytes of metadata:
// ipc.NewReader does not apply its size limits and allocates that much.
func hugeMessageLength(t *testing.T, data []byte) []byte {
	t.Helper()
	out := bytes.Clone(data)
	if binary.LittleEndian.Uint32(out) != 0xFFFFFFFF {
		t.Fatal("stream does not start with a continuation marker")
	}
	next := 8 + int(binary.LittleEndian.Uint32(out[4:])) // the schema message has no body
	if binary.LittleEndian.Uint32(out[next:]) != 0xFFFFFFFF {
		t.Fatal("second message does not start with a continuation marker")
	}
	binary.LittleEndian.PutUint32(out[next+4:], 1<<31-1)
	return out
}

// hugeFieldCount returns a copy of the Arrow IPC file data whose footer
// schema claims 2³¹−1 fields: arrow-go would allocate that many fields
// before noticing (a fatal out-of-memory, not a panic), which
// checkArrowSchema must refuse first.
func hugeFieldCount(t *testing.T, data []byte) []byte {
	t.Helper()
	out := bytes.Clone(data)
	n := int(binary.LittleEndian.Uint32(out[len(out)-10:]))
	start := len(out) - 10 - n
	b := fbuf(out[start : len(out)-10])
	footer, err := rootTable(b)
	if err != nil {
		t.Fatal(err)
	}
	schema, ok, err := footer.subtable(1)
	if err != nil || !ok {
		t.Fatal("no schema in footer", err)
	}
	q, ok, err := schema.ref(1) // fields vector
	if err != nil || !ok {
		t.Fatal("no fields vector", err)
	}
	binary.LittleEndian.PutUint32(out[start+q:], 1<<31-1)
	return out
}

func nan() float64 { var z float64; return z / z }
