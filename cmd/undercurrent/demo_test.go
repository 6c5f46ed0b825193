package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestDemoRefusesForeignDirectory checks that the demo will not write into
// a directory holding someone else's files, and leaves it as it was.
func TestDemoRefusesForeignDirectory(t *testing.T) {
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "survey-2025.csv"), []byte("keep"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := cli(t, "demo", "-o", dir)
	if code != 2 || !strings.Contains(stderr, "survey-2025.csv") {
		t.Errorf("exit %d, stderr %q", code, stderr)
	}
	if got := entries(t, dir); len(got) != 1 {
		t.Errorf("the directory now holds %v", got)
	}
	if code, _, stderr := cli(t, "demo", "extra"); code != 2 || !strings.Contains(stderr, "no arguments") {
		t.Errorf("demo with an argument: exit %d, %q", code, stderr)
	}
}

// TestDemoLogReadsBack writes the demo's log in every format ingest writes
// and reads it back: locate sees what simulate wrote, row for row, group
// labels included (a large log, so that readers work in many batches).
func TestDemoLogReadsBack(t *testing.T) {
	if testing.Short() {
		t.Skip("writes and reads 155,000 readings in four formats")
	}
	sc, err := simulate.Demo()
	if err != nil {
		t.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, ext := range []string{".csv", ".arrow", ".arrows", ".parquet"} {
		path := filepath.Join(dir, "fenwick-lane"+ext)
		if err := ingest.WriteSamples(path, s); err != nil {
			t.Fatal(err)
		}
		r, err := ingest.ReadSamples(path)
		if err != nil {
			t.Fatal(err)
		}
		if r.Len() != s.Len() {
			t.Errorf("%s: %d rows read back, %d written", ext, r.Len(), s.Len())
			continue
		}
		bad := 0
		for i := range s.Len() {
			if r.Time[i] != s.Time[i] || r.X[i] != s.X[i] || r.Bz[i] != s.Bz[i] || r.Group[i] != s.Group[i] {
				if bad == 0 {
					t.Errorf("%s: row %d read back as time %v, x %v, bz %v, group %q; written %v, %v, %v, %q (ingest)",
						ext, i, r.Time[i], r.X[i], r.Bz[i], r.Group[i], s.Time[i], s.X[i], s.Bz[i], s.Group[i])
				}
				bad++
			}
		}
		if bad > 0 {
			t.Errorf("%s: %d of %d rows differ", ext, bad, s.Len())
		}
	}
}
