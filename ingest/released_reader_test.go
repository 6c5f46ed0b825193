package ingest

import (
	"errors"
	"path/filepath"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// A reader released before the end of its input says so: Next returns
// false and Err is an *Error whose cause is ErrReleased, so that a read
// cancelled by Release does not pass for the whole log. Read to the end,
// a reader's Err stays nil after Release. Simulated logs of 2000 rows
// written by WriteSamples as CSV, Parquet and Arrow (file and stream), a
// real IAGA-2002 file (Boulder, 1440 rows) and NewSamplesReader, read in
// batches of 100 rows where the format allows. Before, Err was nil after an early Release, the
// sign of a clean end.
func TestReleasedReaderNotCleanEnd(t *testing.T) {
	dir := t.TempDir()
	s := &Samples{}
	for i := range 2000 {
		v := float64(i)
		s.Time = append(s.Time, 1.7e9+0.1*v)
		s.X, s.Y, s.Z = append(s.X, 0.01*v), append(s.Y, 0), append(s.Z, 0.3)
		s.Bx, s.By, s.Bz = append(s.Bx, 120+v/100), append(s.By, 18650), append(s.Bz, -45200)
	}
	paths := []string{filepath.Join(ingesttest.IAGADir(t), "bou20141101vmin.min")}
	for _, ext := range []string{"csv", "parquet", "arrow", "arrows"} {
		p := filepath.Join(dir, "walk."+ext)
		if err := WriteSamples(p, s); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	opens := map[string]func() (Reader, error){
		"samples": func() (Reader, error) { return NewSamplesReader(s, 100, nil) },
	}
	for _, p := range paths {
		opens[filepath.Base(p)] = func() (Reader, error) { return Open(p, WithBatchSize(100)) }
	}
	for name, open := range opens {
		t.Run(name, func(t *testing.T) {
			// Released after the first batch, before Next has said the
			// input ended (some formats hold one batch).
			r, err := open()
			if err != nil {
				t.Fatal(err)
			}
			if !r.Next() {
				t.Fatalf("no batch: %v", r.Err())
			}
			r.Release()
			var ie *Error
			if r.Next() {
				t.Error("Next after Release: true")
			}
			if err := r.Err(); !errors.As(err, &ie) || !errors.Is(err, ErrReleased) {
				t.Errorf("Err after an early Release: %v, want an *Error that is ErrReleased", err)
			}
			// Read to the end, then released: a clean end.
			r, err = open()
			if err != nil {
				t.Fatal(err)
			}
			rows := int64(0)
			for r.Next() {
				rows += r.RecordBatch().NumRows()
			}
			r.Release()
			if err := r.Err(); err != nil || rows < 1440 {
				t.Errorf("read to the end (%d rows), then released: Err %v, want nil", rows, err)
			}
		})
	}
}
