package ingest

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// Seed corpora live in testdata/fuzz/FuzzCSV and testdata/fuzz/FuzzIAGA.
// Run with: go test -run '^$' -fuzz FuzzCSV -fuzztime 30s ./ingest

// FuzzCSV feeds arbitrary bytes to the CSV reader with small chunks and
// two workers. It must never panic, must free every batch, and any rows it
// accepts must be in time order with finite values.
func FuzzCSV(f *testing.F) {
	f.Add([]byte("time,bx,by,bz\n0,1,2,3\n1,1,2,3\n"), uint8(0))
	f.Add([]byte("# c\nt;x;y;z;Bx_uT;By_uT;Bz_uT;group\n0;1;2;3;4;5;6;\"a;b\"\n"), uint8(1))
	f.Add([]byte("time,lat,lon,height,bx,by,bz\n0,52.6,0.1,4,1,2,3\n"), uint8(2))
	f.Add([]byte("time bx by bz\n2024-01-01T00:00:00Z 1 2 3\n"), uint8(3))
	f.Fuzz(func(t *testing.T, data []byte, mode uint8) {
		fast, fastErr := fuzzReadCSV(t, data, mode)
		slow, slowErr := fuzzReadCSV(t, data, mode, withSlowPathOnly())
		if fastErr != slowErr {
			t.Fatalf("fast path error %q, general path error %q", fastErr, slowErr)
		}
		if len(fast) != len(slow) {
			t.Fatalf("fast path %d values, general path %d", len(fast), len(slow))
		}
		for i := range fast {
			if math.Float64bits(fast[i]) != math.Float64bits(slow[i]) {
				t.Fatalf("value %d: fast path %v, general path %v", i, fast[i], slow[i])
			}
		}
	})
}

// fuzzReadCSV reads data and returns every float value read (column by
// column, batch by batch) and the error text.
func fuzzReadCSV(t *testing.T, data []byte, mode uint8, extra ...Option) ([]float64, string) {
	mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
	defer mem.AssertSize(t, 0)
	opts := append([]Option{WithAllocator(mem), withChunkBytes(int(mode%32) + 1), WithWorkers(2)}, extra...)
	if mode&32 != 0 {
		opts = append(opts, WithAllowMissing(true), WithAllowBackwards(true))
	}
	if mode&64 != 0 {
		opts = append(opts, WithFrame(FrameNED))
	}
	cfg := newConfig(opts)
	r, err := newCSVReader("fuzz.csv", bytes.NewReader(data), cfg)
	if err != nil {
		return nil, err.Error()
	}
	defer r.Release()
	var out []float64
	last := -1e308
	for r.Next() {
		rec := r.RecordBatch()
		if rec.NumRows() == 0 {
			t.Fatal("empty batch")
		}
		for i := 0; i < int(rec.NumCols()); i++ {
			if a, ok := rec.Column(i).(*array.Float64); ok {
				out = append(out, a.Float64Values()...)
			}
		}
		if mode&32 != 0 {
			continue
		}
		for _, v := range floatCol(rec, 0) {
			if v < last || v != v {
				t.Fatalf("time %v after %v accepted", v, last)
			}
			last = v
		}
	}
	if err := r.Err(); err != nil {
		if !strings.HasPrefix(err.Error(), "ingest: ") {
			t.Fatalf("error without prefix: %v", err)
		}
		return out, err.Error()
	}
	return out, ""
}

// FuzzIAGA feeds arbitrary bytes to the IAGA-2002 reader.
func FuzzIAGA(f *testing.F) {
	head := " Format                 IAGA-2002                                    |\n IAGA CODE              HFN                                          |\n"
	f.Add([]byte(head + "DATE       TIME         DOY     HFNH      HFND      HFNZ      HFNF   |\n2024-03-01 00:00:00.000 061     17500.00     -9.99  46000.00  49200.00\n"))
	f.Add([]byte(head + "DATE       TIME         DOY     HFNX      HFNY      HFNZ      HFNF   |\r\n2024-03-01 00:00:00.000 061     99999.00  88888.00  46000.00  49200.00\r\n"))
	f.Add([]byte(" Reported               UVWNUL                                       |\nDATE       TIME         DOY     HFNU      HFNV      HFNW      HFNNUL |\n2024-03-01 00:00:01.000 061      1.0  2.0  3.0  99999.00\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		mem := memory.NewCheckedAllocator(memory.NewGoAllocator())
		defer mem.AssertSize(t, 0)
		cfg := newConfig([]Option{WithAllocator(mem), WithBatchSize(2)})
		r, err := newIAGAReader("fuzz.min", bytes.NewReader(data), cfg)
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
