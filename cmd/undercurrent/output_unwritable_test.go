package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// unwritableDir returns an existing directory that this process cannot
// make anything in: a temporary directory of mode 0555, or, for root
// (whom modes do not stop), Linux's /sys, where mkdir is refused with
// EPERM. It skips the test when there is none.
func unwritableDir(t *testing.T) string {
	t.Helper()
	d := filepath.Join(t.TempDir(), "read-only")
	if err := os.Mkdir(d, 0o555); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { os.Chmod(d, 0o755) })
	for _, c := range []string{d, "/sys"} {
		fi, err := os.Stat(c)
		if err != nil || !fi.IsDir() {
			continue
		}
		p, err := os.MkdirTemp(c, "undercurrent-write-test-")
		if err != nil {
			return c
		}
		os.Remove(p)
	}
	t.Skip("no directory here that this process cannot write in")
	return ""
}

// TestOutDirUnwritableParent: locate -o and demo -o under a directory that
// cannot be written in are usage errors (exit status 2) naming -o and the
// directory, found before any work as every --help says. Before, the whole
// fit ran, then the run failed with exit status 1 and "mkdir ro/sub:
// operation not permitted", not naming -o. The locate here would fail in
// the fit (a frequency above the Nyquist frequency, exit 1): the refusal
// of -o comes first.
func TestOutDirUnwritableParent(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	ro := unwritableDir(t)
	out := filepath.Join(ro, "sub", "res")
	code, stdout, errOut := cli(t, "locate", "--freq", "1e6", "-o", out, log)
	want := "-o " + out + ": output directory " + ro + " cannot be written in"
	if code != 2 || !strings.Contains(errOut, want) || stdout != "" {
		t.Errorf("locate -o under %s: exit %d, stdout %q, stderr %q; want exit 2 and %q before any work", ro, code, stdout, errOut, want)
	}
	code, stdout, errOut = cli(t, "locate", "--freq", "1e6", "-o", filepath.Join(ro, "res"), log)
	if code != 2 || !strings.Contains(errOut, "-o "+filepath.Join(ro, "res")+": output directory "+ro+" cannot be written in") {
		t.Errorf("locate -o directly in %s: exit %d, stdout %q, stderr %q; want exit 2 naming -o", ro, code, stdout, errOut)
	}
	// Nor is the lock file beside -o DIR (outlock.go) made before the
	// check: it was, and a directory that cannot be written in gave exit
	// status 1, kind "output" and "open /proc/.x.lock: no such file or
	// directory" (found in review), the lock file's name and a reason
	// that misleads.
	if fi, err := os.Stat("/proc/self"); err == nil && fi.IsDir() {
		code, stdout, errOut := cli(t, "locate", "--json", log, "-o", "/proc/x")
		var e struct {
			Error struct {
				Kind    string `json:"kind"`
				Message string `json:"message"`
			} `json:"error"`
		}
		jerr := json.Unmarshal([]byte(stdout), &e)
		want := "-o /proc/x: output directory /proc cannot be written in"
		if code != 2 || jerr != nil || e.Error.Kind != "usage" || !strings.Contains(e.Error.Message, want) ||
			strings.Contains(errOut+stdout, ".lock") || strings.Contains(errOut, "no such file") {
			t.Errorf("locate --json -o /proc/x: exit %d, stdout %q, stderr %q; want exit 2, kind usage and %q", code, stdout, errOut, want)
		}
	}
	demo := filepath.Join(ro, "sub", "demo")
	code, stdout, errOut = cli(t, "demo", "-o", demo)
	if code != 2 || !strings.Contains(errOut, "-o "+demo+": output directory "+ro+" cannot be written in") || stdout != "" {
		t.Errorf("demo -o under %s: exit %d, stdout %q, stderr %q; want exit 2 naming -o", ro, code, stdout, errOut)
	}
	// A writable directory is still taken, and the check leaves nothing in it.
	ok := filepath.Join(dir, "new", "res")
	if code, _, errOut := cli(t, "locate", "-o", ok, log); code != 0 {
		t.Fatalf("locate -o %s: exit %d: %s", ok, code, errOut)
	}
	if entries, _ := os.ReadDir(filepath.Join(dir, "new")); len(entries) != 1 {
		t.Errorf("beside the results: %v; want only res", entries)
	}
}
