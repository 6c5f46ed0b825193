package ingest

import (
	"context"
	"errors"
	"path/filepath"
	"slices"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// WithContext stops a read between batches once its context is done, with
// an error that is the context's, and otherwise reads as without it,
// keeping what ReadSamples carries (source, frame, warnings). Read: the
// real Boulder IAGA-2002 minute file (1440 rows) in batches of 100, and a
// simulated CSV log in chunks of 4 KiB. Before, a caller could cancel only
// through a wrapper of its own, which Collect does not see through.
func TestReadSamplesWithContext(t *testing.T) {
	dir := t.TempDir()
	s := &Samples{}
	for i := range 3000 {
		v := float64(i)
		s.Time = append(s.Time, 1.7e9+0.1*v)
		s.X, s.Y, s.Z = append(s.X, 0.01*v), append(s.Y, 0), append(s.Z, 0.3)
		s.Bx, s.By, s.Bz = append(s.Bx, 120+v/100), append(s.By, 18650), append(s.Bz, -45200)
	}
	csv := filepath.Join(dir, "walk.csv")
	if err := WriteSamples(csv, s); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		path string
		opts []Option
	}{
		{filepath.Join(ingesttest.IAGADir(t), "bou20141101vmin.min"), []Option{WithBatchSize(100)}},
		{csv, []Option{withChunkBytes(4096)}},
	} {
		name := filepath.Base(c.path)
		all := 0
		plain, err := ReadSamples(c.path, append(c.opts, WithProgress(func(int64) { all++ }))...)
		if err != nil {
			t.Fatal(err)
		}
		if all < 3 {
			t.Fatalf("%s: read in %d batches, want several", name, all)
		}
		got, err := ReadSamples(c.path, append(c.opts, WithContext(context.Background()))...)
		if err != nil {
			t.Fatal(err)
		}
		if got.Len() != plain.Len() || got.Source != plain.Source || got.InFrame != plain.InFrame || !slices.Equal(got.Warnings, plain.Warnings) {
			t.Errorf("%s with a live context: %d rows, source %q, frame %v, warnings %q; without: %d, %q, %v, %q",
				name, got.Len(), got.Source, got.InFrame, got.Warnings, plain.Len(), plain.Source, plain.InFrame, plain.Warnings)
		}
		// Cancelled after the first batch handed out.
		ctx, cancel := context.WithCancel(context.Background())
		batches := 0
		progress := WithProgress(func(int64) { batches++; cancel() })
		cut, err := ReadSamples(c.path, append(c.opts, progress, WithContext(ctx))...)
		var ie *Error
		if cut != nil || !errors.As(err, &ie) || !errors.Is(err, context.Canceled) || batches != 1 {
			t.Errorf("%s cancelled after a batch: samples %v, err %v, %d batches; want none and an *Error that is context.Canceled after 1", name, cut != nil, err, batches)
		}
		cancel()
	}
}
