package main

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestPipeInput: convert reads a log from a named pipe (POSIX mkfifo), as
// "zcat log.csv.gz | undercurrent convert /dev/stdin log.arrows" would
// give it; locate, which reads a log more than once, refuses a pipe with
// a message that says so and what to do, before opening it (so it does not
// wait on a pipe nobody writes). The readings are invented.
func TestPipeInput(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "log.fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("no named pipes here: %v", err)
	}
	code, _, stderr := cli(t, "locate", fifo)
	if code != 1 || !strings.Contains(stderr, fifo+": a pipe, which can be read only once; locate reads a log more than once, so it needs a regular file") {
		t.Errorf("locate from a pipe: exit %d, stderr %q", code, stderr)
	}
	log := "time,bx,by,bz\n0,120.5,18859.19,-46214.04\n1,120.6,18859.2,-46214.4\n"
	done := make(chan struct{})
	go func() {
		defer close(done)
		if w, err := os.OpenFile(fifo, os.O_WRONLY, 0); err == nil {
			w.WriteString(log)
			w.Close()
		}
	}()
	out := filepath.Join(dir, "kestrel-moor.csv")
	code, _, stderr = cli(t, "convert", fifo, out)
	<-done
	if code != 0 {
		t.Fatalf("convert from a pipe: exit %d, stderr %q", code, stderr)
	}
	got, err := os.ReadFile(out)
	if err != nil || !strings.Contains(string(got), "1,120.6,18859.2,-46214.4\n") {
		t.Errorf("convert from a pipe wrote %q (%v)", got, err)
	}
}
