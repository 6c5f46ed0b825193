package ingest

import (
	"encoding/binary"
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// TestMutateReadersRV mutates valid Arrow file/stream and Parquet logs at
// random (bit flips, overwrites with large int32/int64 values, cuts) and
// reads each through Open. It records inputs that panic, allocate more than
// 256 MiB or take more than 2 s. Review helper (rv25e); set RV_MUTATE=N.
func TestMutateReadersRV(t *testing.T) {
	n := 0
	fmt.Sscan(os.Getenv("RV_MUTATE"), &n)
	if n == 0 {
		t.Skip("set RV_MUTATE")
	}
	out := os.Getenv("RV_MUTATE_DIR")
	if out == "" {
		out = t.TempDir()
	}
	dir := t.TempDir()
	csvp := filepath.Join(dir, "s.csv")
	os.WriteFile(csvp, []byte(seedCSV), 0o644)
	for _, format := range []Format{FormatArrowFile, FormatArrowStream, FormatParquet} {
		if f := os.Getenv("RV_FORMATS"); f != "" && !strings.Contains(f, string(format)+",") {
			continue
		}
		r, err := Open(csvp, WithAllowMissing(true))
		if err != nil {
			t.Fatal(err)
		}
		var buf bytesBuffer
		if err := WriteReaderTo(&buf, "s", format, r); err != nil {
			t.Fatal(err)
		}
		r.Release()
		seed := buf.b
		rng := rand.New(rand.NewSource(int64(len(seed))))
		bad := 0
		for i := 0; i < n; i++ {
			d := append([]byte(nil), seed...)
			for k := rng.Intn(3) + 1; k > 0; k-- {
				p := rng.Intn(len(d))
				switch rng.Intn(5) {
				case 0:
					d[p] ^= 1 << uint(rng.Intn(8))
				case 1:
					if p+4 <= len(d) {
						binary.LittleEndian.PutUint32(d[p:], uint32(rng.Int31()))
					}
				case 2:
					if p+8 <= len(d) {
						binary.LittleEndian.PutUint64(d[p:], uint64(rng.Int63()))
					}
				case 3:
					d = d[:p+1]
				case 4:
					d[p] = byte(rng.Intn(256))
				}
			}
			p := filepath.Join(dir, fmt.Sprintf("m.%s", format))
			os.WriteFile(p, d, 0o644)
			os.WriteFile(filepath.Join(out, "current."+string(format)), d, 0o644)
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			start := time.Now()
			var perr any
			func() {
				defer func() { perr = recover() }()
				r, err := Open(p, WithBatchSize(3))
				if err != nil {
					return
				}
				for r.Next() {
				}
				r.Release()
			}()
			el := time.Since(start)
			runtime.ReadMemStats(&after)
			alloc := after.TotalAlloc - before.TotalAlloc
			if perr != nil || alloc > 256<<20 || el > 2*time.Second {
				bad++
				name := filepath.Join(out, fmt.Sprintf("%s-%d.%s", format, i, format))
				os.WriteFile(name, d, 0o644)
				t.Logf("%s: panic=%v alloc=%d MiB time=%v", name, perr, alloc>>20, el)
				if bad > 5 {
					break
				}
			}
		}
	}
}

type bytesBuffer struct{ b []byte }

func (w *bytesBuffer) Write(p []byte) (int, error) { w.b = append(w.b, p...); return len(p), nil }
