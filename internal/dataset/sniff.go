package dataset

import (
	"bytes"
	"fmt"
	"strings"
	"unicode/utf8"
)

// Content kinds told apart by a file's first bytes (contentKind).
const (
	kindText    = "text"
	kindParquet = "parquet"
	kindArrow   = "arrow"
	kindGzip    = "gzip"
	kindZip     = "zip"
	kindOLE     = "ole"
	kindBinary  = "binary"
)

var (
	parquetMagic     = []byte("PAR1")
	arrowStreamMagic = []byte{0xFF, 0xFF, 0xFF, 0xFF}
	gzipMagic        = []byte{0x1F, 0x8B}
	zipMagic         = []byte("PK\x03\x04")
	oleMagic         = []byte{0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1}
	utf16LEBOM       = []byte{0xFF, 0xFE}
	utf16BEBOM       = []byte{0xFE, 0xFF}
)

// contentKind names what the first bytes of a file say it is: a Parquet
// file (magic "PAR1"), an Arrow IPC file ("ARROW1", or Feather v1 "FEA1")
// or stream (continuation marker 0xFFFFFFFF), gzip, a ZIP archive (such
// as an .xlsx workbook), an OLE compound file (an .xls workbook), text
// (no NUL byte in head, or a UTF-16 byte order mark), or other binary
// data. The magic numbers are from the Parquet and Arrow format
// specifications, RFC 1952 (gzip), the ZIP application note (PKWARE) and
// the Compound File Binary format (Microsoft [MS-CFB]).
func contentKind(head []byte) string {
	switch {
	case bytes.HasPrefix(head, parquetMagic):
		return kindParquet
	case bytes.HasPrefix(head, arrowFileMagic), bytes.HasPrefix(head, featherV1Magic), bytes.HasPrefix(head, arrowStreamMagic):
		return kindArrow
	case bytes.HasPrefix(head, gzipMagic):
		return kindGzip
	case bytes.HasPrefix(head, zipMagic):
		return kindZip
	case bytes.HasPrefix(head, oleMagic):
		return kindOLE
	case bytes.HasPrefix(head, utf16LEBOM), bytes.HasPrefix(head, utf16BEBOM):
		return kindText
	case bytes.IndexByte(head, 0) >= 0:
		return kindBinary
	}
	return kindText
}

// kindName is how messages name a format.
func kindName(format string) string {
	switch format {
	case kindParquet:
		return "Parquet"
	case "arrow":
		return "Arrow IPC"
	case "csv":
		return "CSV"
	case "tsv":
		return "TSV"
	}
	return "text"
}

// article puts "a" or "an" before a format name.
func article(name string) string {
	if strings.IndexByte("AEIOU", name[0]) >= 0 {
		return "an " + name
	}
	return "a " + name
}

// looksUTF16 reports whether head, with no byte order mark, looks like
// UTF-16 text: NUL in every other byte of its first 64 bytes, as ASCII
// text takes in UTF-16.
func looksUTF16(head []byte) bool {
	if len(head) < 4 {
		return false
	}
	head = head[:min(len(head), 64)&^1]
	even, odd := 0, 0
	for i := 0; i < len(head); i += 2 {
		if head[i] == 0 {
			even++
		}
		if head[i+1] == 0 {
			odd++
		}
	}
	half := len(head) / 2
	return (even == half && odd == 0) || (odd == half && even == 0)
}

// dialect is how a text table separates fields and writes numbers.
type dialect struct {
	comma        rune // field separator; ' ' means runs of blanks
	decimalComma bool
}

// describe names a dialect and the flags that read it.
func (d dialect) describe() (name, flags string) {
	switch d.comma {
	case ',':
		name, flags = "comma-separated", "--delimiter ','"
	case ';':
		name, flags = "semicolon-separated", "--delimiter ';'"
	case '\t':
		name, flags = "tab-separated", "--delimiter tab"
	case '|':
		name, flags = "pipe-separated", "--delimiter '|'"
	case ' ':
		name, flags = "space-separated", "--delimiter space"
	}
	if d.decimalComma {
		name += " file with decimal commas"
		flags += " --decimal-comma"
	} else {
		name += " file"
	}
	return name, flags
}

// sniffLines returns up to 20 non-blank complete lines of head (the last
// line only if complete is set, i.e. head is the whole text).
func sniffLines(head []byte, complete bool) []string {
	s := string(head)
	if !complete {
		if i := strings.LastIndexByte(s, '\n'); i >= 0 {
			s = s[:i]
		}
	}
	var lines []string
	for _, l := range strings.Split(s, "\n") {
		l = strings.TrimRight(l, "\r")
		if strings.TrimSpace(l) == "" {
			continue
		}
		lines = append(lines, l)
		if len(lines) == 20 {
			break
		}
	}
	return lines
}

// countOutsideQuotes counts sep in line outside double-quoted stretches.
func countOutsideQuotes(line string, sep byte) int {
	n, quoted := 0, false
	for i := 0; i < len(line); i++ {
		switch line[i] {
		case '"':
			quoted = !quoted
		case sep:
			if !quoted {
				n++
			}
		}
	}
	return n
}

// consistent reports whether every line splits into the same number (≥ 2)
// of fields at sep (' ': runs of blanks), and returns that number.
func consistent(lines []string, sep rune) (int, bool) {
	if len(lines) < 2 {
		return 0, false
	}
	k := -1
	for _, l := range lines {
		var c int
		if sep == ' ' {
			c = len(strings.Fields(l))
		} else {
			c = countOutsideQuotes(l, byte(sep)) + 1
		}
		if c < 2 || (k >= 0 && c != k) {
			return 0, false
		}
		k = c
	}
	return k, true
}

// decimalCommas reports whether some field of the data lines (all but the
// first) split at sep looks like a number with a decimal comma ("1,4",
// "-0,25").
func decimalCommas(lines []string, sep rune) bool {
	for _, l := range lines[1:] {
		var fields []string
		if sep == ' ' {
			fields = strings.Fields(l)
		} else {
			fields = strings.Split(l, string(sep))
		}
		for _, f := range fields {
			if isDecimalComma(strings.Trim(strings.TrimSpace(f), `"`)) {
				return true
			}
		}
	}
	return false
}

// isDecimalComma reports whether s is digits, one comma and digits, with
// an optional sign: a number written with a decimal comma.
func isDecimalComma(s string) bool {
	s = strings.TrimLeft(s, "+-")
	a, b, ok := strings.Cut(s, ",")
	return ok && a != "" && b != "" && allDigits(a) && allDigits(b)
}

func allDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// sniff guesses the dialect of a text table from its first lines, for a
// read that failed with the dialect cur. It returns the guess and true
// when another dialect splits every line into the same number of fields
// while cur does not; or cur with decimal commas when cur splits the
// lines consistently, its fields hold decimal commas and cur does not
// read them. It never guesses for a file that cur reads consistently
// with plain numbers, so errors in such files keep their own message.
func sniff(head []byte, complete bool, cur dialect) (dialect, bool) {
	lines := sniffLines(head, complete)
	if _, ok := consistent(lines, cur.comma); ok {
		if !cur.decimalComma && cur.comma != ',' && decimalCommas(lines, cur.comma) {
			return dialect{comma: cur.comma, decimalComma: true}, true
		}
		return dialect{}, false
	}
	for _, sep := range []rune{';', '\t', '|', ',', ' '} {
		if sep == cur.comma {
			continue
		}
		if _, ok := consistent(lines, sep); ok {
			d := dialect{comma: sep}
			d.decimalComma = sep != ',' && decimalCommas(lines, sep)
			return d, true
		}
	}
	return dialect{}, false
}

// sepLine recognises a first line "sep=X" (the separator hint that
// spreadsheet programs write and read) and returns X.
func sepLine(head []byte) (rune, bool) {
	line, _, _ := bytes.Cut(head, []byte("\n"))
	line = bytes.TrimRight(line, "\r")
	s, ok := bytes.CutPrefix(line, []byte("sep="))
	if !ok {
		return 0, false
	}
	r, n := utf8.DecodeRune(s)
	if n == 0 || n != len(s) || r == utf8.RuneError || r == '"' || r == '\n' || r == '\r' {
		return 0, false
	}
	return r, true
}

// parseDelimiter reads the Delimiter option: one character, or "tab",
// "space" (runs of blanks), "comma", "semicolon", "pipe".
func parseDelimiter(s string) (rune, error) {
	switch strings.ToLower(s) {
	case "tab", `\t`:
		return '\t', nil
	case "space", "spaces", "blank", "whitespace":
		return ' ', nil
	case "comma":
		return ',', nil
	case "semicolon":
		return ';', nil
	case "pipe":
		return '|', nil
	}
	r, n := utf8.DecodeRuneInString(s)
	if n == 0 || n != len(s) || r == utf8.RuneError || r == '"' || r == '\r' || r == '\n' || r == '.' || (r >= '0' && r <= '9') || r == '-' || r == '+' {
		return 0, fmt.Errorf("delimiter %q: want one character (not a digit, sign, point or quote) or tab, space, comma, semicolon, pipe", s)
	}
	return r, nil
}
