package dataset

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
)

// builder collects rows as they are read, whatever the file format.
type builder struct {
	file  string
	plan  *plan
	x     []float64
	ids   []string
	idRow map[string]int // id → row (as reported in errors) where it was first seen
	label []string
	uniq  map[string]string // label interning: few distinct labels, many rows
	n     int
	// standardize is set when the features will be z-scored, which lifts
	// the bound on their magnitude (maxMagnitude).
	standardize bool
}

func newBuilder(file string, p *plan, opt Options) *builder {
	b := &builder{file: file, plan: p, standardize: opt.Standardize}
	if p.id >= 0 {
		b.idRow = make(map[string]int)
	}
	if p.label >= 0 {
		b.uniq = make(map[string]string)
	}
	return b
}

// addID records the id of the current point, read at row in file column col
// (0-based). It copies id, which may share memory with a reused buffer.
func (b *builder) addID(id string, row, col int) error {
	id = strings.TrimSpace(id)
	if !utf8.ValidString(id) {
		return &InputError{File: b.file, Row: row, Column: col + 1, ColumnName: b.plan.names[col], Msg: notUTF8("id", id), keep: true}
	}
	if id == "" {
		return &InputError{File: b.file, Row: row, Column: col + 1, ColumnName: b.plan.names[col], Msg: "empty id"}
	}
	if first, dup := b.idRow[id]; dup {
		return &InputError{File: b.file, Row: row, Column: col + 1, ColumnName: b.plan.names[col],
			Msg: fmt.Sprintf("duplicate id %s (first on row %d)", quoteCell(id), first)}
	}
	id = strings.Clone(id)
	b.idRow[id] = row
	b.ids = append(b.ids, id)
	return nil
}

// addLabel records the label of the current point, read at row in file
// column col (0-based). Surrounding spaces are removed.
func (b *builder) addLabel(s string, row, col int) error {
	s = strings.TrimSpace(s)
	if !utf8.ValidString(s) {
		return &InputError{File: b.file, Row: row, Column: col + 1, ColumnName: b.plan.names[col], Msg: notUTF8("label", s), keep: true}
	}
	l, ok := b.uniq[s]
	if !ok {
		l = strings.Clone(s)
		if len(b.uniq) < 1<<16 {
			b.uniq[l] = l
		}
	}
	b.label = append(b.label, l)
	return nil
}

// notUTF8 words the error for text that is not valid UTF-8. plumb refuses
// it rather than guess the encoding: every string it writes to Parquet and
// JSON must be UTF-8, and replacing bytes would change ids and names.
func notUTF8(what, s string) string {
	return fmt.Sprintf("%s %s is not valid UTF-8; plumb reads text as UTF-8 (or UTF-16 with a byte order mark): convert the file, e.g. iconv -f latin1 -t utf-8 (if it is Latin-1)", what, quoteCell(s))
}

// reserve grows the row storage to the number of rows a file of size
// bytes is expected to hold, given that the rows so far took used bytes
// (plus 5%), so that appending does not copy the features repeatedly.
func (b *builder) reserve(size, used int64) {
	if used <= 0 || size <= used {
		return
	}
	estF := float64(b.n)*float64(size)/float64(used)*1.05 + 1
	d := len(b.plan.features)
	if estF*float64(max(d, 1)) > 1<<31 {
		return // implausible; let append decide
	}
	est := int(estF)
	b.x = slices.Grow(b.x, est*d-len(b.x))
	if b.plan.id >= 0 {
		b.ids = slices.Grow(b.ids, est-len(b.ids))
		m := make(map[string]int, est)
		for k, v := range b.idRow {
			m[k] = v
		}
		b.idRow = m
	}
	if b.plan.label >= 0 {
		b.label = slices.Grow(b.label, est-len(b.label))
	}
}

// dataset returns the rows read so far as a Dataset.
func (b *builder) dataset() *Dataset {
	p := b.plan
	ds := &Dataset{Source: b.file, N: b.n, D: len(p.features), X: b.x, IDs: b.ids}
	ds.Columns = make([]string, len(p.features))
	for k, j := range p.features {
		ds.Columns[k] = p.names[j]
	}
	if p.id < 0 {
		ds.IDs = make([]string, b.n)
		for i := range ds.IDs {
			ds.IDs[i] = strconv.Itoa(i)
		}
	}
	if p.label >= 0 {
		ds.Labels = b.label
	}
	return ds
}

// maxMagnitude is the largest feature value plumb takes (unless the
// features are standardised, which brings every column to z-scores):
// squared distances Σ_c (x_ic − x_jc)² must stay finite and leave room
// for sums over points and columns (≤ 4·D·n·1e200, far below the float64
// maximum of 1.8e308). minMagnitude is the smallest largest-|x| of a data
// set: below it the squared differences fall under the smallest normal
// float64 (2.2e-308) and distances become zero or lose their precision.
// Both are our own choice with a margin of 1e100 for the sums; no real
// measurement comes near either.
const (
	maxMagnitude = 1e100
	minMagnitude = 1e-100
)

// tooLarge is the message for a feature value beyond maxMagnitude.
func tooLarge(v string) string {
	return fmt.Sprintf("value %s is too large: plumb takes feature values up to 1e100 in magnitude, so that squared distances stay finite; rescale the column (or pass --standardize)", v)
}

// parseCell parses one feature cell, with a decimal comma when dc is set.
// It returns a message (empty on success) saying why the cell is not a
// finite number. Negative zero is returned as +0, so that "-0" and "0"
// give the same data and the same fingerprint.
func parseCell(s string, dc bool) (float64, string) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, "empty cell (missing value)"
	}
	if dc {
		if strings.Contains(t, ".") {
			return 0, "not a number with a decimal comma: " + quoteCell(s) + " (with --decimal-comma a point is not a decimal separator, and thousands separators are not read)"
		}
		t = strings.Replace(t, ",", ".", 1)
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) && math.IsInf(v, 0) {
			return 0, "number out of range for float64: " + quoteCell(s)
		}
		if !dc && isDecimalComma(t) {
			return 0, "not a number: " + quoteCell(s) + " (a decimal comma? pass --decimal-comma)"
		}
		return 0, "not a number: " + quoteCell(s)
	}
	if math.IsNaN(v) {
		return 0, "NaN is not allowed: " + quoteCell(s)
	}
	if math.IsInf(v, 0) {
		return 0, "infinite value is not allowed: " + quoteCell(s)
	}
	if v == 0 {
		v = 0 // -0 → +0
	}
	return v, ""
}

var bom = []byte{0xEF, 0xBB, 0xBF}

// recordReader is what readDelimited needs of encoding/csv's Reader;
// blankRecords has it too.
type recordReader interface {
	Read() ([]string, error)
	FieldPos(field int) (line, column int)
	InputOffset() int64
}

// readDelimited reads CSV (format "csv"), TSV ("tsv") or either ("txt":
// tab-separated when the first line holds a tab) from r, gunzipping it
// when gz is set or when it starts with the gzip magic bytes. size, if
// positive, is the number of bytes r will deliver; it is used to reserve
// memory for all rows once the first rows show their typical length.
//
// Before parsing it looks at the first 64 KiB of text: a UTF-8 byte order
// mark is dropped; UTF-16 with a byte order mark is decoded; UTF-16
// without one, binary data and data compressed twice are refused; a file
// whose lines end in CR alone has them read as line ends; a first line
// "sep=X" sets the delimiter (unless Options.Delimiter is given) and is
// skipped. When the read fails, those first lines are sniffed for
// another delimiter or decimal commas and, if they show one, the error
// names the dialect and the flags that read it.
func readDelimited(r io.Reader, file, format string, gz bool, opt Options, size int64) (*Dataset, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	if magic, _ := br.Peek(2); gz || bytes.Equal(magic, gzipMagic) {
		zr, err := gzip.NewReader(br)
		if err != nil {
			if errors.Is(err, io.EOF) {
				return nil, &InputError{File: file, Msg: "empty file (no header row)"}
			}
			return nil, &InputError{File: file, Msg: "not a valid gzip file: " + err.Error(), Err: err}
		}
		defer zr.Close()
		br = bufio.NewReaderSize(zr, 1<<16)
		if magic, _ := br.Peek(2); bytes.Equal(magic, gzipMagic) {
			return nil, &InputError{File: file, Msg: "the file is compressed twice (gzip inside gzip): decompress it once (gunzip) and read the result"}
		}
		size = 0
	}
	head, _ := br.Peek(64)
	switch kind := contentKind(head); kind {
	case kindParquet, kindArrow:
		return nil, &InputError{File: file, Msg: fmt.Sprintf("the compressed data is a %s file, not a text table: decompress it and read the result", kindName(kind))}
	case kindZip, kindOLE:
		return nil, &InputError{File: file, Msg: "the compressed data " + workbook(kind)}
	}
	var text io.Reader = br
	switch {
	case bytes.HasPrefix(head, bom):
		br.Discard(len(bom))
	case bytes.HasPrefix(head, utf16LEBOM), bytes.HasPrefix(head, utf16BEBOM):
		br.Discard(2)
		text = &utf16Reader{r: br, big: head[0] == 0xFE}
	case looksUTF16(head):
		return nil, &InputError{File: file, Msg: "this looks like UTF-16 text without a byte order mark: save it as UTF-8 (or as UTF-16 with a byte order mark)"}
	}
	lim := &rowLimiter{r: text, limit: maxRowBytes + 1<<16}
	tr := bufio.NewReaderSize(lim, 1<<16)
	peek, perr := tr.Peek(1 << 16)
	complete := perr != nil
	var src *bufio.Reader = tr
	if bytes.IndexByte(peek, '\n') < 0 && bytes.IndexByte(peek, '\r') >= 0 {
		// Lines end in CR alone (classic Mac OS): read each CR as a line end.
		src = bufio.NewReaderSize(crReader{tr}, 1<<16)
		peek, _ = src.Peek(1 << 16)
	}
	if i := bytes.IndexByte(peek, 0); i >= 0 {
		return nil, &InputError{File: file, Msg: fmt.Sprintf("binary data, not a text table (a NUL byte at byte %d of the text)", i+1), keep: true}
	}
	head = bytes.Clone(peek)

	d := dialect{comma: ',', decimalComma: opt.DecimalComma}
	switch format {
	case "tsv":
		d.comma = '\t'
	case "txt":
		first, _, _ := bytes.Cut(head, []byte("\n"))
		if bytes.IndexByte(first, '\t') >= 0 {
			d.comma = '\t'
		}
	}
	sep, hasSep := sepLine(head)
	if hasSep {
		d.comma = sep
	}
	if opt.Delimiter != "" {
		c, err := parseDelimiter(opt.Delimiter)
		if err != nil {
			return nil, &InputError{File: file, Msg: err.Error()}
		}
		d.comma = c
	}
	var rr recordReader
	if d.comma == ' ' {
		rr = &blankRecords{br: src}
	} else {
		cr := csv.NewReader(src)
		cr.Comma = d.comma
		cr.FieldsPerRecord = -1
		cr.ReuseRecord = true
		cr.LazyQuotes = d.comma == '\t'
		rr = cr
	}
	t := &textTable{file: file, rr: rr, lim: lim, d: d, opt: opt, size: size}
	ds, err := t.read(hasSep)
	if err != nil {
		var ie *InputError
		if errors.As(err, &ie) && !ie.keep {
			if g, ok := sniff(head, complete, d); ok {
				name, flags := g.describe()
				return nil, &InputError{File: file, Msg: fmt.Sprintf("this looks like a %s: pass %s", name, flags), Err: err}
			}
		}
		return nil, err
	}
	return ds, nil
}

// workbook is the message for a spreadsheet workbook given as a table.
func workbook(kind string) string {
	what := "is a ZIP archive (such as an Excel .xlsx or OpenDocument workbook)"
	if kind == kindOLE {
		what = "is an Excel 97-2003 workbook (.xls) or another OLE compound file"
	}
	return what + ", not a table plumb can read: save the sheet as CSV"
}

// textTable reads the records of a CSV/TSV file into a Dataset.
type textTable struct {
	file string
	rr   recordReader
	lim  *rowLimiter
	d    dialect
	opt  Options
	size int64
	last int   // line of the last record read
	plan *plan // the columns, once the header is read
}

// next reads one record.
func (t *textTable) next() ([]string, error) {
	rec, err := t.rr.Read()
	t.lim.reset()
	if err == nil {
		t.last, _ = t.rr.FieldPos(0)
		return rec, nil
	}
	if err == io.EOF {
		return nil, err
	}
	switch {
	case errors.Is(err, errLongRow):
		if t.last == 0 {
			return nil, &InputError{File: t.file, Msg: fmt.Sprintf("the first line is longer than %s: this is not a text table (no line breaks)", byteSize(maxRowBytes)), keep: true}
		}
		return nil, &InputError{File: t.file, Msg: fmt.Sprintf("the row after row %d is longer than %s: plumb reads rows up to that length (is a quote left open?)", t.last, byteSize(maxRowBytes)), keep: true}
	case errors.Is(err, errUTF16):
		return nil, &InputError{File: t.file, Msg: "not valid UTF-16 text: " + err.Error(), Err: err, keep: true}
	}
	return nil, csvError(t.file, err)
}

// blankOnly reports a record that is a line of spaces only.
func blankOnly(rec []string) bool { return len(rec) == 1 && strings.TrimSpace(rec[0]) == "" }

func (t *textTable) read(skipFirst bool) (*Dataset, error) {
	var rec []string
	var err error
	for {
		rec, err = t.next()
		if err == io.EOF {
			return nil, &InputError{File: t.file, Msg: "empty file (no header row)"}
		}
		if err != nil {
			return nil, err
		}
		if skipFirst {
			skipFirst = false
			continue // the "sep=X" line
		}
		if !blankOnly(rec) {
			break // skip lines of spaces only before the header
		}
	}
	headerRow := t.last
	width := len(rec)
	names := make([]string, width)
	var warnings []string
	if t.opt.NoHeader {
		for j := range names {
			names[j] = "col" + strconv.Itoa(j+1)
		}
		headerRow = 0
	} else {
		numeric := make([]bool, width)
		count := 0
		for j, s := range rec {
			names[j] = strings.TrimSpace(s)
			if !utf8.ValidString(names[j]) {
				return nil, &InputError{File: t.file, Row: headerRow, Column: j + 1, Msg: notUTF8("column name", names[j]), keep: true}
			}
			if _, msg := parseCell(s, t.d.decimalComma); msg == "" {
				numeric[j] = true
				count++
			}
		}
		// A header row whose names are numbers is probably the first data
		// row of a file without header (unless the names are 0, 1, 2, …,
		// as data-frame libraries name unnamed columns).
		looksLikeData := 2*count > width && !numbered(names)
		p, err := resolveColumns(t.file, names, headerRow, t.opt)
		if err != nil {
			var ie *InputError
			if looksLikeData && errors.As(err, &ie) {
				ie.Msg += "; the header row looks like data: if the file has no header row, pass --no-header (columns are then col1, col2, …)"
			}
			return nil, err
		}
		allFeatures := true
		for _, j := range p.features {
			allFeatures = allFeatures && numeric[j]
		}
		if looksLikeData && allFeatures {
			warnings = append(warnings, fmt.Sprintf("%s: the header row looks like data (%s are numbers): if the file has no header row, pass --no-header, or its first row is lost", oneLine(t.file), listNames(quoteAll(names))))
		}
		t.plan = p
	}
	p := t.plan
	if p == nil {
		var err error
		if p, err = resolveColumns(t.file, names, headerRow, t.opt); err != nil {
			return nil, err
		}
	}
	b := newBuilder(t.file, p, t.opt)
	if t.opt.NoHeader {
		if err := t.row(b, rec, names); err != nil {
			return nil, err
		}
	}
	for {
		rec, err = t.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if err := t.row(b, rec, names); err != nil {
			return nil, err
		}
	}
	if b.n == 0 {
		return nil, &InputError{File: t.file, Msg: "no data rows after the header"}
	}
	ds := b.dataset()
	ds.Warnings = warnings
	return ds, nil
}

// row adds one record as a point.
func (t *textTable) row(b *builder, rec, names []string) error {
	width := len(names)
	p := b.plan
	line := t.last
	if len(rec) != width {
		if blankOnly(rec) {
			return nil // a line of spaces only
		}
		if len(rec) < width {
			return &InputError{File: t.file, Row: line, Column: len(rec) + 1, ColumnName: names[len(rec)],
				Msg: fmt.Sprintf("missing field: the row has %d fields, the header %d", len(rec), width)}
		}
		return &InputError{File: t.file, Row: line, Column: width + 1,
			Msg: fmt.Sprintf("extra field: the row has %d fields, the header %d", len(rec), width)}
	}
	for _, j := range p.features {
		v, msg := parseCell(rec[j], t.d.decimalComma)
		if msg == "" && !b.standardize && math.Abs(v) > maxMagnitude {
			msg = tooLarge(quoteCell(rec[j]))
		}
		if msg != "" {
			row, _ := t.rr.FieldPos(j)
			return &InputError{File: t.file, Row: row, Column: j + 1, ColumnName: names[j], Msg: msg}
		}
		b.x = append(b.x, v)
	}
	if p.id >= 0 {
		row, _ := t.rr.FieldPos(p.id)
		if err := b.addID(rec[p.id], row, p.id); err != nil {
			return err
		}
	}
	if p.label >= 0 {
		row, _ := t.rr.FieldPos(p.label)
		if err := b.addLabel(rec[p.label], row, p.label); err != nil {
			return err
		}
	}
	b.n++
	if b.n == 256 && t.size > 0 {
		b.reserve(t.size, t.rr.InputOffset())
	}
	return nil
}

// numbered reports whether names are 0, 1, 2, … or 1, 2, 3, …: the
// column names that data-frame libraries write for unnamed columns, which
// are a real header.
func numbered(names []string) bool {
	for _, first := range []int{0, 1} {
		ok := true
		for j, n := range names {
			if n != strconv.Itoa(first+j) {
				ok = false
				break
			}
		}
		if ok {
			return true
		}
	}
	return false
}

// quoteAll quotes each name, for a list in a message.
func quoteAll(names []string) []string {
	q := make([]string, len(names))
	for i, n := range names {
		q[i] = quoteCell(n)
	}
	return q
}

// csvError turns an error from encoding/csv into an *InputError.
func csvError(file string, err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		msg := pe.Err.Error()
		if errors.Is(pe.Err, csv.ErrQuote) || errors.Is(pe.Err, csv.ErrBareQuote) {
			msg = fmt.Sprintf("%s (character %d of the line); a field holding quotes must be quoted and its quotes doubled", msg, pe.Column)
		}
		return &InputError{File: file, Row: pe.Line, Msg: msg, Err: err}
	}
	return &InputError{File: file, Msg: "read error: " + err.Error(), Err: err}
}
