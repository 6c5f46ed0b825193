package ingest

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestWriteFileAtomicSyncs: WriteFileAtomic (calibration files, locate's
// result files, logs written by WriteSamples) forces the whole file to
// the disk (fsync) before the rename and the directory after it, so that
// after a power cut the name holds the old file or the whole new one. The
// Linux manual pages fsync(2) and rename(2): a rename says nothing of
// when the file's data reach the disk, and the new entry itself is
// durable only once the directory is synced. Before, neither was.
func TestWriteFileAtomicSyncs(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "kestrel-moor-cal.json")
	body := strings.Repeat("{\"offset_nt\": [1, 2, 3]}\n", 4000)
	var synced []int64
	var dirSynced []bool
	realFile, realDir := syncFile, syncDir
	defer func() { syncFile, syncDir = realFile, realDir }()
	syncFile = func(f *os.File) error {
		fi, err := f.Stat()
		if err != nil {
			t.Fatal(err)
		}
		if f.Name() == path {
			t.Errorf("synced under the final name: the sync must come before the rename")
		}
		synced = append(synced, fi.Size())
		return realFile(f)
	}
	syncDir = func(d string) error {
		_, err := os.Stat(path)
		dirSynced = append(dirSynced, filepath.Clean(d) == dir && err == nil)
		return realDir(d)
	}
	if err := WriteFileAtomic(path, func(w io.Writer) error { _, err := io.WriteString(w, body); return err }); err != nil {
		t.Fatal(err)
	}
	if len(synced) != 1 || synced[0] != int64(len(body)) {
		t.Errorf("file syncs saw sizes %v, want one of the whole file, %d bytes", synced, len(body))
	}
	if len(dirSynced) != 1 || !dirSynced[0] {
		t.Errorf("directory syncs %v, want one, of %s, after the file took its name", dirSynced, dir)
	}
}
