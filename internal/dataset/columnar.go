package dataset

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"unicode/utf8"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// source is what the Parquet and Arrow readers need: an *os.File or, in
// tests, a *bytes.Reader.
type source interface {
	io.Reader
	io.ReaderAt
	io.Seeker
}

// readColumnarFile reads a Parquet or Arrow IPC (file or stream) table
// from an open file.
func readColumnarFile(f *os.File, path, format string, opt Options) (*Dataset, error) {
	st, err := f.Stat()
	if err != nil {
		return nil, &InputError{File: path, Msg: "cannot stat: " + err.Error(), Err: err}
	}
	if st.IsDir() {
		return nil, &InputError{File: path, Msg: "is a directory, not a file"}
	}
	return readColumnar(f, st.Size(), path, format, opt)
}

// readColumnar reads a Parquet or Arrow IPC table of size bytes from r.
// Any panic inside the Arrow and Parquet readers (they may panic on
// corrupt input) is turned into an *InputError.
func readColumnar(r source, size int64, path, format string, opt Options) (ds *Dataset, err error) {
	kind := "Parquet"
	if format == "arrow" {
		kind = "Arrow IPC"
	}
	defer func() {
		if r := recover(); r != nil {
			ds, err = nil, &InputError{File: path, Msg: fmt.Sprintf("corrupt or truncated %s file (the reader failed: %v)", kind, r)}
		}
	}()
	if size == 0 {
		return nil, &InputError{File: path, Msg: "empty file"}
	}
	mem := allocatorFor(size)
	if format == "parquet" {
		return readParquet(r, path, opt, mem)
	}
	return readArrow(r, path, size, opt, mem)
}

func corrupt(path, kind string, err error) error {
	return &InputError{File: path, Msg: fmt.Sprintf("corrupt or truncated %s file: %v", kind, err), Err: err}
}

func readParquet(f source, path string, opt Options, mem memory.Allocator) (*Dataset, error) {
	const kind = "Parquet"
	pf, err := file.NewParquetReader(f, file.WithReadProps(parquet.NewReaderProperties(mem)))
	if err != nil {
		return nil, corrupt(path, kind, err)
	}
	defer pf.Close()
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: 1 << 16}, mem)
	if err != nil {
		return nil, corrupt(path, kind, err)
	}
	sc, err := fr.Schema()
	if err != nil {
		return nil, corrupt(path, kind, err)
	}
	p, err := planSchema(path, sc, opt)
	if err != nil {
		return nil, err
	}
	if pf.NumRows() == 0 {
		return nil, &InputError{File: path, Msg: "no data rows"}
	}
	// Read only the columns needed when every field is one leaf column
	// (leaf index = field index); otherwise read them all.
	var cols []int
	if pf.MetaData().Schema.NumColumns() == sc.NumFields() {
		need := make([]bool, sc.NumFields())
		for _, j := range p.features {
			need[j] = true
		}
		if p.id >= 0 {
			need[p.id] = true
		}
		if p.label >= 0 {
			need[p.label] = true
		}
		for j, ok := range need {
			if ok {
				cols = append(cols, j)
			}
		}
	}
	rr, err := fr.GetRecordReader(context.Background(), cols, nil)
	if err != nil {
		return nil, corrupt(path, kind, err)
	}
	defer rr.Release()
	b := newBuilder(path, p, opt)
	for rr.Next() {
		if err := b.addBatch(rr.RecordBatch()); err != nil {
			return nil, err
		}
	}
	if err := rr.Err(); err != nil && !errors.Is(err, io.EOF) {
		return nil, corrupt(path, kind, err)
	}
	if int64(b.n) != pf.NumRows() {
		return nil, &InputError{File: path, Msg: fmt.Sprintf("corrupt or truncated Parquet file: read %d rows, the footer says %d", b.n, pf.NumRows())}
	}
	return b.dataset(), nil
}

var (
	arrowFileMagic = []byte("ARROW1")
	featherV1Magic = []byte("FEA1")
)

func readArrow(f source, path string, size int64, opt Options, mem memory.Allocator) (*Dataset, error) {
	const kind = "Arrow IPC"
	head := make([]byte, 6)
	n, _ := io.ReadFull(f, head)
	head = head[:n]
	if _, err := f.Seek(0, io.SeekStart); err != nil {
		return nil, fmt.Errorf("dataset: %s: %w", path, err)
	}
	if bytes.HasPrefix(head, featherV1Magic) {
		return nil, &InputError{File: path, Msg: "Feather version 1 files are not supported; write Feather version 2 (Arrow IPC file)"}
	}
	isFile := bytes.Equal(head, arrowFileMagic)
	if err := checkArrowSchema(f, size, isFile); err != nil {
		return nil, corrupt(path, kind, err)
	}
	limits := []ipc.Option{ipc.WithAllocator(mem), ipc.WithMetadataSizeLimit(maxMetadata), ipc.WithBodySizeLimit(size)}
	if isFile {
		fr, err := ipc.NewFileReader(f, limits...)
		if err != nil {
			return nil, corrupt(path, kind, err)
		}
		defer fr.Close()
		p, err := planSchema(path, fr.Schema(), opt)
		if err != nil {
			return nil, err
		}
		b := newBuilder(path, p, opt)
		for i := 0; i < fr.NumRecords(); i++ {
			rec, err := fr.RecordBatchAt(i)
			if err != nil {
				return nil, corrupt(path, kind, err)
			}
			err = b.addBatch(rec)
			rec.Release()
			if err != nil {
				return nil, err
			}
		}
		if b.n == 0 {
			return nil, &InputError{File: path, Msg: "no data rows"}
		}
		return b.dataset(), nil
	}
	// ipc.NewReader does not pass the size limits on to its message
	// reader (arrow-go v18.8.0), so build the message reader ourselves.
	r, err := ipc.NewReaderFromMessageReader(ipc.NewMessageReader(f, limits...), limits...)
	if err != nil {
		return nil, corrupt(path, kind, err)
	}
	defer r.Release()
	p, err := planSchema(path, r.Schema(), opt)
	if err != nil {
		return nil, err
	}
	b := newBuilder(path, p, opt)
	for r.Next() {
		if err := b.addBatch(r.RecordBatch()); err != nil {
			return nil, err
		}
	}
	if err := r.Err(); err != nil && !errors.Is(err, io.EOF) {
		return nil, corrupt(path, kind, err)
	}
	if b.n == 0 {
		return nil, &InputError{File: path, Msg: "no data rows"}
	}
	return b.dataset(), nil
}

// planSchema resolves the columns against an Arrow schema and checks their
// types: features numeric, id text or integer.
func planSchema(path string, sc *arrow.Schema, opt Options) (*plan, error) {
	names := make([]string, sc.NumFields())
	for j, f := range sc.Fields() {
		if !utf8.ValidString(f.Name) {
			return nil, &InputError{File: path, Column: j + 1, Msg: notUTF8("column name", f.Name), keep: true}
		}
		names[j] = f.Name
	}
	p, err := resolveColumns(path, names, 0, opt)
	if err != nil {
		return nil, err
	}
	for _, j := range p.features {
		if dt := sc.Field(j).Type; !isNumeric(dt) {
			return nil, &InputError{File: path, Column: j + 1, ColumnName: names[j],
				Msg: fmt.Sprintf("type %s is not numeric: feature columns must hold integers or floating-point numbers (make it the label column, or leave it out of the feature columns)", dt)}
		}
	}
	if p.id >= 0 {
		if dt := sc.Field(p.id).Type; !isIDType(dt) {
			return nil, &InputError{File: path, Column: p.id + 1, ColumnName: names[p.id],
				Msg: fmt.Sprintf("type %s cannot hold ids: the id column must be text or integer", dt)}
		}
	}
	return p, nil
}

func isNumeric(dt arrow.DataType) bool {
	switch dt.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64,
		arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64,
		arrow.FLOAT16, arrow.FLOAT32, arrow.FLOAT64,
		arrow.DECIMAL32, arrow.DECIMAL64, arrow.DECIMAL128, arrow.DECIMAL256:
		return true
	}
	return false
}

func isIDType(dt arrow.DataType) bool {
	switch dt.ID() {
	case arrow.STRING, arrow.LARGE_STRING, arrow.STRING_VIEW,
		arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64,
		arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64:
		return true
	}
	return false
}

// addBatch appends the rows of one record batch. Integers are converted to
// float64 exactly up to 2⁵³ in magnitude and rounded to nearest beyond.
func (b *builder) addBatch(rec arrow.RecordBatch) error {
	p := b.plan
	m := int(rec.NumRows())
	if m == 0 {
		return nil
	}
	col := make(map[string]int, rec.NumCols())
	for k, f := range rec.Schema().Fields() {
		col[f.Name] = k
	}
	get := func(j int) (arrow.Array, error) {
		k, ok := col[p.names[j]]
		if !ok || rec.Column(k).Len() != m {
			return nil, &InputError{File: b.file, Column: j + 1, ColumnName: p.names[j], Msg: "corrupt file: column missing or of the wrong length in a record batch"}
		}
		return rec.Column(k), nil
	}
	d := len(p.features)
	off := b.n
	b.x = append(b.x, make([]float64, m*d)...)
	x := b.x[off*d:]
	for f, j := range p.features {
		arr, err := get(j)
		if err != nil {
			return err
		}
		if i, msg := fillColumn(arr, x, d, f, !b.standardize); msg != "" {
			return &InputError{File: b.file, Row: off + i + 1, Column: j + 1, ColumnName: p.names[j], Msg: msg}
		}
	}
	if p.id >= 0 {
		arr, err := get(p.id)
		if err != nil {
			return err
		}
		for i := 0; i < m; i++ {
			row := off + i + 1
			if arr.IsNull(i) {
				return &InputError{File: b.file, Row: row, Column: p.id + 1, ColumnName: p.names[p.id], Msg: "missing id (null)"}
			}
			if err := b.addID(idString(arr, i), row, p.id); err != nil {
				return err
			}
		}
	}
	if p.label >= 0 {
		arr, err := get(p.label)
		if err != nil {
			return err
		}
		for i := 0; i < m; i++ {
			s := ""
			if !arr.IsNull(i) {
				s = labelString(arr, i)
			}
			if err := b.addLabel(s, off+i+1, p.label); err != nil {
				return err
			}
		}
	}
	b.n += m
	return nil
}

func idString(arr arrow.Array, i int) string {
	switch a := arr.(type) {
	case *array.String:
		return a.Value(i)
	case *array.LargeString:
		return a.Value(i)
	case *array.StringView:
		return a.Value(i)
	case *array.Int8:
		return strconv.FormatInt(int64(a.Value(i)), 10)
	case *array.Int16:
		return strconv.FormatInt(int64(a.Value(i)), 10)
	case *array.Int32:
		return strconv.FormatInt(int64(a.Value(i)), 10)
	case *array.Int64:
		return strconv.FormatInt(a.Value(i), 10)
	case *array.Uint8:
		return strconv.FormatUint(uint64(a.Value(i)), 10)
	case *array.Uint16:
		return strconv.FormatUint(uint64(a.Value(i)), 10)
	case *array.Uint32:
		return strconv.FormatUint(uint64(a.Value(i)), 10)
	case *array.Uint64:
		return strconv.FormatUint(a.Value(i), 10)
	}
	return arr.ValueStr(i)
}

func labelString(arr arrow.Array, i int) string {
	switch a := arr.(type) {
	case *array.String:
		return a.Value(i)
	case *array.LargeString:
		return a.Value(i)
	case *array.StringView:
		return a.Value(i)
	}
	return arr.ValueStr(i)
}

type number interface {
	~int8 | ~int16 | ~int32 | ~int64 | ~uint8 | ~uint16 | ~uint32 | ~uint64 | ~float32 | ~float64
}

// fillColumn writes the values of arr into column f of the row-major x with
// d columns. It returns the 0-based row and a message for the first null or
// non-finite value (or, when bound is set, a value beyond maxMagnitude),
// or "" when all are good. Negative zeros are stored as +0. Decimals are
// converted through their exact decimal text, so 5.1 stored as DECIMAL
// gives the same float64 as "5.1" in a CSV file.
func fillColumn(arr arrow.Array, x []float64, d, f int, bound bool) (int, string) {
	if arr.NullN() > 0 {
		for i := 0; i < arr.Len(); i++ {
			if arr.IsNull(i) {
				return i, "missing value (null)"
			}
		}
	}
	switch a := arr.(type) {
	case *array.Float64:
		return fillFloat(a.Float64Values(), x, d, f, bound)
	case *array.Float32:
		return fillFloat(a.Float32Values(), x, d, f, bound)
	case *array.Decimal32:
		return fillDecimal(a.Len(), func(i int) string { return strconv.FormatInt(int64(a.Value(i)), 10) }, decimalScale(a), x, d, f, bound)
	case *array.Decimal64:
		return fillDecimal(a.Len(), func(i int) string { return strconv.FormatInt(int64(a.Value(i)), 10) }, decimalScale(a), x, d, f, bound)
	case *array.Decimal128:
		return fillDecimal(a.Len(), func(i int) string { return a.Value(i).BigInt().String() }, decimalScale(a), x, d, f, bound)
	case *array.Decimal256:
		return fillDecimal(a.Len(), func(i int) string { return a.Value(i).BigInt().String() }, decimalScale(a), x, d, f, bound)
	case *array.Float16:
		for i := 0; i < a.Len(); i++ {
			v := float64(a.Value(i).Float32())
			if msg := finite(v); msg != "" {
				return i, msg
			}
			x[i*d+f] = v
		}
		return 0, ""
	case *array.Int8:
		fillInt(a.Int8Values(), x, d, f)
	case *array.Int16:
		fillInt(a.Int16Values(), x, d, f)
	case *array.Int32:
		fillInt(a.Int32Values(), x, d, f)
	case *array.Int64:
		fillInt(a.Int64Values(), x, d, f)
	case *array.Uint8:
		fillInt(a.Uint8Values(), x, d, f)
	case *array.Uint16:
		fillInt(a.Uint16Values(), x, d, f)
	case *array.Uint32:
		fillInt(a.Uint32Values(), x, d, f)
	case *array.Uint64:
		fillInt(a.Uint64Values(), x, d, f)
	default:
		return 0, fmt.Sprintf("type %s is not numeric", arr.DataType())
	}
	return 0, ""
}

func fillInt[T number](v []T, x []float64, d, f int) {
	for i, u := range v {
		x[i*d+f] = float64(u)
	}
}

func fillFloat[T ~float32 | ~float64](v []T, x []float64, d, f int, bound bool) (int, string) {
	for i, u := range v {
		w := float64(u)
		if msg := finite(w); msg != "" {
			return i, msg
		}
		if bound && math.Abs(w) > maxMagnitude {
			return i, tooLarge(strconv.FormatFloat(w, 'g', -1, 64))
		}
		if w == 0 {
			w = 0 // -0 → +0
		}
		x[i*d+f] = w
	}
	return 0, ""
}

func decimalScale(a arrow.Array) int32 { return a.DataType().(arrow.DecimalType).GetScale() }

// fillDecimal converts n decimals of the given scale, whose unscaled
// integers unscaled(i) gives in decimal, by parsing "U e −scale": correctly
// rounded, as a CSV cell holding the same number would be, for any scale
// (negative ones included).
func fillDecimal(n int, unscaled func(int) string, scale int32, x []float64, d, f int, bound bool) (int, string) {
	for i := 0; i < n; i++ {
		s := unscaled(i) + "e" + strconv.Itoa(-int(scale))
		w, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsInf(w, 0) {
			return i, "decimal out of range for float64: " + quoteCell(s)
		}
		if bound && math.Abs(w) > maxMagnitude {
			return i, tooLarge(s)
		}
		if w == 0 {
			w = 0
		}
		x[i*d+f] = w
	}
	return 0, ""
}

func finite(v float64) string {
	if math.IsNaN(v) {
		return "NaN is not allowed"
	}
	if math.IsInf(v, 0) {
		return fmt.Sprintf("infinite value is not allowed (%g)", v)
	}
	return ""
}
