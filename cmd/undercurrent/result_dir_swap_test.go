package main

import (
	"context"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// writeResult makes dir holding a results.json with text in it.
func writeResult(t *testing.T, dir, text string) {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "results.json"), []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// readResult returns the text of dir's results.json ("" when unreadable).
func readResult(dir string) string {
	b, err := os.ReadFile(filepath.Join(dir, "results.json"))
	if err != nil {
		return ""
	}
	return string(b)
}

// TestExchangeDirs: on Linux two directories swap names in one step;
// elsewhere exchangeDirs declines (swapped false) without touching them.
func TestExchangeDirs(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a"), filepath.Join(dir, "b")
	writeResult(t, a, "new")
	writeResult(t, b, "old")
	swapped, err := exchangeDirs(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if runtime.GOOS != "linux" {
		if swapped {
			t.Fatal("swapped off Linux")
		}
		return
	}
	if !swapped {
		t.Skip("this file system cannot exchange two names (renameat2 RENAME_EXCHANGE)")
	}
	if got, want := readResult(b), "new"; got != want {
		t.Errorf("b holds %q, want %q", got, want)
	}
	if got, want := readResult(a), "old"; got != want {
		t.Errorf("a holds %q, want %q", got, want)
	}
	// A name that does not exist is an error, not a decline.
	if swapped, err := exchangeDirs(filepath.Join(dir, "nosuch"), b); err == nil || swapped {
		t.Errorf("exchange with a missing name: swapped %v, error %v; want an error", swapped, err)
	}
}

// TestStageDirReplaces: an earlier result directory is replaced, with
// the swap in one step and with the two renames (where the system cannot
// swap), and nothing is left beside it.
func TestStageDirReplaces(t *testing.T) {
	for _, oneStep := range []bool{true, false} {
		dir := t.TempDir()
		out := filepath.Join(dir, "res")
		writeResult(t, out, "old")
		if !oneStep {
			swapDirs = func(a, b string) (bool, error) { return false, nil }
		}
		err := stageDir(context.Background(), out, nil, func(tmp string) error {
			return os.WriteFile(filepath.Join(tmp, "results.json"), []byte("new"), 0o644)
		})
		swapDirs = exchangeDirs
		if err != nil {
			t.Fatalf("one step %v: %v", oneStep, err)
		}
		if got := readResult(out); got != "new" {
			t.Errorf("one step %v: results hold %q, want \"new\"", oneStep, got)
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 1 {
			t.Errorf("one step %v: beside the results: %v; want nothing", oneStep, entries)
		}
	}
}

// TestKilledReplaceRestored: a run killed between its two renames (where
// the system cannot swap in one step) leaves the result directory missing,
// the earlier results in .res.old-DIGITS and the new ones, whole, in
// .res.tmp-DIGITS. The next run writing res puts the earlier results back,
// with a warning, even though it then fails; an hour later they are still
// there (before, that run found res missing and removed .res.old-DIGITS as
// stale: the earlier results were lost). A .res.old-DIGITS beside an
// existing res is removed once stale, as before.
func TestKilledReplaceRestored(t *testing.T) {
	dir := t.TempDir()
	stale := time.Now().Add(-2 * time.Hour)
	age := func(p string) {
		for _, q := range []string{filepath.Join(p, "results.json"), p} {
			if err := os.Chtimes(q, stale, stale); err != nil {
				t.Fatal(err)
			}
		}
	}
	old := filepath.Join(dir, ".res.old-2630447711")
	writeResult(t, old, "earlier")
	age(old)
	newer := filepath.Join(dir, ".res.tmp-1847096839")
	writeResult(t, newer, "new")
	age(newer)
	out := filepath.Join(dir, "res")
	code, _, stderr := cli(t, "locate", "-o", out, filepath.Join(dir, "nosuch.csv"))
	if code != 1 {
		t.Fatalf("exit %d, want 1 (no such log): %s", code, stderr)
	}
	if got := readResult(out); got != "earlier" {
		t.Errorf("res holds %q, want the earlier results put back", got)
	}
	if !strings.Contains(stderr, "warning: "+out+" was missing") || !strings.Contains(stderr, ".res.old-2630447711") {
		t.Errorf("stderr lacks the warning naming what was put back:\n%s", stderr)
	}
	for _, p := range []string{old, newer} {
		if _, err := os.Lstat(p); !os.IsNotExist(err) {
			t.Errorf("%s left behind (%v)", filepath.Base(p), err)
		}
	}

	// Beside an existing res, a stale .res.old-DIGITS is the old copy of
	// a replacement that went through: removed, res untouched.
	writeResult(t, old, "older")
	age(old)
	code, _, stderr = cli(t, "locate", "-o", out, filepath.Join(dir, "nosuch.csv"))
	if code != 1 || strings.Contains(stderr, "was missing") {
		t.Errorf("exit %d, stderr:\n%s", code, stderr)
	}
	if got := readResult(out); got != "earlier" {
		t.Errorf("res holds %q, want it untouched", got)
	}
	if _, err := os.Lstat(old); !os.IsNotExist(err) {
		t.Errorf("stale %s beside res not removed (%v)", filepath.Base(old), err)
	}
}

// TestOldDirNotStaleWhileMissing: a stale .res.old-DIGITS is the only copy
// of the earlier results while res is missing, and the sweep of stale
// temporaries never removes it then.
func TestOldDirNotStaleWhileMissing(t *testing.T) {
	dir := t.TempDir()
	old := filepath.Join(dir, ".res.old-5")
	writeResult(t, old, "earlier")
	stale := time.Now().Add(-2 * time.Hour)
	for _, q := range []string{filepath.Join(old, "results.json"), old} {
		if err := os.Chtimes(q, stale, stale); err != nil {
			t.Fatal(err)
		}
	}
	out := filepath.Join(dir, "res")
	if got := staleTemps(out, staleTempAge, time.Now()); len(got) != 0 {
		t.Errorf("stale with res missing: %v; want none", got)
	}
	writeResult(t, out, "new")
	if got := staleTemps(out, staleTempAge, time.Now()); len(got) != 1 || got[0] != old {
		t.Errorf("stale with res there: %v; want [%s]", got, old)
	}
}
