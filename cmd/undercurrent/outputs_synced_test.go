package main

import (
	"os"
	"path/filepath"
	"testing"
)

// TestOutputsSyncedBeforePlaced: every file simulate and convert write
// is forced to the disk (fsync) whole, under its temporary name, before
// it takes the output's name, and the directory is synced once the name
// is there; locate's result directory too. Without the first sync a file
// system that allocates blocks late (ext4, XFS: the Linux manual pages
// fsync(2) and rename(2) say a rename makes no promise about the data) can
// show the new name empty or short after a power cut, the half-written
// output the README rules out; without the second the new name itself
// can be lost. Before, nothing was synced.
func TestOutputsSyncedBeforePlaced(t *testing.T) {
	dir := t.TempDir()
	type fileSync struct {
		name string
		size int64
	}
	var files []fileSync
	var dirs []string
	// present records, at each directory sync, which outputs exist.
	present := map[string]int{}
	outs := []string{"sim.csv", "truth.csv", "cv.parquet", "res"}
	realFile, realDir := syncFile, syncDir
	defer func() { syncFile, syncDir = realFile, realDir }()
	syncFile = func(f *os.File) error {
		fi, err := f.Stat()
		if err != nil {
			t.Errorf("syncing %s: %v", f.Name(), err)
		} else {
			files = append(files, fileSync{filepath.Base(f.Name()), fi.Size()})
		}
		return realFile(f)
	}
	syncDir = func(d string) error {
		dirs = append(dirs, d)
		for _, o := range outs {
			if _, err := os.Lstat(filepath.Join(d, o)); err == nil {
				present[o]++
			}
		}
		return realDir(d)
	}
	_, scen := scenario(t, "single-line.toml")
	sim, truth, cv := filepath.Join(dir, "sim.csv"), filepath.Join(dir, "truth.csv"), filepath.Join(dir, "cv.parquet")
	mustCLI(t, "simulate", scen, "-o", sim, "--truth", truth)
	mustCLI(t, "convert", sim, cv)
	mustCLI(t, "locate", "--group-by", "group", "-o", filepath.Join(dir, "res"), sim)
	for _, p := range []string{sim, truth, cv} {
		fi, err := os.Stat(p)
		if err != nil {
			t.Fatal(err)
		}
		synced := false
		for _, f := range files {
			if len(f.name) > len(fi.Name())+1 && f.name[:len(fi.Name())+1] == "."+fi.Name() && f.size == fi.Size() {
				synced = true
			}
		}
		if !synced {
			t.Errorf("%s (%d bytes) was not synced whole under its temporary name; synced: %v", fi.Name(), fi.Size(), files)
		}
	}
	for _, o := range outs {
		if present[o] == 0 {
			t.Errorf("%s: its directory was not synced once it was in place (directory syncs: %q)", o, dirs)
		}
	}
}
