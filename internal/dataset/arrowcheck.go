package dataset

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// The Arrow IPC reader trusts the vector lengths in a file's FlatBuffers
// metadata: a damaged schema can make it allocate many gigabytes at once,
// which kills the process rather than panicking (found by
// TestColumnarDamage). Before handing a file to it, checkArrowSchema
// bounds-checks every table and vector that the schema decoding touches,
// and readers use a cappedAllocator so that no single buffer request can
// exceed what the file could plausibly hold.
//
// FlatBuffers layout (https://flatbuffers.dev/internals/): a table at
// position p starts with an int32 soffset to its vtable at p − soffset;
// the vtable holds uint16 vtable size, uint16 table size, then one uint16
// field offset per slot (0 = absent). Reference fields hold a uint32
// offset relative to their own position; vectors start with a uint32
// length. Slots follow Arrow's format/Schema.fbs, Message.fbs and File.fbs.

// maxMetadata bounds one IPC metadata block (a schema message or footer).
const maxMetadata = 16 << 20

// maxNesting bounds the nesting depth of fields.
const maxNesting = 64

var errBadMetadata = errors.New("metadata out of bounds")

type fbuf []byte

func (b fbuf) u32(p int) (int, bool) {
	if p < 0 || p+4 > len(b) {
		return 0, false
	}
	return int(binary.LittleEndian.Uint32(b[p:])), true
}

func (b fbuf) u16(p int) (int, bool) {
	if p < 0 || p+2 > len(b) {
		return 0, false
	}
	return int(binary.LittleEndian.Uint16(b[p:])), true
}

type ftab struct {
	b            fbuf
	pos, vt, vsz int
}

func (b fbuf) table(pos int) (ftab, error) {
	so, ok := b.u32(pos)
	if !ok {
		return ftab{}, errBadMetadata
	}
	vt := pos - int(int32(uint32(so)))
	vsz, ok1 := b.u16(vt)
	tsz, ok2 := b.u16(vt + 2)
	if !ok1 || !ok2 || vsz < 4 || vsz%2 != 0 || vt+vsz > len(b) || tsz < 4 || pos+tsz > len(b) {
		return ftab{}, errBadMetadata
	}
	return ftab{b: b, pos: pos, vt: vt, vsz: vsz}, nil
}

// off returns the offset of slot within the table, or 0 when absent.
func (t ftab) off(slot int) int {
	o := 4 + 2*slot
	if o+2 > t.vsz {
		return 0
	}
	v, _ := t.b.u16(t.vt + o)
	return v
}

// ref follows the reference field in slot; ok is false when it is absent.
func (t ftab) ref(slot int) (int, bool, error) {
	o := t.off(slot)
	if o == 0 {
		return 0, false, nil
	}
	p := t.pos + o
	u, ok := t.b.u32(p)
	if !ok || p+u+4 > len(t.b) || u == 0 {
		return 0, false, errBadMetadata
	}
	return p + u, true, nil
}

// vector checks the vector in slot with elements of elem bytes and
// returns its start and length.
func (t ftab) vector(slot, elem int) (start, n int, err error) {
	q, ok, err := t.ref(slot)
	if err != nil || !ok {
		return 0, 0, err
	}
	n, _ = t.b.u32(q)
	start = q + 4
	if int64(start)+int64(n)*int64(elem) > int64(len(t.b)) {
		return 0, 0, errBadMetadata
	}
	return start, n, nil
}

func (t ftab) subtable(slot int) (ftab, bool, error) {
	q, ok, err := t.ref(slot)
	if err != nil || !ok {
		return ftab{}, false, err
	}
	s, err := t.b.table(q)
	return s, err == nil, err
}

// eachTable calls fn for each table of the vector of tables in slot.
func (t ftab) eachTable(slot int, fn func(ftab) error) error {
	start, n, err := t.vector(slot, 4)
	if err != nil {
		return err
	}
	for i := 0; i < n; i++ {
		p := start + 4*i
		u, _ := t.b.u32(p)
		s, err := t.b.table(p + u)
		if err != nil {
			return err
		}
		if err := fn(s); err != nil {
			return err
		}
	}
	return nil
}

func checkKeyValues(t ftab, slot int) error {
	return t.eachTable(slot, func(kv ftab) error {
		if _, _, err := kv.vector(0, 1); err != nil {
			return err
		}
		_, _, err := kv.vector(1, 1)
		return err
	})
}

// Schema.fbs: Schema { endianness 0; fields 1; custom_metadata 2; features 3 }
func checkSchemaTable(s ftab) error {
	if err := s.eachTable(1, func(f ftab) error { return checkField(f, 1) }); err != nil {
		return err
	}
	if err := checkKeyValues(s, 2); err != nil {
		return err
	}
	_, _, err := s.vector(3, 8)
	return err
}

// Schema.fbs: Field { name 0; nullable 1; type_type 2; type 3;
// dictionary 4; children 5; custom_metadata 6 }
func checkField(f ftab, depth int) error {
	if depth > maxNesting {
		return fmt.Errorf("fields nested more than %d deep", maxNesting)
	}
	if _, _, err := f.vector(0, 1); err != nil {
		return err
	}
	typ, ok, err := f.subtable(3)
	if err != nil {
		return err
	}
	if ok {
		// Timestamp (10): timezone string in slot 1; Union (14): typeIds
		// int32 vector in slot 1.
		var tt int
		if o := f.off(2); o != 0 && f.pos+o < len(f.b) {
			tt = int(f.b[f.pos+o])
		}
		switch tt {
		case 10:
			_, _, err = typ.vector(1, 1)
		case 14:
			_, _, err = typ.vector(1, 4)
		}
		if err != nil {
			return err
		}
	}
	// DictionaryEncoding { id 0; indexType 1 (table Int); isOrdered 2; kind 3 }
	dict, ok, err := f.subtable(4)
	if err != nil {
		return err
	}
	if ok {
		if _, _, err := dict.subtable(1); err != nil {
			return err
		}
	}
	if err := f.eachTable(5, func(c ftab) error { return checkField(c, depth+1) }); err != nil {
		return err
	}
	return checkKeyValues(f, 6)
}

func rootTable(b fbuf) (ftab, error) {
	u, ok := b.u32(0)
	if !ok {
		return ftab{}, errBadMetadata
	}
	return b.table(u)
}

// checkArrowSchema bounds-checks the schema of the Arrow IPC file (footer)
// or stream (first message) in f, then rewinds f.
func checkArrowSchema(f source, size int64, isFile bool) error {
	defer f.Seek(0, io.SeekStart)
	if isFile {
		// File.fbs: Footer { version 0; schema 1; dictionaries 2;
		// recordBatches 3; custom_metadata 4 }; Block is a 24-byte struct.
		const tail = 10 // int32 footer length + "ARROW1"
		if size < tail+8 {
			return errors.New("file too short for an Arrow IPC file")
		}
		var t [tail]byte
		if _, err := f.ReadAt(t[:], size-tail); err != nil {
			return err
		}
		n := int64(binary.LittleEndian.Uint32(t[:4]))
		if n < 4 || n > maxMetadata || n > size-tail-8 {
			return errors.New("footer length out of bounds")
		}
		b := make(fbuf, n)
		if _, err := f.ReadAt(b, size-tail-n); err != nil {
			return err
		}
		footer, err := rootTable(b)
		if err != nil {
			return err
		}
		for _, slot := range []int{2, 3} {
			if _, _, err := footer.vector(slot, 24); err != nil {
				return err
			}
		}
		if err := checkKeyValues(footer, 4); err != nil {
			return err
		}
		s, ok, err := footer.subtable(1)
		if err != nil {
			return err
		}
		if !ok {
			return errors.New("footer has no schema")
		}
		return checkSchemaTable(s)
	}
	// Stream: [0xFFFFFFFF] int32 length, Message flatbuffer.
	// Message.fbs: Message { version 0; header_type 1; header 2;
	// bodyLength 3; custom_metadata 4 }; header_type 1 = Schema.
	var h [4]byte
	if _, err := io.ReadFull(f, h[:]); err != nil {
		return err
	}
	n := int64(binary.LittleEndian.Uint32(h[:]))
	if n == 0xFFFFFFFF {
		if _, err := io.ReadFull(f, h[:]); err != nil {
			return err
		}
		n = int64(binary.LittleEndian.Uint32(h[:]))
	}
	if n < 4 || n > maxMetadata || n > size {
		return errors.New("message length out of bounds")
	}
	b := make(fbuf, n)
	if _, err := io.ReadFull(f, b); err != nil {
		return err
	}
	msg, err := rootTable(b)
	if err != nil {
		return err
	}
	if err := checkKeyValues(msg, 4); err != nil {
		return err
	}
	var ht int
	if o := msg.off(1); o != 0 && msg.pos+o < len(b) {
		ht = int(b[msg.pos+o])
	}
	if ht != 1 {
		return errors.New("the stream does not start with a schema")
	}
	s, ok, err := msg.subtable(2)
	if err != nil {
		return err
	}
	if !ok {
		return errors.New("schema message without a schema")
	}
	return checkSchemaTable(s)
}

// cappedAllocator refuses (by panicking, which readColumnar recovers)
// any single allocation above max bytes.
type cappedAllocator struct {
	memory.Allocator
	max int
}

func (a *cappedAllocator) Allocate(n int) []byte {
	a.check(n)
	return a.Allocator.Allocate(n)
}

func (a *cappedAllocator) Reallocate(n int, b []byte) []byte {
	a.check(n)
	return a.Allocator.Reallocate(n, b)
}

func (a *cappedAllocator) check(n int) {
	if n < 0 || n > a.max {
		panic(fmt.Sprintf("a buffer of %d bytes was asked for, more than this file can hold", n))
	}
}

// allocFloor is the smallest per-buffer cap of allocatorFor (a variable
// so that tests of damaged files can run with less memory).
var allocFloor int64 = 256 << 20

// allocatorFor returns the allocator used to read a file of size bytes:
// single buffers are capped at max(256 MiB, 1024 × size), generous for an
// honest compression ratio of numeric columns (a constant column
// compresses about 1000-fold) while refusing the gigabyte requests of
// damaged page headers.
func allocatorFor(size int64) memory.Allocator {
	limit := allocFloor
	if s := 1024 * size; s > limit {
		limit = s
	}
	if limit > int64(^uint(0)>>1) {
		limit = int64(^uint(0) >> 1)
	}
	return &cappedAllocator{Allocator: memory.NewGoAllocator(), max: int(limit)}
}
