package ingest

import (
	"fmt"
	"strings"
	"testing"
)

// TestWithProgress: the callback sees the running row count after every batch,
// ending at the file's row count, and the wrapper keeps the column mapping
// visible to Inspect.
func TestWithProgress(t *testing.T) {
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz\n")
	// CSV is parsed in chunks of about 1 MiB, each one or more batches: 150,000
	// rows (about 4 MB) give several.
	const rows = 150000
	for i := range rows {
		fmt.Fprintf(&b, "%d,0,%d,0,1,2,3\n", i, i)
	}
	path := writeFile(t, "progress.csv", b.String())
	var seen []int64
	r, err := Open(path, WithBatchSize(1000), WithProgress(func(n int64) { seen = append(seen, n) }))
	if err != nil {
		t.Fatal(err)
	}
	defer r.Release()
	var total int64
	for r.Next() {
		total += r.RecordBatch().NumRows()
		if seen[len(seen)-1] != total {
			t.Fatalf("progress %d after %d rows", seen[len(seen)-1], total)
		}
	}
	if err := r.Err(); err != nil {
		t.Fatal(err)
	}
	if total != rows || len(seen) < 3 {
		t.Errorf("read %d rows in %d progress calls, want %d rows in at least 3", total, len(seen), rows)
	}
	if planOf(r) == nil {
		t.Error("the progress wrapper hides the reader's column plan")
	}
}
