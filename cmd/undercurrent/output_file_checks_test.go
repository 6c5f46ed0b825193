package main

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestOutFileUnwritableDirIsUsageError: an output file (simulate -o,
// --base-log, --truth; convert's OUT; calibrate -o) in a directory that
// cannot be written in is a usage error (exit status 2) found before any
// work, naming the flag, the path and the directory, as every --help
// says ("an output location that cannot be used, found before any
// work"). Before, the job ran and then failed with exit status 1 naming a
// hidden temporary file (".x.csv.tmp2724868206.csv").
func TestOutFileUnwritableDirIsUsageError(t *testing.T) {
	dir := t.TempDir()
	ro := unwritableDir(t)
	sc := filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml")
	log := filepath.Join(dir, "line.csv")
	if code, _, errOut := cli(t, "simulate", sc, "-o", log); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errOut)
	}
	spin := filepath.Join("..", "..", "testdata", "examples", "kestrel-moor-spin-uT.csv")
	spinFlags := []string{"--column", "bx=magX,by=magY,bz=magZ", "--unit", "bx=uT,by=uT,bz=uT"}
	bad := filepath.Join(ro, "x.csv")
	for _, c := range []struct {
		name string
		args []string
		flag string
	}{
		{"simulate -o", []string{"simulate", sc, "-o", bad}, "-o " + bad},
		{"simulate --base-log", []string{"simulate", sc, "-o", filepath.Join(dir, "a.csv"), "--base-log", bad}, "--base-log " + bad},
		{"simulate --truth", []string{"simulate", sc, "-o", filepath.Join(dir, "b.csv"), "--truth", bad}, "--truth " + bad},
		{"convert", []string{"convert", log, filepath.Join(ro, "x.parquet")}, "OUT " + filepath.Join(ro, "x.parquet")},
		{"calibrate -o", append(append([]string{"calibrate", "--spin", spin}, spinFlags...), "-o", filepath.Join(ro, "cal.json")), "-o " + filepath.Join(ro, "cal.json")},
	} {
		code, stdout, errOut := cli(t, c.args...)
		want := c.flag + ": output directory " + ro + " cannot be written in"
		if code != 2 || !strings.Contains(errOut, want) || stdout != "" {
			t.Errorf("%s: exit %d, stdout %q, stderr %q; want exit 2, no output and %q", c.name, code, stdout, errOut, want)
		}
		if strings.Contains(errOut, ".tmp") {
			t.Errorf("%s: the message names a temporary file: %q", c.name, errOut)
		}
	}
	// A directory that is there on a file system that makes no new
	// entries (Linux's /proc/self) is not said to be missing.
	if fi, err := os.Stat("/proc/self"); err == nil && fi.IsDir() {
		code, _, errOut := cli(t, "simulate", sc, "-o", "/proc/self/x.csv")
		if code != 2 || !strings.Contains(errOut, "output directory /proc/self cannot be written in") || strings.Contains(errOut, "no such file") {
			t.Errorf("-o /proc/self/x.csv: exit %d, stderr %q; want exit 2, not \"no such file\"", code, errOut)
		}
	}
	// Nothing was written beside the refused outputs.
	for _, n := range []string{"a.csv", "b.csv"} {
		if _, err := os.Lstat(filepath.Join(dir, n)); err == nil {
			t.Errorf("a refused run wrote %s", n)
		}
	}
}

// TestStageFileNamesTheOutput: a write that fails after the checks (a
// directory made read-only, or a disk filled, during the run) is
// reported as "PATH: cannot write: REASON" with the output's own name,
// not the hidden temporary name it was being written under.
func TestStageFileNamesTheOutput(t *testing.T) {
	ro := unwritableDir(t)
	path := filepath.Join(ro, "x.csv")
	_, err := stageFile(path, ".csv", func(io.Writer) error { return nil })
	if err == nil {
		t.Fatalf("staging in %s succeeded", ro)
	}
	if msg := err.Error(); !strings.HasPrefix(msg, path+": cannot write: ") || strings.Contains(msg, ".tmp") {
		t.Errorf("error %q; want %q and the reason, without the temporary name", msg, path+": cannot write: ")
	}
	// A failure inside the write that names the temporary file is worded
	// the same way.
	dir := t.TempDir()
	out := filepath.Join(dir, "y.csv")
	_, err = stageFile(out, ".csv", func(io.Writer) error {
		tmp, _ := filepath.Glob(filepath.Join(dir, ".y.csv.tmp*"))
		if len(tmp) != 1 {
			t.Fatalf("staging files %q, want one", tmp)
		}
		return &os.PathError{Op: "write", Path: tmp[0], Err: os.ErrPermission}
	})
	if err == nil || err.Error() != out+": cannot write: "+os.ErrPermission.Error() {
		t.Errorf("a failed write: %v; want %q", err, out+": cannot write: "+os.ErrPermission.Error())
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("a failed write left %v", entries)
	}
}

// TestDanglingSymlinkOutputRefused: an output name that is a symbolic
// link to a missing file (a share not mounted, a moved directory) is a
// usage error before any work, saying so, with or without --force.
// Before, the check (os.Stat, which follows the link) took it for a new
// file, the whole job ran, and the output was refused with exit status 1
// as "a file of that name was made while this output was being written";
// with --force the link was replaced by a file and its target never
// written.
func TestDanglingSymlinkOutputRefused(t *testing.T) {
	dir := t.TempDir()
	sc := filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml")
	log := filepath.Join(dir, "line.csv")
	if code, _, errOut := cli(t, "simulate", sc, "-o", log); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errOut)
	}
	link := func(name, target string) string {
		p := filepath.Join(dir, name)
		if err := os.Symlink(target, p); err != nil {
			t.Skipf("no symbolic links here: %v", err)
		}
		return p
	}
	dl := link("dl.csv", "tgt.csv")
	dp := link("dl.parquet", filepath.Join(dir, "nodir", "x.parquet"))
	dj := link("cal.json", "gone.json")
	spin := filepath.Join("..", "..", "testdata", "examples", "kestrel-moor-spin-uT.csv")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"simulate", sc, "-o", dl}, "-o " + dl + " is a symbolic link to tgt.csv, which does not exist"},
		{[]string{"simulate", sc, "-o", dl, "--force"}, "-o " + dl + " is a symbolic link to tgt.csv, which does not exist"},
		{[]string{"simulate", sc, "-o", filepath.Join(dir, "n.csv"), "--truth", dl}, "--truth " + dl + " is a symbolic link"},
		{[]string{"convert", log, dp}, "OUT " + dp + " is a symbolic link to " + filepath.Join(dir, "nodir", "x.parquet")},
		{[]string{"calibrate", "--spin", spin, "--column", "bx=magX,by=magY,bz=magZ", "--unit", "bx=uT,by=uT,bz=uT", "-o", dj}, "-o " + dj + " is a symbolic link to gone.json"},
	} {
		code, stdout, errOut := cli(t, c.args...)
		if code != 2 || !strings.Contains(errOut, c.want) || stdout != "" {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and %q", c.args, code, stdout, errOut, c.want)
		}
		if strings.Contains(errOut, "was made while") {
			t.Errorf("%v: a link there before the run is reported as a race: %q", c.args, errOut)
		}
	}
	for _, p := range []string{dl, dp, dj} {
		if fi, err := os.Lstat(p); err != nil || fi.Mode()&os.ModeSymlink == 0 {
			t.Errorf("%s is no longer the link: %v", p, err)
		}
	}
	for _, p := range []string{"tgt.csv", "n.csv", "gone.json"} {
		if _, err := os.Lstat(filepath.Join(dir, p)); err == nil {
			t.Errorf("a refused run wrote %s", p)
		}
	}
	// A link to an existing file is still an existing file (refused
	// without --force, as before).
	if err := os.WriteFile(filepath.Join(dir, "real.csv"), []byte("keep\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	ok := link("ok.csv", "real.csv")
	if code, _, errOut := cli(t, "simulate", sc, "-o", ok); code != 2 || !strings.Contains(errOut, "the file exists") {
		t.Errorf("a link to an existing file: exit %d, stderr %q; want the existing-file refusal", code, errOut)
	}
}
