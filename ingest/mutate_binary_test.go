package ingest

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestMutatedBinaryLogs reads Arrow IPC files, Arrow IPC streams and
// Parquet files mutated at random (bit flips, bytes and 4- or 8-byte
// integers overwritten, cuts) from a fixed seed, through Open. Each must
// be read or refused with an "ingest: " error: no panic out of the
// reader, and at most 256 MiB allocated for an input of some 2 KB. The
// reviewer's mutation run found the schema counts that killed the process
// (within 100 mutations a format) and record batches whose buffers are
// shorter than their lengths (12 in 60,000), now refused.
//
// 200 mutations a format by default; UC_MUTATE=N runs N, and
// UC_MUTATE_DIR=DIR keeps each input being read as DIR/current.FORMAT
// (which survives a fatal error) and each failing one.
func TestMutatedBinaryLogs(t *testing.T) {
	n := 200
	if s := os.Getenv("UC_MUTATE"); s != "" {
		var err error
		if n, err = strconv.Atoi(s); err != nil {
			t.Fatalf("UC_MUTATE=%q: %v", s, err)
		}
	}
	keep := os.Getenv("UC_MUTATE_DIR")
	dir := t.TempDir()
	csv := writeFile(t, "s.csv", seedCSV)
	for _, format := range []Format{FormatArrowFile, FormatArrowStream, FormatParquet} {
		r, err := Open(csv, WithAllowMissing(true))
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := WriteReaderTo(&buf, "s", format, r); err != nil {
			t.Fatal(err)
		}
		r.Release()
		seed := buf.Bytes()
		rng := rand.New(rand.NewSource(int64(len(seed))))
		bad := 0
		for i := 0; i < n && bad < 5; i++ {
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
			p := filepath.Join(dir, "m."+string(format))
			if err := os.WriteFile(p, d, 0o644); err != nil {
				t.Fatal(err)
			}
			if keep != "" {
				os.WriteFile(filepath.Join(keep, "current."+string(format)), d, 0o644)
			}
			var perr any
			var rerr error
			alloc := allocatedBy(func() {
				defer func() { perr = recover() }()
				r, err := Open(p, WithBatchSize(3))
				if err != nil {
					rerr = err
					return
				}
				for r.Next() {
				}
				rerr = r.Err()
				r.Release()
			})
			var what []string
			if perr != nil {
				what = append(what, fmt.Sprintf("panic: %v", perr))
			}
			if rerr != nil && !strings.HasPrefix(rerr.Error(), "ingest: ") {
				what = append(what, fmt.Sprintf("error without the ingest prefix: %v", rerr))
			}
			if alloc > 256<<20 {
				what = append(what, fmt.Sprintf("%d MiB allocated", alloc>>20))
			}
			if len(what) > 0 {
				bad++
				name := fmt.Sprintf("%s mutation %d", format, i)
				if keep != "" {
					name = filepath.Join(keep, fmt.Sprintf("%s-%d.%s", format, i, format))
					os.WriteFile(name, d, 0o644)
				}
				t.Errorf("%s: %s", name, strings.Join(what, "; "))
			}
		}
	}
}
