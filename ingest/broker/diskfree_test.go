package broker

import (
	"path/filepath"
	"testing"
)

// TestFreeBytes: the free space read for a directory is positive (the
// test writes into it), and a directory that does not exist is an error,
// not a zero (statfs on Unix, GetDiskFreeSpaceEx on Windows).
func TestFreeBytes(t *testing.T) {
	dir := t.TempDir()
	n, err := freeBytes(dir)
	if err != nil || n <= 0 {
		t.Errorf("free bytes of %s: %d, %v; want > 0", dir, n, err)
	}
	if n, err := freeBytes(filepath.Join(dir, "no", "such")); err == nil {
		t.Errorf("free bytes of a missing directory: %d, no error", n)
	}
}
