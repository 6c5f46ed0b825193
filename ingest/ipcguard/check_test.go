package ipcguard

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	flatbuffers "github.com/google/flatbuffers/go"
)

// stream writes one record batch of sc (filled with nulls) as an Arrow
// IPC stream with arrow-go's writer.
func stream(t *testing.T, sc *arrow.Schema) []byte {
	t.Helper()
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	for _, f := range b.Fields() {
		f.AppendNull()
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(sc))
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// messages splits a stream into its messages' metadata (continuation
// marker, length, flatbuffer; body after it).
func messages(t *testing.T, s []byte) (meta [][]byte, at []int) {
	t.Helper()
	for p := 0; p+8 <= len(s); {
		n := int(binary.LittleEndian.Uint32(s[p+4:]))
		if n == 0 {
			break
		}
		m := s[p+8 : p+8+n]
		body, err := CheckMessage(m)
		if err != nil {
			t.Fatalf("message at byte %d of a stream arrow-go wrote: %v", p, err)
		}
		meta, at = append(meta, m), append(at, p)
		p += 8 + n + int(body)
	}
	return meta, at
}

var logSchema = arrow.NewSchema([]arrow.Field{
	{Name: "time", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
	{Name: "mag", Type: arrow.StructOf(
		arrow.Field{Name: "bx", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		arrow.Field{Name: "by", Type: arrow.PrimitiveTypes.Float64, Nullable: true}), Nullable: true},
	{Name: "stamp", Type: &arrow.TimestampType{Unit: arrow.Millisecond, TimeZone: "UTC"}, Nullable: true},
}, &frameMeta)

var frameMeta = arrow.NewMetadata([]string{"undercurrent.frame"}, []string{"local"})

// childrenVector finds the children vector of the schema's field i in a
// schema message, by the same walk.
func childrenVector(t *testing.T, meta []byte, i int) int {
	t.Helper()
	w := newWalker(meta, "test")
	m, err := w.root()
	if err != nil {
		t.Fatal(err)
	}
	s, _, err := m.sub(2)
	if err != nil {
		t.Fatal(err)
	}
	first, _, err := s.vector(1, 4, "fields")
	if err != nil {
		t.Fatal(err)
	}
	p := first + 4*i
	f, err := w.table(p + int(binary.LittleEndian.Uint32(meta[p:])))
	if err != nil {
		t.Fatal(err)
	}
	at, err := f.ref(5)
	if err != nil || at < 0 {
		t.Fatalf("field %d has no children: %v", i, err)
	}
	return at
}

// The reviewer's case, made afresh: a struct field's child count
// overwritten with 2^29 in a schema message arrow-go wrote. arrow-go's
// schema decoder would make a slice of 2^29 fields (tens of GB; the
// process dies). CheckMessage refuses it with the count and the byte,
// and accepts the message as written, and the record batch after it.
func TestCheckMessageRefusesACountPastTheBuffer(t *testing.T) {
	s := stream(t, logSchema)
	meta, _ := messages(t, s) // checks every message as written
	if len(meta) != 2 {
		t.Fatalf("%d messages, want a schema and a record batch", len(meta))
	}
	at := childrenVector(t, meta[0], 1)
	if n := binary.LittleEndian.Uint32(meta[0][at:]); n != 2 {
		t.Fatalf("struct field has %d children, want 2", n)
	}
	binary.LittleEndian.PutUint32(meta[0][at:], 1<<29)
	_, err := CheckMessage(meta[0])
	var ce *Error
	if !errors.As(err, &ce) || ce.At != at || !strings.Contains(err.Error(), "a field's child list declares 536870912 entries") {
		t.Fatalf("got %v, want the child list at byte %d refused", err, at)
	}
}

// Struct fields nested 70 deep, which arrow-go writes: refused past
// MaxDepth (64), accepted at 60.
func TestCheckMessageNestingDepth(t *testing.T) {
	nest := func(d int) *arrow.Schema {
		var ty arrow.DataType = arrow.PrimitiveTypes.Float64
		for i := 0; i < d; i++ {
			ty = arrow.StructOf(arrow.Field{Name: "a", Type: ty, Nullable: true})
		}
		return arrow.NewSchema([]arrow.Field{{Name: "deep", Type: ty, Nullable: true}}, nil)
	}
	meta, _ := messages(t, stream(t, nest(60)))
	if _, err := CheckMessage(meta[0]); err != nil {
		t.Fatalf("60 deep: %v", err)
	}
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(nest(70)))
	w.Close()
	m := buf.Bytes()[8 : 8+binary.LittleEndian.Uint32(buf.Bytes()[4:])]
	if _, err := CheckMessage(m); err == nil || !strings.Contains(err.Error(), "nested more than 64 deep") {
		t.Fatalf("70 deep: got %v, want refused", err)
	}
}

// Shared entries, built with the flatbuffers builder: a schema listing k
// times one field that lists k times one child. Every offset is in
// bounds, but arrow-go would decode k*k fields from some 8k bytes (and
// k^d from d such levels): refused as more tables than the bytes can
// hold. With distinct fields and children (k = 3, 13 tables) it passes.
func TestCheckMessageSharedEntries(t *testing.T) {
	build := func(k int, shared bool) []byte {
		b := flatbuffers.NewBuilder(0)
		leaf := func() flatbuffers.UOffsetT {
			name := b.CreateString("a")
			b.StartObject(7)
			b.PrependUOffsetTSlot(0, name, 0)
			return b.EndObject()
		}
		vec := func(items []flatbuffers.UOffsetT) flatbuffers.UOffsetT {
			b.StartVector(4, len(items), 4)
			for i := len(items) - 1; i >= 0; i-- {
				b.PrependUOffsetT(items[i])
			}
			return b.EndVector(len(items))
		}
		mid := func(one flatbuffers.UOffsetT) flatbuffers.UOffsetT {
			kids := make([]flatbuffers.UOffsetT, k)
			for j := range kids {
				kids[j] = one
				if !shared {
					kids[j] = leaf()
				}
			}
			cv := vec(kids)
			b.StartObject(7)
			b.PrependUOffsetTSlot(5, cv, 0)
			return b.EndObject()
		}
		var fields []flatbuffers.UOffsetT
		one := leaf()
		m := mid(one)
		for i := 0; i < k; i++ {
			if !shared {
				m = mid(one)
			}
			fields = append(fields, m)
		}
		fv := vec(fields)
		b.StartObject(4)
		b.PrependUOffsetTSlot(1, fv, 0)
		sc := b.EndObject()
		b.StartObject(5)
		b.PrependUOffsetTSlot(2, sc, 0)
		b.PrependByteSlot(1, hdrSchema, 0)
		b.Finish(b.EndObject())
		return b.FinishedBytes()
	}
	if _, err := CheckMessage(build(3, false)); err != nil {
		t.Fatalf("distinct children: %v", err)
	}
	m := build(100, true)
	if _, err := CheckMessage(m); err == nil || !strings.Contains(err.Error(), "more tables referenced than") {
		t.Fatalf("100 x 100 shared children in %d bytes: got %v, want refused", len(m), err)
	}
}

// peakAllocator records the most memory held at once.
type peakAllocator struct {
	memory.Allocator
	now, peak int
}

func (a *peakAllocator) Allocate(n int) []byte {
	a.now += n
	a.peak = max(a.peak, a.now)
	return a.Allocator.Allocate(n)
}

func (a *peakAllocator) Reallocate(n int, b []byte) []byte {
	a.now += n - len(b)
	a.peak = max(a.peak, a.now)
	return a.Allocator.Reallocate(n, b)
}

func (a *peakAllocator) Free(b []byte) {
	a.now -= len(b)
	a.Allocator.Free(b)
}

// countReader counts the bytes read from it.
type countReader struct {
	r io.Reader
	n int64
}

func (c *countReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	return n, err
}

// zeros is an endless input of zero bytes (as /dev/zero).
type zeros struct{}

func (zeros) Read(p []byte) (int, error) { clear(p); return len(p), nil }

// The reviewer's pipe case: a record batch whose metadata length is
// overwritten with 0x7ffffff0, followed by endless zeros. arrow-go's
// message reader makes a 2 GiB slice and fills it. The Reader refuses
// the length over MaxMetadata having read nothing past it.
func TestReaderRefusesAHugeMetadataLength(t *testing.T) {
	s := stream(t, logSchema)
	_, at := messages(t, s)
	bad := append([]byte(nil), s[:at[1]+8]...)
	binary.LittleEndian.PutUint32(bad[at[1]+4:], 0x7ffffff0)
	in := &countReader{r: io.MultiReader(bytes.NewReader(bad), zeros{})}
	mem := memory.NewCheckedAllocator(memory.DefaultAllocator)
	defer mem.AssertSize(t, 0)
	rd, err := ipc.NewReaderFromMessageReader(NewReader(in, mem, Limits{}), ipc.WithAllocator(mem))
	if err != nil {
		t.Fatal(err)
	}
	defer rd.Release()
	if rd.Next() {
		t.Fatal("read a record batch")
	}
	if err := rd.Err(); !errors.Is(err, ErrTooLong) || !strings.Contains(err.Error(), "declares metadata of 2147483632 bytes, over the limit of 67108864") {
		t.Fatalf("got %v, want the metadata length refused", err)
	}
	if in.n != int64(len(bad)) {
		t.Errorf("read %d bytes, want %d (nothing past the length)", in.n, len(bad))
	}
}

// A record batch whose body length is overwritten with 512 MiB, in an
// input that stops 1 MiB later: the Reader's buffer grows with the bytes
// read, so the peak is about 2 MiB, not the 512 MiB declared, and the
// cut is io.ErrUnexpectedEOF (the ingest reader's "cut short"). Over a
// Body limit of 256 MiB the same message is refused before its body is
// read.
func TestReaderMemoryFollowsTheBytesRead(t *testing.T) {
	s := stream(t, logSchema)
	meta, at := messages(t, s)
	w := newWalker(meta[1], "test")
	m, err := w.root()
	if err != nil {
		t.Fatal(err)
	}
	p, err := m.field(3, 8)
	if err != nil || p < 0 {
		t.Fatalf("no body length: %v", err)
	}
	binary.LittleEndian.PutUint64(meta[1][p:], 512<<20) // meta[1] is s's bytes
	in := io.MultiReader(bytes.NewReader(s[:at[1]+8+len(meta[1])]), io.LimitReader(zeros{}, 1<<20))

	mem := &peakAllocator{Allocator: memory.DefaultAllocator}
	rd, err := ipc.NewReaderFromMessageReader(NewReader(in, mem, Limits{}), ipc.WithAllocator(mem))
	if err != nil {
		t.Fatal(err)
	}
	if rd.Next() {
		t.Fatal("read a record batch")
	}
	if err := rd.Err(); !errors.Is(err, io.ErrUnexpectedEOF) {
		t.Errorf("got %v, want io.ErrUnexpectedEOF", err)
	}
	rd.Release()
	if mem.peak > 4<<20 {
		t.Errorf("peak %d bytes held for a body cut after 1 MiB, want under 4 MiB", mem.peak)
	}

	in = io.MultiReader(bytes.NewReader(s[:at[1]+8+len(meta[1])]), zeros{})
	rd, err = ipc.NewReaderFromMessageReader(NewReader(in, nil, Limits{Body: 256 << 20, Why: "save it to a file"}))
	if err != nil {
		t.Fatal(err)
	}
	defer rd.Release()
	if rd.Next() {
		t.Fatal("read a record batch")
	}
	if err := rd.Err(); !errors.Is(err, ErrTooLong) || !strings.Contains(err.Error(), "a body of 536870912 bytes, over the limit of 268435456; save it to a file") {
		t.Fatalf("got %v, want the body length refused", err)
	}
}

// A footer whose record batch block count is overwritten: refused, with
// the file footer named.
func TestCheckFooterRefusesABlockCount(t *testing.T) {
	var buf bytes.Buffer
	sc := arrow.NewSchema([]arrow.Field{{Name: "time", Type: arrow.PrimitiveTypes.Float64}}, nil)
	w, err := ipc.NewFileWriter(&buf, ipc.WithSchema(sc))
	if err != nil {
		t.Fatal(err)
	}
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	b.Field(0).(*array.Float64Builder).Append(1)
	rec := b.NewRecordBatch()
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	rec.Release()
	b.Release()
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	f := buf.Bytes()
	n := int(binary.LittleEndian.Uint32(f[len(f)-10:]))
	footer := f[len(f)-10-n : len(f)-10]
	if err := CheckFooter(footer); err != nil {
		t.Fatalf("footer as written: %v", err)
	}
	fw := newWalker(footer, "test")
	root, err := fw.root()
	if err != nil {
		t.Fatal(err)
	}
	at, err := root.ref(3)
	if err != nil || at < 0 {
		t.Fatalf("no record batch blocks: %v", err)
	}
	binary.LittleEndian.PutUint32(footer[at:], 1<<30)
	if err := CheckFooter(footer); err == nil || !strings.Contains(err.Error(), "the footer's record batch block list declares 1073741824 entries") || !strings.Contains(err.Error(), "of the file footer") {
		t.Fatalf("got %v, want the block list refused", err)
	}
}
