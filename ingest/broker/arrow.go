package broker

import (
	"bytes"
	"fmt"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"undercurrent/ingest/ipcguard"
)

// Canonical column names of a sensor batch; they are the ingest package's
// canonical names for the same quantities.
const (
	colTime = "time"
	colBx   = "bx"
	colBy   = "by"
	colBz   = "bz"
	colTemp = "temp"
)

// BatchSchema returns the Arrow schema of a sensor batch: float64 columns
// time, bx, by, bz and, when withTemp, temp.
func BatchSchema(withTemp bool) *arrow.Schema {
	f := []arrow.Field{
		{Name: colTime, Type: arrow.PrimitiveTypes.Float64},
		{Name: colBx, Type: arrow.PrimitiveTypes.Float64},
		{Name: colBy, Type: arrow.PrimitiveTypes.Float64},
		{Name: colBz, Type: arrow.PrimitiveTypes.Float64},
	}
	if withTemp {
		f = append(f, arrow.Field{Name: colTemp, Type: arrow.PrimitiveTypes.Float64})
	}
	return arrow.NewSchema(f, nil)
}

// RecordBatch returns b as an Arrow record batch with the schema of
// BatchSchema. The caller owns it and must Release it.
func (b *Batch) RecordBatch(mem memory.Allocator) arrow.RecordBatch {
	if mem == nil {
		mem = memory.DefaultAllocator
	}
	rb := array.NewRecordBuilder(mem, BatchSchema(b.Temp != nil))
	defer rb.Release()
	cols := [][]float64{b.Time, b.Bx, b.By, b.Bz}
	if b.Temp != nil {
		cols = append(cols, b.Temp)
	}
	for i, c := range cols {
		rb.Field(i).(*array.Float64Builder).AppendValues(c, nil)
	}
	return rb.NewRecordBatch()
}

// EncodeArrow encodes b as an Arrow IPC stream holding one record batch.
func EncodeArrow(b *Batch) ([]byte, error) {
	rec := b.RecordBatch(memory.DefaultAllocator)
	defer rec.Release()
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(rec.Schema()))
	if err := w.Write(rec); err != nil {
		return nil, fmt.Errorf("broker: encode arrow: %w", err)
	}
	if err := w.Close(); err != nil {
		return nil, fmt.Errorf("broker: encode arrow: %w", err)
	}
	return buf.Bytes(), nil
}

// budgetAllocator hands out memory for the Arrow IPC reader up to a total
// budget. Every allocation counts against it, freed or not, so the budget
// bounds all the memory one payload makes the reader take, including
// compressed buffers that a few bytes on the wire declare to be gigabytes.
// Past the budget it panics (the IPC reader recovers) and records the
// refusal, which decodeArrow reports as ErrDecodedTooLarge.
type budgetAllocator struct {
	mem         memory.Allocator
	used, limit int64
	refused     int64 // size of the first allocation refused, 0 if none
}

func (a *budgetAllocator) take(n int) {
	if n <= 0 {
		return
	}
	if a.used+int64(n) > a.limit {
		if a.refused == 0 {
			a.refused = int64(n)
		}
		panic(fmt.Sprintf("decoded size over %d bytes", a.limit))
	}
	a.used += int64(n)
}

func (a *budgetAllocator) Allocate(size int) []byte {
	a.take(size)
	return a.mem.Allocate(size)
}

func (a *budgetAllocator) Reallocate(size int, b []byte) []byte {
	a.take(size - len(b))
	return a.mem.Reallocate(size, b)
}

func (a *budgetAllocator) Free(b []byte) { a.mem.Free(b) }

// decodeArrow reads an Arrow IPC stream; every record batch in it is
// appended. Columns are found by name; time, bx, by, bz are required and
// must be float64 without nulls, temp is optional; other columns are ignored.
// The reader may allocate at most maxDecoded bytes in all (message bodies,
// decompressed buffers), and no message part may be longer than the payload;
// a stream needing more is refused with ErrDecodedTooLarge before the memory
// is taken.
func decodeArrow(subject string, data []byte, maxDecoded int64) (b *Batch, err error) {
	alloc := &budgetAllocator{mem: memory.DefaultAllocator, limit: maxDecoded}
	defer func() {
		// The IPC reader can panic on corrupt flatbuffers; user data must
		// never crash the service.
		if r := recover(); r != nil {
			b, err = nil, fmt.Errorf("broker: %s: corrupt arrow stream: %v", subject, r)
		}
		if alloc.refused != 0 {
			b, err = nil, fmt.Errorf("%w: broker: %s: arrow stream declares more data than the decode limit of %d bytes (%d bytes taken, %d more asked for; %d bytes on the wire)",
				ErrDecodedTooLarge, subject, maxDecoded, alloc.used, alloc.refused, len(data))
		}
	}()
	// No message part may be longer than the payload; ipcguard checks
	// each message's metadata flatbuffer (the schema's field and child
	// counts, which arrow-go sizes memory from unchecked) before arrow-go
	// decodes it.
	lim := int64(len(data))
	mr := ipcguard.NewReader(bytes.NewReader(data), alloc, ipcguard.Limits{Metadata: lim, Body: lim})
	rd, err := ipc.NewReaderFromMessageReader(mr, ipc.WithAllocator(alloc))
	if err != nil { // the reader has released mr
		return nil, fmt.Errorf("broker: %s: arrow stream: %v", subject, err)
	}
	defer rd.Release()
	out := &Batch{}
	schema := rd.Schema()
	idx := map[string]int{}
	for _, name := range []string{colTime, colBx, colBy, colBz, colTemp} {
		is := schema.FieldIndices(name)
		if len(is) == 0 {
			if name == colTemp {
				continue
			}
			return nil, fmt.Errorf("broker: %s: arrow stream: missing column %s (have %v)", subject, name, fieldNames(schema))
		}
		f := schema.Field(is[0])
		if f.Type.ID() != arrow.FLOAT64 {
			return nil, fmt.Errorf("broker: %s: arrow stream: column %s is %s, want float64", subject, name, f.Type)
		}
		idx[name] = is[0]
	}
	dst := map[string]*[]float64{colTime: &out.Time, colBx: &out.Bx, colBy: &out.By, colBz: &out.Bz, colTemp: &out.Temp}
	batch := 0
	for rd.Next() {
		batch++
		rec := rd.RecordBatch()
		for name, i := range idx {
			col := rec.Column(i).(*array.Float64)
			if col.NullN() > 0 {
				for r := 0; r < col.Len(); r++ {
					if col.IsNull(r) {
						return nil, fmt.Errorf("broker: %s: batch %d row %d: column %s: null value", subject, batch, r+1, name)
					}
				}
			}
			*dst[name] = append(*dst[name], col.Float64Values()...)
		}
	}
	if err := rd.Err(); err != nil {
		return nil, fmt.Errorf("broker: %s: arrow stream batch %d: %v", subject, batch+1, err)
	}
	return out, nil
}

func fieldNames(s *arrow.Schema) []string {
	names := make([]string, s.NumFields())
	for i := range names {
		names[i] = s.Field(i).Name
	}
	return names
}
