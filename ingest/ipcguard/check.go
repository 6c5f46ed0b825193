// Package ipcguard checks Arrow IPC metadata before arrow-go decodes it.
//
// arrow-go sizes memory from counts in the metadata flatbuffers without
// checking them against the bytes that hold them: a schema whose field
// list or child list declares a billion entries makes it allocate tens of
// gigabytes at once, and the Go runtime then stops the process with
// "fatal error: runtime: out of memory", which no recover can catch. A
// few bytes are enough (a Field table whose children vector length is
// overwritten). The walk here reads the same flatbuffers (Arrow's
// Message.fbs, Schema.fbs and File.fbs) with bounds checks of its own and
// refuses, with the byte offset, any vector or string that runs past the
// end of its buffer, any table reached more often than the buffer could
// hold distinct tables (shared entries that would multiply the decoded
// fields), and nesting deeper than MaxDepth (arrow-go decodes nested
// fields by recursion, and a deep enough nest overflows the goroutine
// stack, another fatal error).
//
// It does not check record batch bodies: arrow-go reads those against
// buffer bounds itself (a bad one is a recoverable panic or an error).
package ipcguard

import (
	"encoding/binary"
	"fmt"
	"math"
)

// MaxDepth is the deepest nesting of child fields accepted (a log's
// columns are flat, or structs of flat columns; Arrow's C++ reader has
// the same bound).
const MaxDepth = 64

// MaxMetadata is the largest message metadata (flatbuffer) accepted, as
// arrow-go's own default limit: a schema is a few kilobytes, a record
// batch's metadata some 50 bytes a column.
const MaxMetadata = 64 << 20

// Error is corrupt metadata: What went wrong, At which byte of the
// flatbuffer (the message metadata or the file footer) and In which part.
type Error struct {
	In   string // "schema message", "file footer", ...
	At   int
	What string
}

func (e *Error) Error() string {
	return fmt.Sprintf("corrupt Arrow metadata: %s at byte %d of the %s", e.What, e.At, e.In)
}

// Arrow's union of message headers (Message.fbs MessageHeader).
const (
	hdrNone            = 0
	hdrSchema          = 1
	hdrDictionaryBatch = 2
	hdrRecordBatch     = 3
)

// Arrow's union of field types (Schema.fbs Type): the ones whose table
// holds more than scalars.
const (
	typeTimestamp = 10
	typeUnion     = 14
)

type walker struct {
	b      []byte
	in     string
	visits int
	max    int
}

func newWalker(b []byte, in string) *walker {
	// Distinct tables each take at least 4 bytes (their vtable offset):
	// more visits than that means entries shared between lists, which
	// arrow-go would decode once per reference.
	return &walker{b: b, in: in, max: len(b)/4 + 1}
}

func (w *walker) fail(at int, format string, a ...any) error {
	return &Error{In: w.in, At: at, What: fmt.Sprintf(format, a...)}
}

func (w *walker) u32(at int) (uint32, error) {
	if at < 0 || at > len(w.b)-4 {
		return 0, w.fail(at, "a 4-byte value past the end of the %d-byte buffer", len(w.b))
	}
	return binary.LittleEndian.Uint32(w.b[at:]), nil
}

// table is a flatbuffers table: its position and its vtable.
type table struct {
	w       *walker
	pos     int
	vt, vtn int // vtable position and length in bytes
	size    int // the table's inline size
}

func (w *walker) table(pos int) (table, error) {
	w.visits++
	if w.visits > w.max {
		return table{}, w.fail(pos, "more tables referenced than %d bytes can hold (entries shared between lists?)", len(w.b))
	}
	so, err := w.u32(pos)
	if err != nil {
		return table{}, err
	}
	vt := int64(pos) - int64(int32(so))
	if vt < 0 || vt > int64(len(w.b))-4 {
		return table{}, w.fail(pos, "a table whose vtable offset points outside the buffer")
	}
	t := table{w: w, pos: pos, vt: int(vt)}
	t.vtn = int(binary.LittleEndian.Uint16(w.b[t.vt:]))
	t.size = int(binary.LittleEndian.Uint16(w.b[t.vt+2:]))
	if t.vtn < 4 || t.vtn%2 != 0 || t.vt+t.vtn > len(w.b) {
		return table{}, w.fail(t.vt, "a vtable of %d bytes that does not fit the buffer", t.vtn)
	}
	if t.size < 4 || pos+t.size > len(w.b) {
		return table{}, w.fail(pos, "a table of %d bytes that does not fit the buffer", t.size)
	}
	return t, nil
}

// field returns the position of slot's value of width bytes inside the
// table, or -1 if the slot is absent.
func (t table) field(slot, width int) (int, error) {
	vo := 4 + 2*slot
	if vo+2 > t.vtn {
		return -1, nil
	}
	off := int(binary.LittleEndian.Uint16(t.w.b[t.vt+vo:]))
	if off == 0 {
		return -1, nil
	}
	if off+width > t.size {
		return -1, t.w.fail(t.pos+off, "field %d lies outside its %d-byte table", slot, t.size)
	}
	return t.pos + off, nil
}

func (t table) u8(slot int) (uint8, error) {
	at, err := t.field(slot, 1)
	if err != nil || at < 0 {
		return 0, err
	}
	return t.w.b[at], nil
}

func (t table) i64(slot int) (int64, error) {
	at, err := t.field(slot, 8)
	if err != nil || at < 0 {
		return 0, err
	}
	return int64(binary.LittleEndian.Uint64(t.w.b[at:])), nil
}

// ref follows slot's offset; -1 if the slot is absent.
func (t table) ref(slot int) (int, error) {
	at, err := t.field(slot, 4)
	if err != nil || at < 0 {
		return -1, err
	}
	u, _ := t.w.u32(at)
	to := int64(at) + int64(u)
	if to > int64(len(t.w.b))-4 {
		return -1, t.w.fail(at, "an offset of %d that points past the end of the %d-byte buffer", u, len(t.w.b))
	}
	return int(to), nil
}

// vector checks that slot's vector of n elements of elem bytes each fits
// in the buffer; it returns the position of the first element and n
// (-1, 0 if absent).
func (t table) vector(slot, elem int, what string) (int, int, error) {
	at, err := t.ref(slot)
	if err != nil || at < 0 {
		return -1, 0, err
	}
	n, _ := t.w.u32(at)
	left := int64(len(t.w.b)) - int64(at) - 4
	if int64(n)*int64(elem) > left {
		return -1, 0, t.w.fail(at, "%s declares %d entries, but only %d bytes follow (room for %d)", what, n, left, left/int64(elem))
	}
	return at + 4, int(n), nil
}

// tables checks slot's vector of tables with each.
func (t table) tables(slot int, what string, each func(table) error) error {
	first, n, err := t.vector(slot, 4, what)
	if err != nil || first < 0 {
		return err
	}
	for i := 0; i < n; i++ {
		p := first + 4*i
		u, _ := t.w.u32(p)
		to := int64(p) + int64(u)
		if to > int64(len(t.w.b))-4 {
			return t.w.fail(p, "entry %d of %s points past the end of the buffer", i, what)
		}
		sub, err := t.w.table(int(to))
		if err != nil {
			return err
		}
		if err := each(sub); err != nil {
			return err
		}
	}
	return nil
}

func (t table) sub(slot int) (table, bool, error) {
	at, err := t.ref(slot)
	if err != nil || at < 0 {
		return table{}, false, err
	}
	s, err := t.w.table(at)
	return s, err == nil, err
}

func (w *walker) root() (table, error) {
	u, err := w.u32(0)
	if err != nil {
		return table{}, err
	}
	if int64(u) > int64(len(w.b))-4 {
		return table{}, w.fail(0, "a root offset of %d past the end of the %d-byte buffer", u, len(w.b))
	}
	return w.table(int(u))
}

func keyValues(t table, slot int) error {
	return t.tables(slot, "a metadata list", func(kv table) error {
		if _, _, err := kv.vector(0, 1, "a metadata key"); err != nil {
			return err
		}
		_, _, err := kv.vector(1, 1, "a metadata value")
		return err
	})
}

// Schema.fbs Schema: endianness, fields, custom_metadata, features.
func schema(t table) error {
	if err := t.tables(1, "the schema's field list", func(f table) error { return field(f, 1) }); err != nil {
		return err
	}
	if err := keyValues(t, 2); err != nil {
		return err
	}
	_, _, err := t.vector(3, 8, "the schema's feature list")
	return err
}

// Schema.fbs Field: name, nullable, type_type, type, dictionary,
// children, custom_metadata.
func field(f table, depth int) error {
	if depth > MaxDepth {
		return f.w.fail(f.pos, "fields nested more than %d deep", MaxDepth)
	}
	if _, _, err := f.vector(0, 1, "a field name"); err != nil {
		return err
	}
	kind, err := f.u8(2)
	if err != nil {
		return err
	}
	if ty, ok, err := f.sub(3); err != nil {
		return err
	} else if ok {
		switch kind {
		case typeTimestamp: // unit, timezone
			if _, _, err := ty.vector(1, 1, "a timestamp's time zone"); err != nil {
				return err
			}
		case typeUnion: // mode, typeIds
			if _, _, err := ty.vector(1, 4, "a union's type id list"); err != nil {
				return err
			}
		}
	}
	if d, ok, err := f.sub(4); err != nil { // DictionaryEncoding: id, indexType
		return err
	} else if ok {
		if _, _, err := d.sub(1); err != nil {
			return err
		}
	}
	if err := f.tables(5, "a field's child list", func(c table) error { return field(c, depth+1) }); err != nil {
		return err
	}
	return keyValues(f, 6)
}

// Message.fbs RecordBatch: length, nodes, buffers, compression,
// variadicBufferCounts.
// Each buffer (offset, length: two int64) must lie inside the message
// body of body bytes: arrow-go slices the body by them unchecked (a panic
// that leaves the body's memory held).
func recordBatch(t table, body int64) error {
	if _, _, err := t.vector(1, 16, "a record batch's node list"); err != nil {
		return err
	}
	first, n, err := t.vector(2, 16, "a record batch's buffer list")
	if err != nil {
		return err
	}
	for i := 0; i < n; i++ {
		p := first + 16*i
		off := int64(binary.LittleEndian.Uint64(t.w.b[p:]))
		ln := int64(binary.LittleEndian.Uint64(t.w.b[p+8:]))
		if off < 0 || ln < 0 || off > body || ln > body-off {
			return t.w.fail(p, "buffer %d at offset %d, %d bytes long, outside the %d-byte message body", i, off, ln, body)
		}
	}
	if _, _, err := t.sub(3); err != nil {
		return err
	}
	_, _, err = t.vector(4, 8, "a record batch's variadic buffer counts")
	return err
}

// CheckMessage checks an IPC message's metadata (the flatbuffer after
// its length prefix) and returns the body length it declares.
func CheckMessage(meta []byte) (int64, error) {
	w := newWalker(meta, "message")
	m, err := w.root()
	if err != nil {
		return 0, err
	}
	// Message: version, header_type, header, bodyLength, custom_metadata.
	kind, err := m.u8(1)
	if err != nil {
		return 0, err
	}
	body, err := m.i64(3)
	if err != nil {
		return 0, err
	}
	if body < 0 || body > math.MaxInt64/2 {
		return 0, w.fail(m.pos, "a body length of %d", body)
	}
	if err := keyValues(m, 4); err != nil {
		return 0, err
	}
	h, ok, err := m.sub(2)
	if err != nil {
		return 0, err
	}
	if !ok {
		return body, nil
	}
	switch kind {
	case hdrNone:
	case hdrSchema:
		w.in = "schema message"
		err = schema(h)
	case hdrRecordBatch:
		w.in = "record batch message"
		err = recordBatch(h, body)
	case hdrDictionaryBatch: // id, data, isDelta
		w.in = "dictionary batch message"
		var rb table
		if rb, ok, err = h.sub(1); err == nil && ok {
			err = recordBatch(rb, body)
		}
	default:
		err = w.fail(m.pos, "a message of type %d, which a record batch stream does not hold (a tensor?)", kind)
	}
	return body, err
}

// Block is a footer's pointer to a message in an Arrow IPC file: the
// message (length prefix and metadata) at Offset, Meta bytes long, then
// its body of Body bytes; Dictionary tells a dictionary block from a
// record batch block.
type Block struct {
	Offset     int64
	Meta       int32
	Body       int64
	Dictionary bool
}

// CheckFooter checks an Arrow IPC file's footer flatbuffer (the bytes
// before its length and the closing ARROW1).
func CheckFooter(footer []byte) error {
	_, err := FooterBlocks(footer)
	return err
}

// CheckBlock checks the message a footer's block points to: meta is the
// block's Meta bytes (continuation marker, length, flatbuffer); the
// message's body must fit in the block's body.
func CheckBlock(b Block, meta []byte) error {
	p := 0
	if len(meta) >= 4 && binary.LittleEndian.Uint32(meta) == 0xFFFFFFFF {
		p = 4
	}
	if len(meta) < p+4 {
		return &Error{In: "file block", At: int(b.Offset), What: "no message length"}
	}
	n := int64(int32(binary.LittleEndian.Uint32(meta[p:])))
	p += 4
	if n < 4 || n > int64(len(meta)-p) {
		return &Error{In: "file block", At: int(b.Offset), What: fmt.Sprintf("a message length of %d in a %d-byte block", n, b.Meta)}
	}
	body, err := CheckMessage(meta[p : p+int(n)])
	if err != nil {
		return fmt.Errorf("the message at byte %d of the file: %w", b.Offset, err)
	}
	if body > b.Body {
		return &Error{In: "file block", At: int(b.Offset), What: fmt.Sprintf("a message body of %d bytes in a block of %d", body, b.Body)}
	}
	return nil
}

// FooterBlocks checks an Arrow IPC file's footer flatbuffer and returns
// its dictionary blocks, then its record batch blocks, each in the
// footer's order.
func FooterBlocks(footer []byte) ([]Block, error) {
	w := newWalker(footer, "file footer")
	f, err := w.root()
	if err != nil {
		return nil, err
	}
	// Footer: version, schema, dictionaries, recordBatches, custom_metadata.
	if s, ok, err := f.sub(1); err != nil {
		return nil, err
	} else if ok {
		if err := schema(s); err != nil {
			return nil, err
		}
	}
	var blocks []Block
	for slot := 2; slot <= 3; slot++ {
		what := map[int]string{2: "the footer's dictionary block list", 3: "the footer's record batch block list"}[slot]
		first, n, err := f.vector(slot, 24, what)
		if err != nil {
			return nil, err
		}
		for i := 0; i < n; i++ { // struct Block: offset long, metaDataLength int, (pad), bodyLength long
			p := first + 24*i
			blocks = append(blocks, Block{
				Offset:     int64(binary.LittleEndian.Uint64(w.b[p:])),
				Meta:       int32(binary.LittleEndian.Uint32(w.b[p+8:])),
				Body:       int64(binary.LittleEndian.Uint64(w.b[p+16:])),
				Dictionary: slot == 2,
			})
		}
	}
	return blocks, keyValues(f, 4)
}

// CheckSchemaStream checks the first message of a serialized IPC stream
// held in memory (as Parquet's ARROW:schema key holds one): its length
// prefix against the bytes there are, and its metadata.
func CheckSchemaStream(b []byte) error {
	p := 0
	if len(b) >= 4 && binary.LittleEndian.Uint32(b) == 0xFFFFFFFF {
		p = 4
	}
	if len(b) < p+4 {
		return &Error{In: "serialized schema", At: p, What: "no message length"}
	}
	n := int64(int32(binary.LittleEndian.Uint32(b[p:])))
	p += 4
	if n < 0 || n > int64(len(b)-p) {
		return &Error{In: "serialized schema", At: p - 4, What: fmt.Sprintf("a message length of %d with %d bytes left", n, len(b)-p)}
	}
	body, err := CheckMessage(b[p : p+int(n)])
	if err != nil {
		return err
	}
	if left := int64(len(b)-p) - n; body > left {
		return &Error{In: "serialized schema", At: p - 4, What: fmt.Sprintf("a body length of %d with %d bytes left", body, left)}
	}
	return nil
}
