package dataset

import (
	"strconv"
	"strings"
)

// InputError describes a problem with an input file, located as precisely
// as the problem allows. Its Error method gives one line:
//
//	FILE: row R, column C (NAME): MSG
//
// with the row and column parts left out when unknown (zero). For CSV and
// TSV, Row is the 1-based line number in the file (the header is line 1);
// for Parquet and Arrow it is the 1-based data row. Column is the 1-based
// position of the column in the file.
type InputError struct {
	File       string
	Row        int // 0 = unknown or not tied to a row
	Column     int // 0 = unknown or not tied to a column
	ColumnName string
	Msg        string
	// Err is the underlying error, if any (for errors.Is / errors.As).
	Err error
	// keep marks errors that say what is wrong whatever the dialect
	// (encoding, row length), so the dialect sniffer leaves them alone.
	keep bool
}

// Error returns the one-line message.
func (e *InputError) Error() string {
	var b strings.Builder
	b.WriteString(oneLine(e.File))
	sep := ": "
	if e.Row > 0 {
		b.WriteString(sep)
		b.WriteString("row ")
		b.WriteString(strconv.Itoa(e.Row))
		sep = ", "
	}
	if e.Column > 0 {
		b.WriteString(sep)
		b.WriteString("column ")
		b.WriteString(strconv.Itoa(e.Column))
		if e.ColumnName != "" {
			b.WriteString(" (")
			b.WriteString(oneLine(e.ColumnName))
			b.WriteString(")")
		}
	} else if e.ColumnName != "" {
		b.WriteString(sep)
		b.WriteString("column ")
		b.WriteString(strconv.Quote(e.ColumnName))
	}
	b.WriteString(": ")
	b.WriteString(oneLine(e.Msg))
	return b.String()
}

// Unwrap returns the underlying error.
func (e *InputError) Unwrap() error { return e.Err }

// oneLine returns s with line breaks and other control characters escaped,
// so that messages stay on one line.
func oneLine(s string) string {
	if !strings.ContainsFunc(s, isControl) {
		return s
	}
	q := strconv.Quote(s)
	return q[1 : len(q)-1]
}

func isControl(r rune) bool { return r < 0x20 || r == 0x7f || r == 0x2028 || r == 0x2029 || r == 0x85 }

// quoteCell quotes a cell for an error message, shortening long cells.
func quoteCell(s string) string {
	const max = 40
	if len(s) > max {
		cut := max
		for cut > 0 && !isRuneStart(s[cut]) {
			cut--
		}
		return strconv.Quote(s[:cut]) + "…"
	}
	return strconv.Quote(s)
}

func isRuneStart(b byte) bool { return b&0xC0 != 0x80 }
