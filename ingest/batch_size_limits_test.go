package ingest

import (
	"encoding/binary"
	"os"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
)

// lowerLimits lowers the size limits in force for one test (the real ones
// are 1 GiB, too large to write in a test).
func lowerLimits(t *testing.T, buffer int, pipe int64) {
	t.Helper()
	b, p := maxBuffer, maxPipeMessage
	maxBuffer, maxPipeMessage = buffer, pipe
	t.Cleanup(func() { maxBuffer, maxPipeMessage = b, p })
}

// oneBatchLog writes a 4-column float64 log of n rows in one record batch
// (a body of 32n bytes, each column 8n) as name (.arrow or .arrows). The
// readings are invented.
func oneBatchLog(t *testing.T, name string, n int) string {
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	return writeArrowBatches(t, name, sc, func(b *array.RecordBuilder) {
		for i := 0; i < n; i++ {
			b.Field(0).(*array.Float64Builder).Append(float64(i) / 10)
			b.Field(1).(*array.Float64Builder).Append(120.5 + float64(i%7))
			b.Field(2).(*array.Float64Builder).Append(18859.2 - float64(i%5))
			b.Field(3).(*array.Float64Builder).Append(-46214.0 + float64(i%3))
		}
	})
}

// TestOneBatchOverBufferLimitRead: a valid log whose one record batch is
// larger than the one-buffer limit (MaxBuffer, lowered here to 16 KiB),
// each of its columns under it, is read whole from an Arrow IPC stream
// file and from an Arrow IPC file. Before, the limit was applied to the
// whole batch body: a 1.18 GB stream of 13.6 million rows in one batch was
// refused as "a buffer of 1183896064 bytes asked for, over the limit of
// 1073741824 bytes for one buffer (a corrupt length?)", and so were these
// (60000-byte body over the 16384 limit).
func TestOneBatchOverBufferLimitRead(t *testing.T) {
	lowerLimits(t, 16<<10, 16<<10)
	const n = 1875 // 15000 bytes a column, 60000 a batch
	for _, name := range []string{"big-batch.arrows", "big-batch.arrow"} {
		s, err := ReadSamples(oneBatchLog(t, name, n), WithAllocator(checked(t)))
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if s.Len() != n || s.Time[n-1] != float64(n-1)/10 {
			t.Errorf("%s: %d rows, want %d", name, s.Len(), n)
		}
	}
}

// TestPipeMessageLimitWords: from a pipe, whose length is not known, a
// stream message body over MaxPipeMessage (lowered here to 16 KiB) is
// refused before it is read, with the number and what to do: save the
// stream to a file, or write it in smaller record batches. The same file
// read as a file is read whole.
func TestPipeMessageLimitWords(t *testing.T) {
	lowerLimits(t, 16<<10, 16<<10)
	p := oneBatchLog(t, "big-batch.arrows", 1875)
	_, err := ReadSamples(fifoOf(t, p))
	for _, want := range []string{"declares a body of 60000 bytes, over the limit of 16384", "save it to a file and read the file", "smaller record batches"} {
		wantErr(t, err, want)
	}
	if strings.Contains(err.Error(), "corrupt") {
		t.Errorf("a size limit worded as corruption: %v", err)
	}
}

// TestArrowFileBlockPastEndWords: an Arrow IPC file whose footer declares
// a record batch body that runs past the end of the file is refused with
// the numbers, as a truncated or corrupt file. arrow-go's own limit (256
// MiB) is no longer in force: the body is bounded by the file's size.
// Before, a declared body of 300 MiB was refused with "exceeds limit
// 268435456", arrow-go's body size limit, as if the file were corrupt for
// that; a valid 296 MB batch was refused the same way.
func TestArrowFileBlockPastEndWords(t *testing.T) {
	p := oneBatchLog(t, "cut-block.arrow", 10)
	s, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	// The footer's record batch block (offset int64, meta int32, pad,
	// body int64): find the body length 320 (4 columns of 10 float64).
	n := len(s)
	foot := n - 10 - int(binary.LittleEndian.Uint32(s[n-10:]))
	at := -1
	for i := foot; i+8 <= n-10; i++ {
		if binary.LittleEndian.Uint64(s[i:]) == 320 && binary.LittleEndian.Uint32(s[i-8:]) > 0 {
			at = i
		}
	}
	if at < 0 {
		t.Fatal("no block with a body of 320 bytes in the footer")
	}
	binary.LittleEndian.PutUint64(s[at:], 300<<20)
	p = writeFile(t, "cut-block.arrow", string(s))
	_, err = ReadSamples(p)
	wantErr(t, err, "314572800")
	wantErr(t, err, "truncated or corrupt")
	if err != nil && strings.Contains(err.Error(), "268435456") {
		t.Errorf("arrow-go's 256 MiB limit still in force: %v", err)
	}
}
