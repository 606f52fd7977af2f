package dataset

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"strings"
	"unicode/utf16"
	"unicode/utf8"
)

// maxRowBytes bounds one row (one record) of a CSV/TSV file, and so the
// memory a file without line breaks can take (about five times this): 16
// MiB holds a row of a million 16-byte numbers, wider than any table
// t-SNE is run on. Tests lower it.
var maxRowBytes int64 = 16 << 20

// errLongRow is returned by rowLimiter when a row exceeds maxRowBytes.
var errLongRow = errors.New("row too long")

// checkRegular returns an *InputError unless path names a regular file
// (symbolic links are followed). plumb reads an input more than once (a
// study's input is read again by `plumb score`), so FIFOs, devices and
// sockets are refused: reading them again would block or give other data,
// and a device such as /dev/zero never ends.
func checkRegular(path string) error {
	st, err := os.Stat(path)
	if err != nil {
		return &InputError{File: path, Msg: openMessage(err), Err: err}
	}
	return regularFile(path, st)
}

// regularFile is checkRegular's verdict on a file's information.
func regularFile(path string, st os.FileInfo) error {
	switch {
	case st.IsDir():
		return &InputError{File: path, Msg: "is a directory, not a file"}
	case !st.Mode().IsRegular():
		return &InputError{File: path, Msg: fmt.Sprintf("is not a regular file (%s): plumb reads only regular files, which it can read again later (save the data to a file first)", fileKind(st.Mode()))}
	}
	return nil
}

func fileKind(m os.FileMode) string {
	switch {
	case m&os.ModeNamedPipe != 0:
		return "a FIFO"
	case m&os.ModeCharDevice != 0:
		return "a character device"
	case m&os.ModeDevice != 0:
		return "a device"
	case m&os.ModeSocket != 0:
		return "a socket"
	}
	return "mode " + m.String()
}

// ReadRegular reads a small file whole: it refuses anything but a regular
// file (see Read) and files of more than limit bytes, so that a device or
// a FIFO given by mistake neither blocks nor fills memory. Errors are
// *InputError naming path.
func ReadRegular(path string, limit int64) ([]byte, error) {
	if err := checkRegular(path); err != nil {
		return nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, &InputError{File: path, Msg: openMessage(err), Err: err}
	}
	defer f.Close()
	if st, err := f.Stat(); err != nil {
		return nil, &InputError{File: path, Msg: "cannot stat: " + err.Error(), Err: err}
	} else if err := regularFile(path, st); err != nil {
		return nil, err // replaced between the look and the open
	}
	b, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, &InputError{File: path, Msg: "read error: " + err.Error(), Err: err}
	}
	if int64(len(b)) > limit {
		return nil, &InputError{File: path, Msg: fmt.Sprintf("larger than %s: too large for this kind of file", byteSize(limit))}
	}
	return b, nil
}

// byteSize writes n bytes as KiB or MiB when exact.
func byteSize(n int64) string {
	switch {
	case n >= 1<<20 && n%(1<<20) == 0:
		return fmt.Sprintf("%d MiB", n>>20)
	case n >= 1<<10 && n%(1<<10) == 0:
		return fmt.Sprintf("%d KiB", n>>10)
	}
	return fmt.Sprintf("%d bytes", n)
}

// rowLimiter counts the bytes read since the last reset and fails with
// errLongRow once they pass the limit (plus the read-ahead of the buffer
// above it), so that a line without end cannot fill memory.
type rowLimiter struct {
	r     io.Reader
	n     int64
	limit int64
}

func (l *rowLimiter) Read(p []byte) (int, error) {
	if l.n > l.limit {
		return 0, errLongRow
	}
	n, err := l.r.Read(p)
	l.n += int64(n)
	return n, err
}

func (l *rowLimiter) reset() { l.n = 0 }

// errUTF16 reports an unpaired surrogate or an odd trailing byte.
var errUTF16 = errors.New("invalid UTF-16")

// utf16Reader decodes UTF-16 (after its byte order mark) into UTF-8.
// Unpaired surrogates and a final odd byte are errors (errUTF16), not
// replaced: plumb refuses text it cannot decode rather than change it.
type utf16Reader struct {
	r      *bufio.Reader
	big    bool
	out    []byte // decoded bytes not yet returned
	err    error
	offset int64 // bytes consumed after the byte order mark
}

func (u *utf16Reader) unit() (uint16, error) {
	var b [2]byte
	n, err := io.ReadFull(u.r, b[:])
	u.offset += int64(n)
	if err == io.ErrUnexpectedEOF {
		return 0, fmt.Errorf("%w: odd number of bytes", errUTF16)
	}
	if err != nil {
		return 0, err
	}
	if u.big {
		return uint16(b[0])<<8 | uint16(b[1]), nil
	}
	return uint16(b[1])<<8 | uint16(b[0]), nil
}

func (u *utf16Reader) Read(p []byte) (int, error) {
	for len(u.out) < len(p) && u.err == nil && len(u.out) < 4096 {
		c, err := u.unit()
		if err != nil {
			u.err = err
			break
		}
		r := rune(c)
		if utf16.IsSurrogate(r) {
			c2, err := u.unit()
			if err != nil && err != io.EOF {
				u.err = err
				break
			}
			r = utf16.DecodeRune(r, rune(c2))
			if err == io.EOF || r == utf8.RuneError {
				u.err = fmt.Errorf("%w: unpaired surrogate at byte %d", errUTF16, u.offset)
				break
			}
		}
		u.out = utf8.AppendRune(u.out, r)
	}
	n := copy(p, u.out)
	u.out = u.out[:copy(u.out, u.out[n:])]
	if n > 0 {
		return n, nil
	}
	return 0, u.err
}

// crReader turns every CR into LF: for files whose lines end in CR alone
// (classic Mac OS), so that each line is a row.
type crReader struct{ r io.Reader }

func (c crReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	for i, b := range p[:n] {
		if b == '\r' {
			p[i] = '\n'
		}
	}
	return n, err
}

// blankRecords reads a table whose fields are separated by runs of
// blanks (spaces and tabs), as written by many programs for .txt files.
// Leading and trailing blanks are ignored, blank lines are skipped, and
// there is no quoting. It has the methods of encoding/csv's Reader that
// readDelimited uses.
type blankRecords struct {
	br    *bufio.Reader
	line  int // lines read so far
	start int // line of the last record
	rec   []string
}

func (b *blankRecords) Read() ([]string, error) {
	for {
		s, err := b.br.ReadString('\n')
		if s == "" && err != nil {
			return nil, err
		}
		b.line++
		b.rec = strings.Fields(s)
		if len(b.rec) > 0 {
			b.start = b.line
			return b.rec, nil
		}
		if err != nil {
			return nil, err
		}
	}
}

func (b *blankRecords) FieldPos(int) (int, int) { return b.start, 1 }

func (b *blankRecords) InputOffset() int64 { return 0 }
