package ingest

import (
	"bytes"
	"encoding/binary"
	"errors"
	"io"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// allocatedBy returns the bytes the Go heap handed out while f ran
// (runtime.MemStats.TotalAlloc, which counts every allocation, freed or
// not).
func allocatedBy(f func()) uint64 {
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	f()
	runtime.ReadMemStats(&after)
	return after.TotalAlloc - before.TotalAlloc
}

// The reviewer's three files (rv25e finding 1): an Arrow IPC file, an
// Arrow IPC stream and a Parquet file (whose ARROW:schema key holds the
// same stream's schema) in which one field's child count is overwritten
// with some 5e8. arrow-go's schema decoder made a slice of that many
// fields and the process died with "fatal error: runtime: out of memory",
// which no recover catches (this test died with it). Each is now refused
// before arrow-go decodes the schema, naming the count and its byte, and
// reading it allocates well under 16 MiB.
func TestCorruptSchemaCountsRefused(t *testing.T) {
	for _, c := range []struct{ file, want string }{
		{"oom-schema.arrow", "not a readable Arrow IPC file (corrupt?): corrupt Arrow metadata: a field's child list declares 769587968 entries, but only 328 bytes follow (room for 82) at byte 228 of the file footer"},
		{"oom-stream.arrows", "corrupt Arrow metadata: a field's child list declares 536870912 entries, but only 128 bytes follow (room for 32) at byte 388 of the schema message"},
		{"oom.parquet", "its ARROW:schema key, the Arrow schema stored by the writer, cannot be read: corrupt Arrow metadata: a field's child list declares 536870912 entries"},
	} {
		t.Run(c.file, func(t *testing.T) {
			mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
			defer mem.AssertSize(t, 0)
			var err error
			n := allocatedBy(func() {
				var r Reader
				r, err = Open(filepath.Join("testdata", "corrupt", c.file), WithAllocator(mem))
				if err == nil {
					r.Release()
				}
			})
			if err == nil || !strings.HasPrefix(err.Error(), "ingest: ") || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v, want %q", err, c.want)
			}
			t.Logf("%s: %d bytes allocated", c.file, n)
			if n > 16<<20 {
				t.Errorf("reading it allocated %d bytes, want under 16 MiB", n)
			}
		})
	}
}

// The reviewer's pipe case (rv25e finding 7): an Arrow IPC stream whose
// first record batch declares 0x7ffffff0 bytes of metadata, followed by
// endless zeros, read from a named pipe. arrow-go's message reader made a
// 2 GiB slice and filled it from the pipe (2.1 GB RSS, then "invalid
// message type"). It is now refused at the length, before reading it,
// with the limit; the writer goroutine is stopped by the closed pipe.
func TestPipeStreamHugeMessageRefused(t *testing.T) {
	csv := writeFile(t, "s.csv", seedCSV)
	r, err := Open(csv, WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := WriteReaderTo(&buf, "s", FormatArrowStream, r); err != nil {
		t.Fatal(err)
	}
	r.Release()
	s := buf.Bytes()
	// The schema message (no body) is followed by the first record batch.
	rb := 8 + int(binary.LittleEndian.Uint32(s[4:]))
	if binary.LittleEndian.Uint32(s[rb:]) != 0xFFFFFFFF {
		t.Fatalf("no message at byte %d", rb)
	}
	head := append([]byte(nil), s[:rb+8]...)
	binary.LittleEndian.PutUint32(head[rb+4:], 0x7ffffff0)

	p := fifoFed(t, func(w io.Writer) {
		if _, err := w.Write(head); err != nil {
			return
		}
		zero := make([]byte, 64<<10)
		for i := 0; i < 1<<15; i++ { // at most 2 GiB, until the reader closes
			if _, err := w.Write(zero); err != nil {
				return
			}
		}
	})
	var n uint64
	n = allocatedBy(func() {
		var rd Reader
		rd, err = Open(p, WithBatchSize(3))
		if err != nil {
			return
		}
		for rd.Next() {
		}
		err = rd.Err()
		rd.Release()
	})
	want := "Arrow IPC message longer than allowed: the message at byte N declares metadata of 2147483632 bytes, over the limit of 67108864"
	if err == nil || !strings.Contains(err.Error(), "Arrow IPC message longer than allowed") || !strings.Contains(err.Error(), "declares metadata of 2147483632 bytes, over the limit of 67108864") {
		t.Errorf("got %v, want %q", err, want)
	}
	t.Logf("%d bytes allocated", n)
	if n > 16<<20 {
		t.Errorf("reading it allocated %d bytes, want under 16 MiB", n)
	}
}

// An LZ4-compressed Arrow IPC stream whose first buffer's uncompressed
// length (the 8 bytes before the compressed data) is overwritten with
// 2^40. arrow-go sizes the buffer from it unchecked: the Go runtime was
// asked for a terabyte and the process died ("fatal error: runtime: out
// of memory"). The readers' allocator now refuses any one buffer over
// MaxBuffer, and the stream is refused as corrupt, the same as a file.
func TestCompressedBufferLengthRefused(t *testing.T) {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, sc)
	defer b.Release()
	for i := 0; i < 4; i++ {
		b.Field(i).(*array.Float64Builder).AppendValues([]float64{0, 1, 2}, nil)
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	for _, format := range []string{"arrows", "arrow"} {
		var buf bytes.Buffer
		var err error
		if format == "arrows" {
			w := ipc.NewWriter(&buf, ipc.WithSchema(sc), ipc.WithLZ4())
			err = errors.Join(w.Write(rec), w.Close())
		} else {
			var w *ipc.FileWriter
			if w, err = ipc.NewFileWriter(&buf, ipc.WithSchema(sc), ipc.WithLZ4()); err == nil {
				err = errors.Join(w.Write(rec), w.Close())
			}
		}
		if err != nil {
			t.Fatal(err)
		}
		s := buf.Bytes()
		at := 0
		if format == "arrow" {
			at = 8 // "ARROW1" and padding
		}
		rb := at + 8 + int(binary.LittleEndian.Uint32(s[at+4:])) // after the schema message
		body := rb + 8 + int(binary.LittleEndian.Uint32(s[rb+4:]))
		if n := binary.LittleEndian.Uint64(s[body:]); n != 24 {
			t.Fatalf("%s: first buffer's uncompressed length %d, want 24 (3 float64)", format, n)
		}
		binary.LittleEndian.PutUint64(s[body:], 1<<40)
		p := writeFile(t, "lz4."+format, string(s))
		mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
		n := allocatedBy(func() {
			var r Reader
			r, err = Open(p, WithAllocator(mem))
			if err != nil {
				return
			}
			for r.Next() {
			}
			err = r.Err()
			r.Release()
		})
		if err == nil || !strings.Contains(err.Error(), "a buffer of 1099511627776 bytes asked for, over the limit of 1073741824 bytes for one buffer") {
			t.Errorf("%s: got %v, want the buffer length refused", format, err)
		}
		if n > 16<<20 {
			t.Errorf("%s: reading it allocated %d bytes, want under 16 MiB", format, n)
		}
	}
}
