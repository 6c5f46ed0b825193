package ingest

import (
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"

	"undercurrent/ingest/ingesttest"
)

// fifoOf makes a named pipe (POSIX mkfifo) and writes the bytes of file
// into it from another goroutine, as "cat file > fifo" would.
func fifoOf(t *testing.T, file string) string {
	t.Helper()
	data, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	return fifoFed(t, func(w io.Writer) {
		w.Write(data) // a reader that stops early leaves EPIPE: fine
	})
}

// fifoFed makes a named pipe and, from another goroutine, opens it for
// writing, hands it to feed and closes it; the test's cleanup waits for
// the writer. It skips the test where named pipes cannot be made.
func fifoFed(t *testing.T, feed func(w io.Writer)) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "log.fifo")
	if err := mkfifo(p); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		w, err := os.OpenFile(p, os.O_WRONLY, 0)
		if err != nil {
			return
		}
		defer w.Close()
		feed(w)
	}()
	t.Cleanup(func() { <-done })
	return p
}

// TestReadFromPipe: a CSV log, an IAGA-2002 file and an Arrow IPC stream
// are read from a pipe, in one pass, the same as from the file: the
// stream format is made to be read so (Arrow columnar format, IPC
// streaming format). An Arrow IPC file or a Parquet file, read from its
// footer, is refused from a pipe with a message that says why and what to
// do. Before, every pipe was refused with "cannot seek: illegal seek".
// The readings are invented.
func TestReadFromPipe(t *testing.T) {
	csv := writeFile(t, "harrow-fen.csv", "time,bx,by,bz,group\n0,120.5,18859.19,-46214.04,H1\n1,120.6,18859.2,-46214.4,H1\n2,120.7,18859.21,-46214.8,H2\n")
	sc := arrow.NewSchema([]arrow.Field{
		{Name: "time", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bx", Type: arrow.PrimitiveTypes.Float64},
		{Name: "by", Type: arrow.PrimitiveTypes.Float64},
		{Name: "bz", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	fillAt := func(t0 float64) func(b *array.RecordBuilder) {
		return func(b *array.RecordBuilder) {
			b.Field(0).(*array.Float64Builder).AppendValues([]float64{t0, t0 + 1, t0 + 2}, nil)
			b.Field(1).(*array.Float64Builder).AppendValues([]float64{120.5, 120.6, 120.7}, nil)
			b.Field(2).(*array.Float64Builder).AppendValues([]float64{18859.19, 18859.2, 18859.21}, nil)
			b.Field(3).(*array.Float64Builder).AppendValues([]float64{-46214.04, -46214.4, -46214.8}, nil)
		}
	}
	fill := fillAt(0)
	stream := writeArrowBatches(t, "harrow-fen.arrows", sc, fillAt(0), fillAt(3))
	// A real Boulder minute file (USGS, public domain).
	iaga := filepath.Join(ingesttest.IAGADir(t), "bou20141101vmin.min")
	for _, file := range []string{csv, stream, iaga} {
		want, err := ReadSamples(file)
		if err != nil {
			t.Fatal(err)
		}
		got, err := ReadSamples(fifoOf(t, file), WithAllocator(checked(t)))
		if err != nil {
			t.Fatalf("%s from a pipe: %v", filepath.Base(file), err)
		}
		if got.Len() != want.Len() || !sameFloats(got.Time, want.Time) || !sameFloats(got.Bz, want.Bz) {
			t.Errorf("%s from a pipe: %d rows, want %d, the same as the file", filepath.Base(file), got.Len(), want.Len())
		}
	}
	for _, name := range []string{"harrow-fen.arrow", "harrow-fen.parquet"} {
		_, err := ReadSamples(fifoOf(t, writeArrowBatches(t, name, sc, fill)))
		wantErr(t, err, "is read from its footer, at its end, so it must be a regular file, not a pipe")
	}
}
