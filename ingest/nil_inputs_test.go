package ingest

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The entry points that take a reader, samples or a write function return
// an error for a nil one, and leave no file behind; a nil Option changes
// nothing and a nil *Samples has no rows. Before, each of them panicked
// with a nil-pointer dereference.
func TestNilInputsRefused(t *testing.T) {
	dir := t.TempDir()
	errs := []struct {
		name, path string
		f          func(path string) error
	}{
		{"Collect(nil)", "", func(string) error { _, err := Collect(nil); return err }},
		{"NewSamplesReader(nil)", "", func(string) error { _, err := NewSamplesReader(nil, 0, nil); return err }},
		{"WriteSamples(path, nil)", "a.csv", func(p string) error { return WriteSamples(p, nil) }},
		{"WriteReader(path, nil)", "b.parquet", func(p string) error { return WriteReader(p, nil) }},
		{"WriteReaderTo(w, nil)", "", func(string) error { return WriteReaderTo(&bytes.Buffer{}, "c.csv", FormatCSV, nil) }},
		{"WriteReaderTo(nil, r)", "", func(string) error {
			r, err := NewSamplesReader(&Samples{Time: []float64{0}, Bx: []float64{1}, By: []float64{2}, Bz: []float64{3}}, 0, nil)
			if err != nil {
				return nil
			}
			defer r.Release()
			return WriteReaderTo(nil, "d.csv", FormatCSV, r)
		}},
		{"WriteFileAtomic(path, nil)", "e.csv", func(p string) error { return WriteFileAtomic(p, nil) }},
		{"WriteSamples(path, &Samples{})", "f.csv", func(p string) error { return WriteSamples(p, &Samples{}) }},
	}
	for _, c := range errs {
		func() {
			defer func() {
				if v := recover(); v != nil {
					t.Errorf("%s: panic %v", c.name, v)
				}
			}()
			path := ""
			if c.path != "" {
				path = filepath.Join(dir, c.path)
			}
			err := c.f(path)
			if err == nil {
				t.Errorf("%s: no error", c.name)
			} else if strings.Contains(err.Error(), ": :") {
				t.Errorf("%s: %q names no input", c.name, err)
			}
		}()
	}
	if left, _ := os.ReadDir(dir); len(left) > 0 {
		t.Errorf("files left behind: %v", left)
	}
	var s *Samples
	if s.Len() != 0 {
		t.Errorf("(*Samples)(nil).Len() = %d, want 0", s.Len())
	}
	p := filepath.Join(dir, "g.csv")
	if err := os.WriteFile(p, []byte("time,bx,by,bz\n0,1,2,3\n1,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	got, err := ReadSamples(p, nil, WithBatchSize(1), nil)
	if err != nil || got.Len() != 2 {
		t.Errorf("ReadSamples with nil options: %v rows, err %v; want 2 rows", got.Len(), err)
	}
}

// A reader of a one-batch log released after its first Next, before Next
// has said the input ended, cannot know that nothing followed: its Err is
// ErrReleased, worded as "may not be the whole log" (before: "are not the
// whole log", false for such a log). A 2-row CSV is read in one batch.
func TestReleasedAfterOnlyBatchWording(t *testing.T) {
	p := filepath.Join(t.TempDir(), "two.csv")
	if err := os.WriteFile(p, []byte("time,bx,by,bz\n0,1,2,3\n1,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	if !r.Next() || r.RecordBatch().NumRows() != 2 {
		t.Fatalf("first batch: want both rows (err %v)", r.Err())
	}
	r.Release()
	err = r.Err()
	if !errors.Is(err, ErrReleased) || !strings.Contains(err.Error(), "may not be the whole log") || strings.Contains(err.Error(), "are not the whole log") {
		t.Errorf("Err after Release: %v, want ErrReleased saying the rows may not be the whole log", err)
	}
}
