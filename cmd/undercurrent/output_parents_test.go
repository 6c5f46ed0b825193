package main

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestStageDirParents: stageDir makes the missing parents of its
// directory and, when the run fails or is interrupted, removes the ones
// it made (and only those), so nothing partial is left behind.
func TestStageDirParents(t *testing.T) {
	root := t.TempDir()
	keep := filepath.Join(root, "kept")
	if err := os.Mkdir(keep, 0o755); err != nil {
		t.Fatal(err)
	}
	write := func(tmp string) error { return os.WriteFile(filepath.Join(tmp, "results.json"), []byte("{}"), 0o644) }
	boom := errors.New("fit failed")
	ctx, cancel := context.WithCancel(context.Background())
	for _, c := range []struct {
		name string
		fill func(string) error
		want error
	}{
		{"fails", func(tmp string) error { write(tmp); return boom }, boom},
		{"interrupted", func(tmp string) error { write(tmp); cancel(); return ctx.Err() }, context.Canceled},
	} {
		out := filepath.Join(keep, "site", "day1", "res")
		if err := stageDir(context.Background(), out, nil, c.fill); !errors.Is(err, c.want) {
			t.Errorf("%s: error %v, want %v", c.name, err, c.want)
		}
		if _, err := os.Stat(filepath.Join(keep, "site")); !os.IsNotExist(err) {
			t.Errorf("%s: the parent made for the run was left behind (%v)", c.name, err)
		}
		if entries, err := os.ReadDir(keep); err != nil || len(entries) != 0 {
			t.Errorf("%s: %s holds %v (%v); want it kept, empty", c.name, keep, entries, err)
		}
	}
	out := filepath.Join(keep, "site", "day1", "res")
	if err := stageDir(context.Background(), out, nil, write); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(out, "results.json")); err != nil {
		t.Errorf("results not written under the parents made: %v", err)
	}
	if entries, _ := os.ReadDir(filepath.Join(keep, "site", "day1")); len(entries) != 1 {
		t.Errorf("beside the results: %v; want nothing (no temporary left)", entries)
	}
}

// TestLocateOutParents: locate -o and demo -o make missing parent
// directories; a locate that fails leaves none; a parent that is a file is
// refused before the work, naming it.
func TestLocateOutParents(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	res := filepath.Join(dir, "fenwick", "2026-12-02", "res")
	if code, _, errOut := cli(t, "locate", "-o", res, log); code != 0 {
		t.Fatalf("locate -o with missing parents: exit %d: %s", code, errOut)
	}
	if _, err := os.Stat(filepath.Join(res, "results.json")); err != nil {
		t.Errorf("locate -o with missing parents: %v", err)
	}
	failed := filepath.Join(dir, "failed", "res")
	code, _, errOut := cli(t, "locate", "--freq", "1e6", "-o", failed, log)
	if code != 1 {
		t.Errorf("locate above Nyquist: exit %d, stderr %q; want a failure", code, errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, "failed")); !os.IsNotExist(err) {
		t.Errorf("a failed locate left its output's parent behind (%v)", err)
	}
	code, _, errOut = cli(t, "locate", "-o", filepath.Join(log, "sub", "res"), log)
	if code != 2 || !strings.Contains(errOut, "output directory "+log+" is not a directory") {
		t.Errorf("a parent that is a file: exit %d, stderr %q", code, errOut)
	}
	demo := filepath.Join(dir, "out", "demo")
	if code, _, errOut := cli(t, "demo", "-o", demo); code != 0 {
		t.Fatalf("demo -o out/demo without out: exit %d: %s", code, errOut)
	}
	for _, name := range append([]string{demoLog}, resultFiles...) {
		if _, err := os.Stat(filepath.Join(demo, name)); err != nil {
			t.Errorf("demo: %v", err)
		}
	}
}
