package broker

import (
	"bytes"
	"errors"
	"runtime"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// zstdStream writes one record batch of rows rows (columns time, bx, by,
// bz) as an Arrow IPC stream with ZSTD body compression, with arrow-go's
// own writer (the reference implementation's Go port). time is t0 plus
// i/rate (t0 throughout when rate is 0); the field columns are zero. One array is shared by the three
// field columns, so that building a large batch takes little memory.
func zstdStream(t *testing.T, rows int, t0, rate float64) []byte {
	t.Helper()
	times := make([]float64, rows)
	for i := range times {
		times[i] = t0
		if rate > 0 {
			times[i] += float64(i) / rate
		}
	}
	tcol := array.NewData(arrow.PrimitiveTypes.Float64, rows, []*memory.Buffer{nil, memory.NewBufferBytes(arrow.Float64Traits.CastToBytes(times))}, nil, 0, 0)
	zcol := array.NewData(arrow.PrimitiveTypes.Float64, rows, []*memory.Buffer{nil, memory.NewBufferBytes(make([]byte, 8*rows))}, nil, 0, 0)
	cols := []arrow.Array{array.MakeFromData(tcol), array.MakeFromData(zcol), array.MakeFromData(zcol), array.MakeFromData(zcol)}
	rec := array.NewRecordBatch(BatchSchema(false), cols, int64(rows))
	defer rec.Release()
	var buf bytes.Buffer
	w := ipc.NewWriter(&buf, ipc.WithSchema(rec.Schema()), ipc.WithZstd())
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// A compressed Arrow stream of a few tens of kilobytes declared a batch
// of hundreds of megabytes, and Decode let the IPC reader allocate all of
// it before any check: 110 KB took serve to 2 GB, and a message of
// max_message_bytes would need some 19 GB, a fatal out-of-memory (not a
// panic that recover() catches). Decode now refuses it as too large, and
// the memory taken while doing so stays near the decode limit: measured
// with the Go runtime's own count of bytes allocated (runtime.MemStats
// TotalAlloc), which the old decoder took past 128 MiB for this stream.
func TestDecodeRefusesCompressionBomb(t *testing.T) {
	const rows = 4 << 20              // 4 columns x 8 bytes: 128 MiB decoded
	data := zstdStream(t, rows, 0, 0) // all times 0: fails validation, once decoded
	if len(data) > 256<<10 {
		t.Fatalf("test stream is %d bytes, want a small one", len(data))
	}
	runtime.GC()
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	b, err := Decode("uc.data.fenwick-lane.s1", ContentArrow, data)
	runtime.ReadMemStats(&after)
	if err == nil {
		t.Fatalf("%d-byte stream of %d rows decoded to %d samples, want it refused", len(data), rows, b.Len())
	}
	took := after.TotalAlloc - before.TotalAlloc
	t.Logf("%d bytes on the wire, %d decoded declared; %d bytes allocated; %v", len(data), 32*rows, took, err)
	if took > 3*DefaultMaxDecoded {
		t.Errorf("decoding took %d bytes, want at most 3 x the %d-byte decode limit", took, DefaultMaxDecoded)
	}
	if !errors.Is(err, ErrDecodedTooLarge) || !errors.Is(err, ErrMalformed) {
		t.Errorf("error %v does not wrap ErrDecodedTooLarge and ErrMalformed", err)
	}
	if !strings.Contains(err.Error(), "decode limit") {
		t.Errorf("error %q does not name the decode limit", err)
	}
}

// A compressed stream within the limit decodes as before, and the limit
// counts all that the reader takes: a batch of 100,000 rows (3.2 MB
// decoded, well compressed) decodes under the default limit and is
// refused under a limit of 1 MB.
func TestDecodeLimitKeepsCompressedBatches(t *testing.T) {
	const rows = 100000
	data := zstdStream(t, rows, 1.8e9, 1000)
	b, err := Decode("uc.data.fenwick-lane.s1", "", data) // sniffed, as over MQTT
	if err != nil {
		t.Fatal(err)
	}
	if b.Len() != rows || b.Time[rows-1] != 1.8e9+float64(rows-1)/1000 || b.Bz[rows-1] != 0 {
		t.Errorf("decoded %d rows, last time %v; want %d, %v", b.Len(), b.Time[b.Len()-1], rows, 1.8e9+float64(rows-1)/1000)
	}
	if _, err := DecodeLimit("uc.data.fenwick-lane.s1", ContentArrow, data, 1<<20); !errors.Is(err, ErrDecodedTooLarge) {
		t.Errorf("3.2 MB batch under a 1 MiB limit: %v, want ErrDecodedTooLarge", err)
	}
	// Uncompressed, as EncodeArrow writes: decodes at the default limit.
	plain, err := EncodeArrow(&Batch{Time: b.Time[:1000], Bx: b.Bx[:1000], By: b.By[:1000], Bz: b.Bz[:1000]})
	if err != nil {
		t.Fatal(err)
	}
	if got, err := Decode("uc.data.fenwick-lane.s1", ContentArrow, plain); err != nil || got.Len() != 1000 {
		t.Errorf("uncompressed 1000-row batch: %v", err)
	}
}
