package dataset

// Tests of issues 19 and 21 on the reader side: dialects other programs
// write, encodings, bounded reads, non-regular files, the magnitude limit,
// negative zero and the fingerprints that must not change. The dialect
// fixtures are made by testdata/inputs/make_dialects.py from good.csv.

import (
	"bytes"
	"compress/gzip"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"syscall"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/decimal128"
	"github.com/apache/arrow-go/v18/arrow/decimal256"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// TestFingerprintsUnchanged pins the fingerprints of valid inputs as the
// reader computed them before the dialect, encoding and magnitude changes
// (commit 9f59539, printed by a throw-away program calling Read): studies
// store them, and a study made before must still resume.
func TestFingerprintsUnchanged(t *testing.T) {
	cases := []struct {
		file string
		opt  Options
		want string
	}{
		{"../iris.csv", Options{IDColumn: "id", LabelColumn: "species"}, "685699f35abec47db65ea5e21d4d25b58f766c1d56bdcfebd256b795422426c4"},
		{"../iris.csv", Options{IDColumn: "id", LabelColumn: "species", Standardize: true}, "0759aeedd7360b33e425008e5c4c372ce675788d631071cf66e1ea16af4061d7"},
		{"../iris.csv", Options{IDColumn: "id", LabelColumn: "species", Standardize: true, PCA: 2}, "ca21178c8d52fb3afdd6b9d8af325771da0694985feb5a056800bfe84d59fcb6"},
		{"../digits.csv", Options{IDColumn: "id", LabelColumn: "digit"}, "697234d31311a9a3624caa372eae74c48841421b03d00f88597bb432c1a60130"},
		{"../digits.csv", Options{IDColumn: "id", LabelColumn: "digit", Standardize: true, PCA: 10}, "481d685365eb3179cac99a58862538e1b1911fe01bfbadad1469a210a332478f"},
		{"good.csv", goodOpt, "b349911e001cc3a6810048da8e8a11f023c6d11c8cc0995c9196be99e252c5a1"},
		{"good.parquet", Options{IDColumn: "id", LabelColumn: "group", Standardize: true}, "fa7b3ee0600b8b73e83ef3b35e393a8590d8d18618647237f5d7ffac8867f58d"},
		{"good.arrow", Options{IDColumn: "id", LabelColumn: "group", PCA: 2}, "a4079794da86fbee04d79fed2a5810e54635cff1105762efe6e9fbc36e921706"},
		{"constant_column.csv", Options{IDColumn: "id", LabelColumn: "group", Standardize: true}, "9c611216c76dbf6d38f2c2634bcadb72cb768b5fc8d36d574e6b83a0728780e5"},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			ds, err := Read(in(c.file), c.opt)
			if err != nil {
				t.Fatal(err)
			}
			if ds.Fingerprint != c.want {
				t.Errorf("got fingerprint %s, want %s", ds.Fingerprint, c.want)
			}
		})
	}
}

// TestReadDialects: each dialect fixture reads, with the options named,
// to good.csv's data set and fingerprint.
func TestReadDialects(t *testing.T) {
	ref, err := Read(in("good.csv"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	with := func(f func(*Options)) Options { o := goodOpt; f(&o); return o }
	cases := []struct {
		file string
		opt  Options
		warn string // a warning line that must be given, if any
	}{
		{"dialect_semicolon.csv", with(func(o *Options) { o.Delimiter = ";" }), ""},
		{"dialect_semicolon.csv", with(func(o *Options) { o.Delimiter = "semicolon" }), ""},
		{"dialect_semicolon_decimal_comma.csv", with(func(o *Options) { o.Delimiter = ";"; o.DecimalComma = true }), ""},
		{"dialect_sep_line.csv", goodOpt, ""},
		{"dialect_utf16le_bom.csv", goodOpt, ""},
		{"dialect_utf16be_bom.csv", goodOpt, ""},
		{"dialect_cr_only.csv", goodOpt, ""},
		{"dialect_spaces.txt", with(func(o *Options) { o.Delimiter = "space" }), ""},
		{"dialect_spaces.txt", with(func(o *Options) { o.Delimiter = " " }), ""},
		{"dialect_gzip_no_ext.csv", goodOpt, ""},
		{"dialect_negative_zero.csv", goodOpt, ""},
		{"good.tsv", with(func(o *Options) { o.Delimiter = "tab"; o.Format = "csv" }), ""},
	}
	for _, c := range cases {
		t.Run(c.file+" "+c.opt.Delimiter, func(t *testing.T) {
			ds, err := Read(in(c.file), c.opt)
			if err != nil {
				t.Fatal(err)
			}
			checkGood(t, ds)
			if ds.Fingerprint != ref.Fingerprint {
				t.Errorf("fingerprint %s, want %s (as good.csv)", ds.Fingerprint, ref.Fingerprint)
			}
			if len(ds.Warnings) != 0 {
				t.Errorf("warnings %q, want none", ds.Warnings)
			}
		})
	}
}

// TestReadMisnamed: the first bytes decide the format; the warning names
// the real format and the name (our choice: read the file, and say so).
func TestReadMisnamed(t *testing.T) {
	dir := t.TempDir()
	cp := func(src, dst string) string {
		b, err := os.ReadFile(in(src))
		if err != nil {
			t.Fatal(err)
		}
		p := filepath.Join(dir, dst)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	cases := []struct {
		src, dst string
		format   string
		warn     string // after the path and a space
	}{
		{"good.parquet", "good.csv", "", "is a Parquet file but is named .csv; read as Parquet"},
		{"good.parquet", "good.arrow", "", "is a Parquet file but is named .arrow; read as Parquet"},
		{"good.arrow", "good.parquet", "", "is an Arrow IPC file but is named .parquet; read as Arrow IPC"},
		{"good.arrows", "good2.parquet", "", "is an Arrow IPC file but is named .parquet; read as Arrow IPC"},
		{"good.csv", "text.parquet", "", "is a text file but is named .parquet; read as a text table (CSV, or TSV if its first line has a tab)"},
		{"good.tsv", "text.arrow", "", "is a text file but is named .arrow; read as a text table (CSV, or TSV if its first line has a tab)"},
		{"good.parquet", "data.bin", "csv", "is a Parquet file but is given as --format csv; read as Parquet"},
	}
	for _, c := range cases {
		t.Run(c.dst, func(t *testing.T) {
			p := cp(c.src, c.dst)
			opt := goodOpt
			opt.Format = c.format
			ds, err := Read(p, opt)
			if err != nil {
				t.Fatal(err)
			}
			checkGood(t, ds)
			if want := p + " " + c.warn; len(ds.Warnings) != 1 || ds.Warnings[0] != want {
				t.Errorf("got warnings %q, want [%q]", ds.Warnings, want)
			}
		})
	}
}

// TestReadDialectErrors: files that are not what their name says, or in
// a dialect not asked for, get one line that names what they are.
func TestReadDialectErrors(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, b []byte) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte("id,group,a\n"))
	zw.Close()
	good, _ := os.ReadFile(in("good.csv"))
	cases := []struct {
		name string
		path string
		opt  Options
		want string // the whole message after "PATH: "
	}{
		{"semicolon without --delimiter", in("dialect_semicolon.csv"), goodOpt,
			"this looks like a semicolon-separated file: pass --delimiter ';'"},
		{"semicolon and decimal comma without flags", in("dialect_semicolon_decimal_comma.csv"), goodOpt,
			"this looks like a semicolon-separated file with decimal commas: pass --delimiter ';' --decimal-comma"},
		{"decimal comma without --decimal-comma", in("dialect_semicolon_decimal_comma.csv"), Options{IDColumn: "id", LabelColumn: "group", Delimiter: ";"},
			"this looks like a semicolon-separated file with decimal commas: pass --delimiter ';' --decimal-comma"},
		{"decimal comma on a file with points", in("dialect_semicolon.csv"), Options{IDColumn: "id", LabelColumn: "group", Delimiter: ";", DecimalComma: true},
			`row 2, column 3 (a): not a number with a decimal comma: "1.5" (with --decimal-comma a point is not a decimal separator, and thousands separators are not read)`},
		{"space-separated .txt", in("dialect_spaces.txt"), goodOpt,
			"this looks like a space-separated file: pass --delimiter space"},
		{"tab-separated named .csv", write("tabs.csv", bytes.ReplaceAll(good, []byte(","), []byte("\t"))), goodOpt,
			"this looks like a tab-separated file: pass --delimiter tab"},
		{"UTF-16 without byte order mark", in("dialect_utf16_no_bom.csv"), goodOpt,
			"this looks like UTF-16 text without a byte order mark: save it as UTF-8 (or as UTF-16 with a byte order mark)"},
		{"unpaired surrogate", write("surrogate.csv", []byte{0xFF, 0xFE, 'a', 0, '\n', 0, 0x00, 0xD8, 'b', 0}), Options{},
			"not valid UTF-16 text: invalid UTF-16: unpaired surrogate at byte 8"},
		{"compressed twice", in("dialect_double.csv.gz"), goodOpt,
			"the file is compressed twice (gzip inside gzip): decompress it once (gunzip) and read the result"},
		{"gzip named .parquet", write("z.parquet", gz.Bytes()), goodOpt,
			"is gzip-compressed data but is named .parquet: decompress it, or name it .csv.gz or .tsv.gz if it is a compressed text table"},
		{"xlsx named .csv", write("book.csv", []byte("PK\x03\x04\x14\x00\x00\x00")), goodOpt,
			"is a ZIP archive (such as an Excel .xlsx or OpenDocument workbook), not a table plumb can read: save the sheet as CSV"},
		{"xls named .csv", write("book2.csv", []byte{0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1, 0, 0}), goodOpt,
			"is an Excel 97-2003 workbook (.xls) or another OLE compound file, not a table plumb can read: save the sheet as CSV"},
		{"binary named .csv", write("bin.csv", []byte("id,group,a\np1,x,\x00\x01\x02\n")), goodOpt,
			"binary data, not a text table (a NUL byte at byte 17 of the text)"},
		{"Latin-1 id", in("dialect_latin1_id.csv"), goodOpt,
			`row 3, column 1 (id): id "caf\xe9" is not valid UTF-8; plumb reads text as UTF-8 (or UTF-16 with a byte order mark): convert the file, e.g. iconv -f latin1 -t utf-8 (if it is Latin-1)`},
		{"Latin-1 label", write("label.csv", []byte("id,group,a\np1,caf\xe9,1\np2,x,2\n")), Options{IDColumn: "id", LabelColumn: "group"},
			`row 2, column 2 (group): label "caf\xe9" is not valid UTF-8; plumb reads text as UTF-8 (or UTF-16 with a byte order mark): convert the file, e.g. iconv -f latin1 -t utf-8 (if it is Latin-1)`},
		{"Latin-1 column name", in("dialect_latin1_header.csv"), goodOpt,
			`row 1, column 5: column name "\xe9t\xe9" is not valid UTF-8; plumb reads text as UTF-8 (or UTF-16 with a byte order mark): convert the file, e.g. iconv -f latin1 -t utf-8 (if it is Latin-1)`},
		{"column option not UTF-8", in("good.csv"), Options{IDColumn: "id", LabelColumn: "group", Columns: []string{"a\xff"}},
			`the column name "a\xff" asked for is not valid UTF-8`},
		{"headerless file, id column asked for", in("dialect_headerless.csv"), goodOpt,
			`unknown id column "id"; the columns are: p1, x, 1.5, 2, -0.25; the header row looks like data: if the file has no header row, pass --no-header (columns are then col1, col2, …)`},
		{"value beyond 1e100", write("big.csv", []byte("a,b\n1,2\n1e200,3\n")), Options{},
			`row 3, column 1 (a): value "1e200" is too large: plumb takes feature values up to 1e100 in magnitude, so that squared distances stay finite; rescale the column (or pass --standardize)`},
		{"values below 1e-100", write("tiny.csv", []byte("a,b\n1e-200,2e-200\n3e-200,-1e-200\n")), Options{},
			`every feature value is smaller than 1e-100 in magnitude (the largest is 3e-200): squared distances would underflow to zero; rescale the data (or pass --standardize)`},
		{"bad delimiter option", in("good.csv"), Options{Delimiter: "ab"},
			`delimiter "ab": want one character (not a digit, sign, point or quote) or tab, space, comma, semicolon, pipe`},
		{"text options on Parquet", in("good.parquet"), Options{NoHeader: true},
			"is a Parquet file: no-header, delimiter and decimal-comma apply to CSV/TSV files only"},
		{"a directory", dir, Options{Format: "csv"}, "is a directory, not a file"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ds, err := Read(c.path, c.opt)
			if err == nil {
				t.Fatalf("got a %d×%d data set, want error %q", ds.N, ds.D, c.want)
			}
			var ie *InputError
			if !errors.As(err, &ie) {
				t.Fatalf("got %T %v, want *InputError", err, err)
			}
			if got, want := err.Error(), c.path+": "+c.want; got != want {
				t.Errorf("got  %s\nwant %s", got, want)
			}
		})
	}
}

// TestReadNotRegular: a FIFO and a character device are refused at once,
// without blocking on the FIFO (no writer ever opens it) or reading
// /dev/zero forever. Our choice: refuse anything but a regular file, as a
// study's input is read again by later commands.
func TestReadNotRegular(t *testing.T) {
	fifo := filepath.Join(t.TempDir(), "fifo.csv")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no FIFOs here: %v", err)
	}
	for _, c := range []struct{ path, want string }{
		{fifo, "is not a regular file (a FIFO): plumb reads only regular files, which it can read again later (save the data to a file first)"},
		{"/dev/zero", "is not a regular file (a character device): plumb reads only regular files, which it can read again later (save the data to a file first)"},
	} {
		if _, err := os.Stat(c.path); err != nil {
			t.Skipf("%s: %v", c.path, err)
		}
		_, err := Read(c.path, Options{Format: "csv"})
		if err == nil || err.Error() != c.path+": "+c.want {
			t.Errorf("got %v, want %s: %s", err, c.path, c.want)
		}
		_, err = ReadRegular(c.path, 1<<20)
		if err == nil || err.Error() != c.path+": "+c.want {
			t.Errorf("ReadRegular: got %v, want %s: %s", err, c.path, c.want)
		}
	}
}

// TestReadRegularLimit: a file one byte over the limit is refused, one at
// the limit is read whole.
func TestReadRegularLimit(t *testing.T) {
	p := filepath.Join(t.TempDir(), "plan.json")
	os.WriteFile(p, bytes.Repeat([]byte(" "), 1024), 0o644)
	if b, err := ReadRegular(p, 1024); err != nil || len(b) != 1024 {
		t.Errorf("at the limit: got %d bytes, %v; want 1024, nil", len(b), err)
	}
	_, err := ReadRegular(p, 1023)
	if want := p + ": larger than 1023 bytes: too large for this kind of file"; err == nil || err.Error() != want {
		t.Errorf("over the limit: got %v, want %s", err, want)
	}
}

// TestLongRows: a row longer than maxRowBytes is refused with a message
// naming where, without reading the rest of the file (the limit is lowered
// here so the test stays small).
func TestLongRows(t *testing.T) {
	defer func(v int64) { maxRowBytes = v }(maxRowBytes)
	maxRowBytes = 1 << 10
	long := bytes.Repeat([]byte("7"), 400<<10) // 400 KiB, no line break
	cases := []struct {
		name string
		data []byte
		want string
	}{
		{"no line break", long, "fuzz.csv: the first line is longer than 1 KiB: this is not a text table (no line breaks)"},
		{"long third row", append([]byte("a,b\n1,2\n"), long...), "fuzz.csv: the row after row 2 is longer than 1 KiB: plumb reads rows up to that length (is a quote left open?)"},
		{"open quote", append([]byte("a,b\n1,\"2\n"), bytes.Repeat([]byte("3\n"), 200<<10)...), "fuzz.csv: the row after row 1 is longer than 1 KiB: plumb reads rows up to that length (is a quote left open?)"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := readDelimited(bytes.NewReader(c.data), "fuzz.csv", "csv", false, Options{}, int64(len(c.data)))
			if err == nil || err.Error() != c.want {
				t.Errorf("got %v\nwant %s", err, c.want)
			}
		})
	}
	// A file of normal rows longer in total than the limit reads.
	var b bytes.Buffer
	b.WriteString("a,b\n")
	for i := 0; i < 1000; i++ {
		b.WriteString("1,2\n3,4\n")
	}
	ds, err := readDelimited(bytes.NewReader(b.Bytes()), "fuzz.csv", "csv", false, Options{}, int64(b.Len()))
	if err != nil || ds.N != 2000 {
		t.Errorf("8 KiB of short rows: got %v, want 2000 points", err)
	}
}

// TestHeaderLooksLikeData: a file whose header row is numbers gets a
// warning naming --no-header; with NoHeader its first row is a point and
// the columns are col1, col2, …; numbered column names (0, 1, 2, … as
// data-frame libraries write them) are a real header and give no warning.
func TestHeaderLooksLikeData(t *testing.T) {
	file := in("dialect_headerless.csv")
	ds, err := Read(file, Options{Columns: []string{"1.5", "2", "-0.25"}})
	if err != nil {
		t.Fatal(err)
	}
	want := file + `: the header row looks like data ("p1", "x", "1.5", "2", "-0.25" are numbers): if the file has no header row, pass --no-header, or its first row is lost`
	if ds.N != 3 || len(ds.Warnings) != 1 || ds.Warnings[0] != want {
		t.Errorf("got N=%d warnings %q, want N=3 and [%q]", ds.N, ds.Warnings, want)
	}
	ds, err = Read(file, Options{NoHeader: true, IDColumn: "col1", LabelColumn: "col2"})
	if err != nil {
		t.Fatal(err)
	}
	if ds.N != 4 || !reflect.DeepEqual(ds.Columns, []string{"col3", "col4", "col5"}) || !reflect.DeepEqual(ds.X, goodTable.x) || !reflect.DeepEqual(ds.IDs, goodTable.ids) || len(ds.Warnings) != 0 {
		t.Errorf("--no-header: got N=%d columns %q X %v ids %q warnings %q", ds.N, ds.Columns, ds.X, ds.IDs, ds.Warnings)
	}
	p := filepath.Join(t.TempDir(), "numbered.csv")
	os.WriteFile(p, []byte("0,1,2\n1.5,2,3\n4,5,6.5\n"), 0o644)
	if ds, err := Read(p, Options{}); err != nil || len(ds.Warnings) != 0 {
		t.Errorf("numbered header: got %v, warnings %q; want no warning", err, ds.Warnings)
	}
}

// TestNegativeZero: -0 and 0 are the same data (IEEE 754 says -0 == +0),
// so they give the same fingerprint whatever the format.
func TestNegativeZero(t *testing.T) {
	a, err := Read(in("good.csv"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Read(in("dialect_negative_zero.csv"), goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	if a.Fingerprint != b.Fingerprint || math.Signbit(b.X[2*3+1]) {
		t.Errorf("fingerprints %s, %s (want equal); stored %v", a.Fingerprint, b.Fingerprint, b.X[2*3+1])
	}
	x := []float64{math.Copysign(0, -1)}
	if fillFloat(x, x, 1, 0, true); math.Signbit(x[0]) {
		t.Errorf("Parquet/Arrow float -0 kept its sign")
	}
}

// TestStandardizeExtreme: z-scores do not depend on the unit, so a column
// multiplied by 1e300 or by 1e-300 (both beyond what squares of float64
// hold) standardises to the z-scores of the column itself, within
// rounding (1e-12 relative, common practice for double-precision sums of
// a few terms).
func TestStandardizeExtreme(t *testing.T) {
	base := []float64{5.1, 4.9, 4.7, 4.6, 5.0, 7.0, 6.4, 6.9} // iris sepal lengths, rows 1-5, 51-53
	want := append([]float64{}, base...)
	Standardize(want, len(want), 1)
	for _, scale := range []float64{1e300, 1e-300, -1e250} {
		got := make([]float64, len(base))
		for i, v := range base {
			got[i] = v * scale
		}
		Standardize(got, len(got), 1)
		sign := 1.0
		if scale < 0 {
			sign = -1
		}
		for i := range got {
			if math.Abs(got[i]-sign*want[i]) > 1e-12*math.Abs(want[i])+1e-15 {
				t.Errorf("scale %g: z[%d] = %v, want %v", scale, i, got[i], sign*want[i])
			}
		}
	}
	// The normal path is untouched: the same bits as Standardize gave at
	// commit 9f59539 (printed with %#v by a throw-away program).
	before := []float64{-0.5008679055308161, -0.7117596552280012, -0.9226514049251873, -1.0280972797737808, -0.6063137803794086, 1.5026037165924502, 0.8699284675008928, 1.3971578417438575}
	if !reflect.DeepEqual(want, before) {
		t.Errorf("z-scores %v changed from %v", want, before)
	}
}

// decimalParquet writes good.csv's table with DECIMAL feature columns: a
// as DECIMAL(6,3), b as DECIMAL(4,0) in 128 bits and c as DECIMAL(5,2) in
// 256 bits.
func decimalParquet(t testing.TB) []byte {
	mem := memory.NewGoAllocator()
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "id", Type: arrow.BinaryTypes.String},
		{Name: "group", Type: arrow.BinaryTypes.String},
		{Name: "a", Type: &arrow.Decimal128Type{Precision: 6, Scale: 3}},
		{Name: "b", Type: &arrow.Decimal128Type{Precision: 4, Scale: 0}},
		{Name: "c", Type: &arrow.Decimal256Type{Precision: 40, Scale: 2}},
	}, nil)
	rb := array.NewRecordBuilder(mem, sc)
	defer rb.Release()
	rb.Field(0).(*array.StringBuilder).AppendValues(goodTable.ids, nil)
	rb.Field(1).(*array.StringBuilder).AppendValues(goodTable.labels, nil)
	for _, v := range []int64{1500, 3000, -1, 7250} {
		rb.Field(2).(*array.Decimal128Builder).Append(decimal128.FromI64(v))
	}
	for _, v := range []int64{2, 4, 0, 10} {
		rb.Field(3).(*array.Decimal128Builder).Append(decimal128.FromI64(v))
	}
	for _, v := range []int64{-25, 50, 200, 100} {
		rb.Field(4).(*array.Decimal256Builder).Append(decimal256.FromI64(v))
	}
	rec := rb.NewRecordBatch()
	defer rec.Release()
	return parquetBytes(t, rec)
}

// parquetBytes writes rec as a Parquet file in memory, two rows per row
// group.
func parquetBytes(t testing.TB, rec arrow.RecordBatch) []byte {
	tbl := array.NewTableFromRecords(rec.Schema(), []arrow.RecordBatch{rec})
	defer tbl.Release()
	var buf bytes.Buffer
	if err := pqarrow.WriteTable(tbl, &buf, 2, parquet.NewWriterProperties(), pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// TestReadColumnarNotUTF8: Parquet strings are not checked by the format,
// so ids, labels and column names that are not UTF-8 are refused by the
// reader with their row and column, as in CSV files.
func TestReadColumnarNotUTF8(t *testing.T) {
	const convert = "is not valid UTF-8; plumb reads text as UTF-8 (or UTF-16 with a byte order mark): convert the file, e.g. iconv -f latin1 -t utf-8 (if it is Latin-1)"
	cases := []struct {
		name        string
		ids, labels []string
		featureName string
		want        string
	}{
		{"id", []string{"p1", "caf\xe9"}, []string{"x", "y"}, "a", `row 2, column 1 (id): id "caf\xe9" ` + convert},
		{"label", []string{"p1", "p2"}, []string{"s\xe9", "y"}, "a", `row 1, column 2 (group): label "s\xe9" ` + convert},
		{"column name", []string{"p1", "p2"}, []string{"x", "y"}, "\xe9t\xe9", `column 3: column name "\xe9t\xe9" ` + convert},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rec := record([]fixCol{
				{"id", strs(c.ids...), arrow.BinaryTypes.String},
				{"group", strs(c.labels...), arrow.BinaryTypes.String},
				{c.featureName, f64s([]float64{1, 2}), arrow.PrimitiveTypes.Float64},
			})
			defer rec.Release()
			data := parquetBytes(t, rec)
			_, err := readColumnar(bytes.NewReader(data), int64(len(data)), "s.parquet", "parquet", Options{IDColumn: "id", LabelColumn: "group"})
			if err == nil || err.Error() != "s.parquet: "+c.want {
				t.Errorf("got %v\nwant s.parquet: %s", err, c.want)
			}
		})
	}
}

// TestReadDecimal: DECIMAL columns are numbers, converted through their
// decimal text, so they equal the CSV reading bit for bit (1500 at scale
// 3 is 1.5; -1 at scale 3 is -1e-3).
func TestReadDecimal(t *testing.T) {
	data := decimalParquet(t)
	ds, err := readColumnar(bytes.NewReader(data), int64(len(data)), "dec.parquet", "parquet", goodOpt)
	if err != nil {
		t.Fatal(err)
	}
	checkGood(t, ds)
	// The unscaled integers as the Decimal32/64 cases give them, and scales beyond what
	// arrow-go's own text conversion takes (it panics below -38).
	x := make([]float64, 2)
	if _, msg := fillDecimal(2, func(i int) string { return strconv.Itoa([]int{51, -25}[i]) }, 1, x, 1, 0, true); msg != "" || !reflect.DeepEqual(x, []float64{5.1, -2.5}) {
		t.Errorf("scale 1: got %v %q, want [5.1 -2.5]", x, msg)
	}
	if _, msg := fillDecimal(1, func(int) string { return "7" }, -60, x, 1, 0, true); msg != "" || x[0] != 7e60 {
		t.Errorf("scale -60: got %v %q, want 7e60", x[0], msg)
	}
	if i, msg := fillDecimal(2, func(int) string { return "1" }, -200, x, 1, 0, true); i != 0 || msg != tooLarge("1e200") {
		t.Errorf("1e200 as a decimal: got row %d %q, want a refusal on row 0", i, msg)
	}
}

// TestDialectSniff: the sniffer does not guess for files the current
// dialect reads consistently, so their errors keep their own message.
func TestDialectSniff(t *testing.T) {
	cases := []struct {
		head string
		cur  dialect
		want dialect
		ok   bool
	}{
		{"a,b\n1,x\n2,3\n", dialect{comma: ','}, dialect{}, false},
		{"a;b\n1;2\n", dialect{comma: ','}, dialect{comma: ';'}, true},
		{"a;b\n1,5;2\n", dialect{comma: ','}, dialect{comma: ';', decimalComma: true}, true},
		{"a;b\n1,5;2\n", dialect{comma: ';'}, dialect{comma: ';', decimalComma: true}, true},
		{"a;b\n1,5;2\n", dialect{comma: ';', decimalComma: true}, dialect{}, false},
		{"a b  c\n1 2  3\n", dialect{comma: ','}, dialect{comma: ' '}, true},
		{"a|b\n1|2\n", dialect{comma: ','}, dialect{comma: '|'}, true},
		{"a\n1\n", dialect{comma: ','}, dialect{}, false},
		{`"x;y",b` + "\n" + `"1;2",3` + "\n", dialect{comma: ','}, dialect{}, false},
	}
	for _, c := range cases {
		got, ok := sniff([]byte(c.head), true, c.cur)
		if ok != c.ok || got != c.want {
			t.Errorf("sniff(%q, %q): got %+v %v, want %+v %v", c.head, c.cur.comma, got, ok, c.want, c.ok)
		}
	}
	if !strings.Contains(func() string { _, f := (dialect{comma: '\t'}).describe(); return f }(), "tab") {
		t.Errorf("tab dialect flags do not name tab")
	}
}
