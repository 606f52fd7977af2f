package parquetio

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
	"sort"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"plumb/internal/atomicfile"
)

// Column is one named column of a Table.
type Column struct {
	Name string
	// Values holds the column's values: one of []int32, []int64,
	// []float64, []string or []bool.
	Values any
	// Nullable makes the column OPTIONAL in the Parquet schema. If it is
	// false the column is REQUIRED and Valid must be nil.
	Nullable bool
	// Valid marks the non-null entries of a nullable column. If Valid is
	// nil every entry is present.
	Valid []bool
}

// Len returns the number of values in the column, or -1 if Values holds an
// unsupported type.
func (c *Column) Len() int {
	switch v := c.Values.(type) {
	case []int32:
		return len(v)
	case []int64:
		return len(v)
	case []float64:
		return len(v)
	case []string:
		return len(v)
	case []bool:
		return len(v)
	}
	return -1
}

// IsNull reports whether entry i of the column is null.
func (c *Column) IsNull(i int) bool { return c.Valid != nil && !c.Valid[i] }

// Table is a list of columns of equal length and the file's key-value
// metadata.
type Table struct {
	Columns []Column
	// Meta is written as the Parquet file's key-value metadata, keys in
	// sorted order.
	Meta map[string]string
}

// Rows returns the number of rows (the length of the first column; 0 for a
// table without columns).
func (t *Table) Rows() int {
	if len(t.Columns) == 0 {
		return 0
	}
	return t.Columns[0].Len()
}

// Column returns the column with the given name, or nil.
func (t *Table) Column(name string) *Column {
	for i := range t.Columns {
		if t.Columns[i].Name == name {
			return &t.Columns[i]
		}
	}
	return nil
}

// MissingColumnError reports a column that is absent or has another type
// than expected.
type MissingColumnError struct {
	Name, Want string
	// Got is the type found, or "" when the column is absent.
	Got string
}

func (e *MissingColumnError) Error() string {
	if e.Got == "" {
		return fmt.Sprintf("column %q missing", e.Name)
	}
	return fmt.Sprintf("column %q is %s, want %s", e.Name, e.Got, e.Want)
}

func typed[T any](t *Table, name, want string) ([]T, error) {
	c := t.Column(name)
	if c == nil {
		return nil, &MissingColumnError{Name: name, Want: want}
	}
	v, ok := c.Values.([]T)
	if !ok {
		return nil, &MissingColumnError{Name: name, Want: want, Got: fmt.Sprintf("%T", c.Values)}
	}
	return v, nil
}

// Float64 returns the values of a float64 column.
func (t *Table) Float64(name string) ([]float64, error) { return typed[float64](t, name, "[]float64") }

// Int32 returns the values of an int32 column.
func (t *Table) Int32(name string) ([]int32, error) { return typed[int32](t, name, "[]int32") }

// Int64 returns the values of an int64 column.
func (t *Table) Int64(name string) ([]int64, error) { return typed[int64](t, name, "[]int64") }

// String returns the values of a string column.
func (t *Table) String(name string) ([]string, error) { return typed[string](t, name, "[]string") }

// Bool returns the values of a boolean column.
func (t *Table) Bool(name string) ([]bool, error) { return typed[bool](t, name, "[]bool") }

// Write writes t to path as Parquet (zstd, root repetition REQUIRED,
// key-value metadata from t.Meta), atomically: the file at path is either
// the old one or the complete new one, never a mixture. The parent
// directory must exist.
func Write(path string, t *Table) error {
	if err := validate(t); err != nil {
		return fmt.Errorf("parquetio: write %s: %w", path, err)
	}
	err := atomicfile.Write(path, func(f *os.File) error { return encode(f, t) })
	if err != nil {
		return fmt.Errorf("parquetio: write %s: %w", path, err)
	}
	return nil
}

func validate(t *Table) error {
	n := t.Rows()
	seen := map[string]bool{}
	for i := range t.Columns {
		c := &t.Columns[i]
		if c.Name == "" {
			return fmt.Errorf("column %d has no name", i)
		}
		if seen[c.Name] {
			return fmt.Errorf("duplicate column %q", c.Name)
		}
		seen[c.Name] = true
		l := c.Len()
		if l < 0 {
			return fmt.Errorf("column %q: unsupported type %T", c.Name, c.Values)
		}
		if l != n {
			return fmt.Errorf("column %q has %d values, want %d", c.Name, l, n)
		}
		if c.Valid != nil && (!c.Nullable || len(c.Valid) != n) {
			return fmt.Errorf("column %q: validity given for a required column or of the wrong length", c.Name)
		}
	}
	return nil
}

func encode(f *os.File, t *Table) error {
	mem := memory.NewGoAllocator()
	fields := make([]arrow.Field, len(t.Columns))
	arrays := make([]arrow.Array, len(t.Columns))
	defer func() {
		for _, a := range arrays {
			if a != nil {
				a.Release()
			}
		}
	}()
	for i := range t.Columns {
		c := &t.Columns[i]
		var a arrow.Array
		var dt arrow.DataType
		switch v := c.Values.(type) {
		case []int32:
			b := array.NewInt32Builder(mem)
			b.AppendValues(v, c.Valid)
			a, dt = b.NewArray(), arrow.PrimitiveTypes.Int32
			b.Release()
		case []int64:
			b := array.NewInt64Builder(mem)
			b.AppendValues(v, c.Valid)
			a, dt = b.NewArray(), arrow.PrimitiveTypes.Int64
			b.Release()
		case []float64:
			b := array.NewFloat64Builder(mem)
			b.AppendValues(v, c.Valid)
			a, dt = b.NewArray(), arrow.PrimitiveTypes.Float64
			b.Release()
		case []string:
			b := array.NewStringBuilder(mem)
			b.AppendValues(v, c.Valid)
			a, dt = b.NewArray(), arrow.BinaryTypes.String
			b.Release()
		case []bool:
			b := array.NewBooleanBuilder(mem)
			b.AppendValues(v, c.Valid)
			a, dt = b.NewArray(), arrow.FixedWidthTypes.Boolean
			b.Release()
		}
		fields[i] = arrow.Field{Name: c.Name, Type: dt, Nullable: c.Nullable}
		arrays[i] = a
	}
	schema := arrow.NewSchema(fields, nil)
	rec := array.NewRecordBatch(schema, arrays, int64(t.Rows()))
	defer rec.Release()

	props := parquet.NewWriterProperties(
		parquet.WithCompression(compress.Codecs.Zstd),
		parquet.WithRootRepetition(parquet.Repetitions.Required),
		parquet.WithAllocator(mem),
	)
	// The writer closes an io.Closer it is given; the file must stay open
	// for the sync, so it only sees an io.Writer.
	fw, err := pqarrow.NewFileWriter(schema, struct{ io.Writer }{f}, props, pqarrow.NewArrowWriterProperties(pqarrow.WithAllocator(mem)))
	if err != nil {
		return err
	}
	keys := make([]string, 0, len(t.Meta))
	for k := range t.Meta {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if err := fw.AppendKeyValueMetadata(k, t.Meta[k]); err != nil {
			fw.Close()
			return err
		}
	}
	if t.Rows() > 0 {
		if err := fw.Write(rec); err != nil {
			fw.Close()
			return err
		}
	}
	return fw.Close()
}

// ErrCorrupt is wrapped by the errors Read returns for files that are not
// valid Parquet or hold unsupported column types.
var ErrCorrupt = errors.New("not a readable Parquet table")

// Read reads a whole Parquet file written by Write (or any flat Parquet
// file with int32, int64, double, string and boolean columns) into a Table.
// Integer columns of other widths are not converted.
func Read(path string) (t *Table, err error) {
	defer func() {
		// The Parquet decoder may panic on some corrupt inputs; a corrupt
		// file is a data error, never a crash.
		if r := recover(); r != nil {
			t, err = nil, fmt.Errorf("parquetio: read %s: %w (%v)", path, ErrCorrupt, r)
		}
	}()
	rdr, err := file.OpenParquetFile(path, false)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, fmt.Errorf("parquetio: read %s: %w", path, err)
		}
		return nil, fmt.Errorf("parquetio: read %s: %w (%v)", path, ErrCorrupt, err)
	}
	defer rdr.Close()
	t = &Table{Meta: map[string]string{}}
	kv := rdr.MetaData().KeyValueMetadata()
	for i, k := range kv.Keys() {
		t.Meta[k] = kv.Values()[i]
	}
	mem := memory.NewGoAllocator()
	fr, err := pqarrow.NewFileReader(rdr, pqarrow.ArrowReadProperties{}, mem)
	if err != nil {
		return nil, fmt.Errorf("parquetio: read %s: %w (%v)", path, ErrCorrupt, err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		return nil, fmt.Errorf("parquetio: read %s: %w (%v)", path, ErrCorrupt, err)
	}
	defer tbl.Release()
	n := int(tbl.NumRows())
	for i := 0; i < int(tbl.NumCols()); i++ {
		col := tbl.Column(i)
		c, err := convert(col, n)
		if err != nil {
			return nil, fmt.Errorf("parquetio: read %s: column %q: %w", path, col.Name(), err)
		}
		t.Columns = append(t.Columns, c)
	}
	return t, nil
}

func convert(col *arrow.Column, n int) (Column, error) {
	c := Column{Name: col.Name(), Nullable: col.Field().Nullable}
	valid := make([]bool, 0, n)
	var err error
	switch col.DataType().ID() {
	case arrow.INT32:
		c.Values, err = gather[int32, *array.Int32](col, n, &valid)
	case arrow.INT64:
		c.Values, err = gather[int64, *array.Int64](col, n, &valid)
	case arrow.FLOAT64:
		c.Values, err = gather[float64, *array.Float64](col, n, &valid)
	case arrow.STRING:
		c.Values, err = gather[string, *array.String](col, n, &valid)
	case arrow.BOOL:
		c.Values, err = gather[bool, *array.Boolean](col, n, &valid)
	default:
		return c, fmt.Errorf("%w: unsupported type %s", ErrCorrupt, col.DataType())
	}
	if err != nil {
		return c, err
	}
	if slices.Contains(valid, false) {
		c.Valid = valid
	}
	return c, nil
}

// gather copies the values of every chunk of col, which holds arrays of
// type A, into one slice, appending each entry's validity to valid.
func gather[T any, A interface {
	Len() int
	Value(int) T
	IsValid(int) bool
}](col *arrow.Column, n int, valid *[]bool) ([]T, error) {
	v := make([]T, 0, n)
	for _, ch := range col.Data().Chunks() {
		a, ok := ch.(A)
		if !ok {
			return nil, fmt.Errorf("%w: column chunk of type %s", ErrCorrupt, ch.DataType())
		}
		for j := 0; j < a.Len(); j++ {
			v = append(v, a.Value(j))
			*valid = append(*valid, a.IsValid(j))
		}
	}
	return v, nil
}

// ReadMeta returns a Parquet file's key-value metadata and row count
// without decoding its columns.
func ReadMeta(path string) (meta map[string]string, rows int64, err error) {
	defer func() {
		if r := recover(); r != nil {
			meta, rows, err = nil, 0, fmt.Errorf("parquetio: read %s: %w (%v)", path, ErrCorrupt, r)
		}
	}()
	rdr, err := file.OpenParquetFile(path, false)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, 0, fmt.Errorf("parquetio: read %s: %w", path, err)
		}
		return nil, 0, fmt.Errorf("parquetio: read %s: %w (%v)", path, ErrCorrupt, err)
	}
	defer rdr.Close()
	meta = map[string]string{}
	kv := rdr.MetaData().KeyValueMetadata()
	for i, k := range kv.Keys() {
		meta[k] = kv.Values()[i]
	}
	return meta, rdr.NumRows(), nil
}
