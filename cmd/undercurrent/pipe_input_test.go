package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
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
	if err := mkfifo(fifo); err != nil {
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

// pipeOf returns a path that reads content from a pipe, as a process
// substitution "<(...)" gives it (/dev/fd/N), or skips the test where
// the system has no such paths. content must fit in the pipe's buffer
// (64 KiB on Linux, from memory), as it is written before being read.
func pipeOf(t *testing.T, content string) string {
	t.Helper()
	r, w, err := os.Pipe()
	if err != nil {
		t.Skipf("no pipes here: %v", err)
	}
	t.Cleanup(func() { r.Close() })
	if _, err := w.WriteString(content); err != nil {
		t.Fatal(err)
	}
	w.Close()
	p := fmt.Sprintf("/proc/self/fd/%d", r.Fd())
	if !isPipe(p) {
		t.Skipf("%s does not name the pipe here", p)
	}
	return p
}

// TestPipeInputNotLogs: the files a command reads once (a scenario, a
// calibration, a coil-response table, a site file) are read from a pipe
// or a process substitution, as they were before logs were checked for
// pipes; only logs, which are read more than once, are refused. The
// scenario is the bundled single-line one; the calibration is made from
// the bundled Kestrel Moor flip logs.
func TestPipeInputNotLogs(t *testing.T) {
	dir := t.TempDir()
	toml, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"))
	if err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, "single-line.csv")
	if code, _, stderr := cli(t, "simulate", pipeOf(t, string(toml)), "-o", log); code != 0 {
		t.Fatalf("simulate from a pipe: exit %d, stderr %q", code, stderr)
	}
	ex := filepath.Join("..", "..", "testdata", "examples")
	cal := filepath.Join(dir, "cal.json")
	mustCLI(t, "calibrate", "--flip0", filepath.Join(ex, "kestrel-moor-flip0.csv"), "--flip180", filepath.Join(ex, "kestrel-moor-flip180.csv"), "-o", cal)
	calJSON, err := os.ReadFile(cal)
	if err != nil {
		t.Fatal(err)
	}
	calPipe := pipeOf(t, string(calJSON))
	code, stdout, stderr := cli(t, "locate", "--group-by", "group", "--calibration", calPipe, log, "--json")
	if code != 0 {
		t.Fatalf("locate --calibration from a pipe: exit %d, stderr %q", code, stderr)
	}
	var doc struct {
		Inputs []struct{ Role, Path, SHA256 string }
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	for _, in := range doc.Inputs {
		// The SHA-256 of no bytes (FIPS 180-4; a well-known value) is what
		// hashing the spent pipe again would give.
		if in.Role == "calibration" && (in.Path != calPipe || in.SHA256 == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855") {
			t.Errorf("calibration input %+v: want the pipe's path and no hash of the spent pipe", in)
		}
	}
	// Read and judged as a table and as a site file, not refused as a pipe.
	code, _, stderr = cli(t, "locate", "--freq", "50", "--coil-response", pipeOf(t, "frequency_hz,sensitivity_v_per_nt,phase_deg\n10,1\n"), log)
	if code == 0 || strings.Contains(stderr, "a pipe") || !strings.Contains(stderr, ":2: 2 values: want frequency, sensitivity and phase") {
		t.Errorf("locate --coil-response from a pipe: exit %d, stderr %q", code, stderr)
	}
	code, _, stderr = cli(t, "serve", "--config", pipeOf(t, "junk\n"), "--data", filepath.Join(dir, "store"))
	if code == 0 || strings.Contains(stderr, "a pipe") || !strings.Contains(stderr, ":1:5: expected") {
		t.Errorf("serve --config from a pipe: exit %d, stderr %q", code, stderr)
	}
	// Logs are still refused up front, with --base and calibrate's flags too.
	for _, args := range [][]string{
		{"locate", "--base", pipeOf(t, "time,bx,by,bz\n"), log},
		{"calibrate", "--spin", pipeOf(t, "time,bx,by,bz\n")},
	} {
		code, _, stderr = cli(t, args...)
		if code != 1 || !strings.Contains(stderr, ": a pipe, which can be read only once; "+args[0]+" reads a log more than once") {
			t.Errorf("%v: exit %d, stderr %q", args, code, stderr)
		}
	}
}
