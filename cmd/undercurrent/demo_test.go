package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
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
