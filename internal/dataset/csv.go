package dataset

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
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
}

func newBuilder(file string, p *plan) *builder {
	b := &builder{file: file, plan: p}
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

// addLabel records the label of the current point.
// Surrounding spaces are removed.
func (b *builder) addLabel(s string) {
	s = strings.TrimSpace(s)
	l, ok := b.uniq[s]
	if !ok {
		l = strings.Clone(s)
		if len(b.uniq) < 1<<16 {
			b.uniq[l] = l
		}
	}
	b.label = append(b.label, l)
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

// parseCell parses one feature cell. It returns a message (empty on
// success) saying why the cell is not a finite number.
func parseCell(s string) (float64, string) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, "empty cell (missing value)"
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) && math.IsInf(v, 0) {
			return 0, "number out of range for float64: " + quoteCell(s)
		}
		return 0, "not a number: " + quoteCell(s)
	}
	if math.IsNaN(v) {
		return 0, "NaN is not allowed: " + quoteCell(s)
	}
	if math.IsInf(v, 0) {
		return 0, "infinite value is not allowed: " + quoteCell(s)
	}
	return v, ""
}

var bom = []byte{0xEF, 0xBB, 0xBF}

// readDelimited reads CSV (format "csv"), TSV ("tsv") or either ("txt":
// tab-separated when the first line holds a tab) from r. size, if
// positive, is the number of bytes r will deliver; it is used to reserve
// memory for all rows once the first rows show their typical length.
func readDelimited(r io.Reader, file, format string, opt Options, size int64) (*Dataset, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	if head, _ := br.Peek(3); bytes.Equal(head, bom) {
		br.Discard(3)
	}
	comma := ','
	switch format {
	case "tsv":
		comma = '\t'
	case "txt":
		// Look at the first line only (up to the buffer size).
		head, _ := br.Peek(br.Size())
		if i := bytes.IndexByte(head, '\n'); i >= 0 {
			head = head[:i]
		}
		if bytes.IndexByte(head, '\t') >= 0 {
			comma = '\t'
		}
	}
	cr := csv.NewReader(br)
	cr.Comma = comma
	cr.FieldsPerRecord = -1
	cr.ReuseRecord = true
	cr.LazyQuotes = comma == '\t'

	var rec []string
	var err error
	for {
		rec, err = cr.Read()
		if err == io.EOF {
			return nil, &InputError{File: file, Msg: "empty file (no header row)"}
		}
		if err != nil {
			return nil, csvError(file, err)
		}
		if len(rec) != 1 || strings.TrimSpace(rec[0]) != "" {
			break // skip lines of spaces only before the header
		}
	}
	headerRow, _ := cr.FieldPos(0)
	names := make([]string, len(rec))
	for j, s := range rec {
		names[j] = strings.TrimSpace(s)
	}
	p, err := resolveColumns(file, names, headerRow, opt)
	if err != nil {
		return nil, err
	}
	b := newBuilder(file, p)
	width := len(names)
	for {
		rec, err = cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvError(file, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) != width {
			if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
				continue // a line of spaces only
			}
			if len(rec) < width {
				return nil, &InputError{File: file, Row: line, Column: len(rec) + 1, ColumnName: names[len(rec)],
					Msg: fmt.Sprintf("missing field: the row has %d fields, the header %d", len(rec), width)}
			}
			return nil, &InputError{File: file, Row: line, Column: width + 1,
				Msg: fmt.Sprintf("extra field: the row has %d fields, the header %d", len(rec), width)}
		}
		for _, j := range p.features {
			v, msg := parseCell(rec[j])
			if msg != "" {
				row, _ := cr.FieldPos(j)
				return nil, &InputError{File: file, Row: row, Column: j + 1, ColumnName: names[j], Msg: msg}
			}
			b.x = append(b.x, v)
		}
		if p.id >= 0 {
			row, _ := cr.FieldPos(p.id)
			if err := b.addID(rec[p.id], row, p.id); err != nil {
				return nil, err
			}
		}
		if p.label >= 0 {
			b.addLabel(rec[p.label])
		}
		b.n++
		if b.n == 256 && size > 0 {
			b.reserve(size, cr.InputOffset())
		}
	}
	if b.n == 0 {
		return nil, &InputError{File: file, Msg: "no data rows after the header"}
	}
	return b.dataset(), nil
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
