package ingest

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/memory"
)

// binarySeed converts a small CSV log to format, for the seed corpus.
func binarySeed(f *testing.F, format Format, csvText string, opts ...Option) []byte {
	f.Helper()
	dir := f.TempDir()
	p := filepath.Join(dir, "seed.csv")
	if err := os.WriteFile(p, []byte(csvText), 0o644); err != nil {
		f.Fatal(err)
	}
	r, err := Open(p, opts...)
	if err != nil {
		f.Fatal(err)
	}
	defer r.Release()
	var buf bytes.Buffer
	if err := WriteReaderTo(&buf, "seed", format, r); err != nil {
		f.Fatal(err)
	}
	return buf.Bytes()
}

const seedCSV = "time,x,y,z,bx,by,bz,group\n0,0,0,0,1,2,3,T01\n1,0.1,0,0,1.5,2,3,T01\n2,0.2,0,0,NaN,2,3,T02\n"
const seedLatLon = "time,lat,lon,height,bx,by,bz\n0,52.6,0.1,4,1,2,3\n1,52.60001,0.1,4,1,2,3\n"

// fuzzOpenFile writes data to a file and reads it through Open with a
// checked allocator: no panic, no leak, no empty batch, errors prefixed.
func fuzzOpenFile(t *testing.T, data []byte, ext string, mode uint8) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	p := filepath.Join(t.TempDir(), "fuzz"+ext)
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	opts := []Option{WithAllocator(mem), WithBatchSize(int(mode%7) + 1)}
	if mode&8 != 0 {
		opts = append(opts, WithAllowMissing(true), WithAllowBackwards(true))
	}
	r, err := Open(p, opts...)
	if err != nil {
		if !strings.HasPrefix(err.Error(), "ingest: ") {
			t.Fatalf("open error without prefix: %v", err)
		}
		return
	}
	defer r.Release()
	for r.Next() {
		if r.RecordBatch().NumRows() == 0 {
			t.Fatal("empty batch")
		}
	}
	if err := r.Err(); err != nil && !strings.HasPrefix(err.Error(), "ingest: ") {
		t.Fatalf("error without prefix: %v", err)
	}
}

// FuzzArrowFile feeds mutated Arrow IPC files to Open.
func FuzzArrowFile(f *testing.F) {
	f.Add(binarySeed(f, FormatArrowFile, seedCSV, WithAllowMissing(true)), uint8(0))
	f.Add(binarySeed(f, FormatArrowFile, seedLatLon), uint8(9))
	f.Fuzz(func(t *testing.T, data []byte, mode uint8) { fuzzOpenFile(t, data, ".arrow", mode) })
}

// FuzzArrowStream feeds mutated Arrow IPC streams to Open.
func FuzzArrowStream(f *testing.F) {
	f.Add(binarySeed(f, FormatArrowStream, seedCSV, WithAllowMissing(true)), uint8(0))
	f.Add(binarySeed(f, FormatArrowStream, seedLatLon), uint8(9))
	f.Fuzz(func(t *testing.T, data []byte, mode uint8) { fuzzOpenFile(t, data, ".arrows", mode) })
}

// FuzzParquet feeds mutated Parquet files to Open.
func FuzzParquet(f *testing.F) {
	f.Add(binarySeed(f, FormatParquet, seedCSV, WithAllowMissing(true)), uint8(0))
	f.Add(binarySeed(f, FormatParquet, seedLatLon), uint8(9))
	b, err := os.ReadFile("testdata/lz4-hadoop-arrowrs.parquet")
	if err != nil {
		f.Fatal(err)
	}
	f.Add(b, uint8(1))
	f.Fuzz(func(t *testing.T, data []byte, mode uint8) { fuzzOpenFile(t, data, ".parquet", mode) })
}

// FuzzCSVMapped feeds CSV text through Open with a column mapping and units.
func FuzzCSVMapped(f *testing.F) {
	f.Add([]byte("t;E;N;H;X_uT;Y_uT;Z_uT;trav\n0;1;2;3;4;5;6;a\n1;1;2;3;4;5;6;a\n"), uint8(0))
	f.Add([]byte("t,E,N,H,X,Y,Z,trav\n2024-01-01 00:00:00,1,2,3,4,5,6,a\n"), uint8(8))
	f.Fuzz(func(t *testing.T, data []byte, mode uint8) {
		mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
		defer mem.AssertSize(t, 0)
		p := filepath.Join(t.TempDir(), "fuzz.csv")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		opts := []Option{WithAllocator(mem), WithBatchSize(int(mode%5) + 1),
			WithColumns("time=t,x=E,y=N,z=H,bx=X,by=Y,bz=Z,group=trav"), WithUnits("bx=uT,by=uT,bz=uT,x=cm")}
		if mode&8 != 0 {
			opts = append(opts, WithAllowMissing(true), WithAllowBackwards(true))
		}
		r, err := Open(p, opts...)
		if err != nil {
			return
		}
		defer r.Release()
		for r.Next() {
			if r.RecordBatch().NumRows() == 0 {
				t.Fatal("empty batch")
			}
		}
	})
}
