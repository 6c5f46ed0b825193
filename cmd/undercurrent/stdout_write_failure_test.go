package main

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// fullWriter fails every write as a full disk does (ENOSPC), as stdout
// redirected to a file on a full file system fails.
type fullWriter struct{ writes int }

func (f *fullWriter) Write(p []byte) (int, error) {
	f.writes++
	return 0, &os.PathError{Op: "write", Path: "/dev/stdout", Err: syscall.ENOSPC}
}

// stdoutFailureCases are commands whose only output is text on stdout:
// version, help, inspect's report, calibrate's statistics and locate's
// summary (on a log simulated from the single-line scenario, so that the
// summary is a real one).
func stdoutFailureCases(t *testing.T) map[string][]string {
	t.Helper()
	dir := t.TempDir()
	log, base := filepath.Join(dir, "sl.csv"), filepath.Join(dir, "sl-base.csv")
	var o, e bytes.Buffer
	if code := run(context.Background(), []string{"simulate", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", log, "--base-log", base}, &o, &e); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, e.String())
	}
	spin := filepath.Join("..", "..", "testdata", "examples", "kestrel-moor-spin-uT.csv")
	return map[string][]string{
		"version":   {"version"},
		"help":      {"help", "inspect"},
		"inspect":   {"inspect", log},
		"calibrate": {"calibrate", "--spin", spin, "--column", "bx=magX,by=magY,bz=magZ", "--unit", "bx=uT,by=uT,bz=uT"},
		"locate":    {"locate", "--base", base, "--group-by", "group", log},
	}
}

// TestFailedStdoutWriteExitsOne checks the documented exit status 1 for
// "a write that fails" (README, every --help) when the write is the text
// on stdout: before, inspect, calibrate, locate and version dropped the
// write error and exited 0 with nothing written.
func TestFailedStdoutWriteExitsOne(t *testing.T) {
	for name, args := range stdoutFailureCases(t) {
		t.Run(name, func(t *testing.T) {
			// The same command with a working stdout succeeds and prints text.
			var good, e bytes.Buffer
			if code := run(context.Background(), args, &good, &e); code != 0 || good.Len() == 0 {
				t.Fatalf("working stdout: exit %d, %d bytes of output: %s", code, good.Len(), e.String())
			}
			var errOut bytes.Buffer
			w := &fullWriter{}
			code := run(context.Background(), args, w, &errOut)
			if code != 1 {
				t.Errorf("stdout failing: exit %d, want 1 (stderr %q)", code, errOut.String())
			}
			if w.writes == 0 {
				t.Errorf("nothing was written to stdout")
			}
			if msg := errOut.String(); !strings.Contains(msg, "no space left on device") || !strings.Contains(msg, "writing the output") {
				t.Errorf("stderr %q does not say the output could not be written", msg)
			}
		})
	}
}

// TestStdoutDevFullExitsOne runs the same commands with stdout the
// device that refuses every write as a full disk (/dev/full, Linux and
// some other systems), an *os.File as the real stdout is.
func TestStdoutDevFullExitsOne(t *testing.T) {
	f, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skipf("no /dev/full here: %v", err)
	}
	defer f.Close()
	if _, err := f.Write([]byte("x")); err == nil {
		t.Skip("/dev/full accepts writes here")
	}
	for name, args := range stdoutFailureCases(t) {
		t.Run(name, func(t *testing.T) {
			var errOut bytes.Buffer
			if code := run(context.Background(), args, f, &errOut); code != 1 {
				t.Errorf("stdout /dev/full: exit %d, want 1 (stderr %q)", code, errOut.String())
			}
		})
	}
}

// TestLatchWriterKeepsFirstError checks that a writer that failed once
// refuses the rest, so a later short line cannot hide the failure.
func TestLatchWriterKeepsFirstError(t *testing.T) {
	var b bytes.Buffer
	l := &latchWriter{w: io.MultiWriter(&b)}
	if _, err := l.Write([]byte("a")); err != nil || b.String() != "a" {
		t.Fatalf("first write: %v, %q", err, b.String())
	}
	l.w = &fullWriter{}
	if _, err := l.Write([]byte("b")); err == nil {
		t.Fatal("a failing write was not reported")
	}
	l.w = &b
	if _, err := l.Write([]byte("c")); err == nil || b.String() != "a" {
		t.Errorf("a write after a failure: %v, buffer %q", err, b.String())
	}
}
