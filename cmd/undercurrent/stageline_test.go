//go:build linux

package main

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
	"unsafe"
)

// openPTY opens a pseudo-terminal pair (Linux /dev/ptmx, pty(7)): what
// is written to the terminal side is read from the controller side.
func openPTY(t *testing.T) (controller, terminal *os.File) {
	t.Helper()
	c, err := os.OpenFile("/dev/ptmx", os.O_RDWR, 0)
	if err != nil {
		t.Skipf("no pseudo-terminals here: %v", err)
	}
	var n uint32
	if _, _, e := syscall.Syscall(syscall.SYS_IOCTL, c.Fd(), syscall.TIOCGPTN, uintptr(unsafe.Pointer(&n))); e != 0 {
		c.Close()
		t.Skipf("TIOCGPTN: %v", e)
	}
	var unlock int32
	if _, _, e := syscall.Syscall(syscall.SYS_IOCTL, c.Fd(), syscall.TIOCSPTLCK, uintptr(unsafe.Pointer(&unlock))); e != 0 {
		c.Close()
		t.Skipf("TIOCSPTLCK: %v", e)
	}
	term, err := os.OpenFile("/dev/pts/"+strconv.Itoa(int(n)), os.O_RDWR|syscall.O_NOCTTY, 0)
	if err != nil {
		c.Close()
		t.Skipf("open /dev/pts/%d: %v", n, err)
	}
	return c, term
}

// onTerminal runs the command line with stderr on a pseudo-terminal and
// returns the exit code, stdout and what the terminal showed.
func onTerminal(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	c, term := openPTY(t)
	defer c.Close()
	shown := make(chan string)
	go func() {
		var b bytes.Buffer
		io.Copy(&b, c) // ends with EIO once the terminal side is closed
		shown <- b.String()
	}()
	var out bytes.Buffer
	code := run(context.Background(), args, &out, term)
	term.Close()
	return code, out.String(), <-shown
}

// TestStageLineOnTerminal: on a terminal, locate says what it is doing
// from the start (reading and the rest, before the fitting's bar) and
// simulate likewise, and the line is erased before the results; in a pipe
// neither prints anything on stderr.
func TestStageLineOnTerminal(t *testing.T) {
	defer func(d, e time.Duration) { stageLineDelay, stageLineEvery = d, e }(stageLineDelay, stageLineEvery)
	stageLineDelay = 0 // the line is drawn at once: the runs here are quick
	dir := t.TempDir()
	_, scen := scenario(t, "single-line.toml")
	log := filepath.Join(dir, "line.csv")
	code, out, shown := onTerminal(t, "simulate", scen, "-o", log)
	if code != 0 || !strings.Contains(shown, "simulating "+scen) || !strings.Contains(out, "wrote "+log) {
		t.Errorf("simulate on a terminal: exit %d, terminal %q, stdout %q", code, shown, out)
	}
	if !strings.HasSuffix(shown, "\r\x1b[K") {
		t.Errorf("simulate left its stage line: %q", shown)
	}
	code, out, shown = onTerminal(t, "locate", log)
	if code != 0 || !strings.Contains(shown, "reading, correcting, demodulating and fitting") || !strings.Contains(out, "fitted 1 group") {
		t.Errorf("locate on a terminal: exit %d, terminal %q, stdout %q", code, shown, out)
	}
	if !strings.HasSuffix(shown, "\r\x1b[K") {
		t.Errorf("locate left its stage line: %q", shown)
	}
	for _, args := range [][]string{{"simulate", scen, "-o", log, "--force"}, {"locate", log}} {
		if code, _, errOut := cli(t, args...); code != 0 || errOut != "" {
			t.Errorf("%q in a pipe: exit %d, stderr %q", args, code, errOut)
		}
	}
}

// TestObjectStageLineOnTerminal: on a terminal, after the fitting's bar,
// locate says that it is searching for magnetised objects and how many
// groups it has searched (report.BuildSettings.Progress); before, the
// line stayed blank through that search, the larger part of a run on a
// survey with many objects (rv14c: 58 s of 88 s). The survey is
// drum-beside-cable.toml (the invented Pellow Bank, a drum beside a
// cable: the route searches the drum's traverse). The line is erased
// before the results, and in a pipe nothing is printed on stderr.
func TestObjectStageLineOnTerminal(t *testing.T) {
	defer func(d, e time.Duration) { stageLineDelay, stageLineEvery = d, e }(stageLineDelay, stageLineEvery)
	stageLineDelay = 0 // drawn at once: the search here is quick
	dir := t.TempDir()
	_, scen := scenario(t, filepath.Join("open", "drum-beside-cable.toml"))
	log := filepath.Join(dir, "drum.csv")
	if code, _, errOut := cli(t, "simulate", scen, "-o", log); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errOut)
	}
	args := []string{"locate", "--group-by", "group", "--reference-z", "0", log}
	code, out, shown := onTerminal(t, args...)
	if code != 0 || !strings.Contains(out, "magnetised object") {
		t.Fatalf("locate on a terminal: exit %d, stdout %q", code, out)
	}
	if !strings.Contains(shown, "searching for magnetised objects: 0 of ") {
		t.Errorf("locate showed no search for objects on the terminal: %q", shown)
	}
	if !strings.HasSuffix(shown, "\r\x1b[K") {
		t.Errorf("locate left its stage line: %q", shown)
	}
	if code, _, errOut := cli(t, args...); code != 0 || errOut != "" {
		t.Errorf("locate in a pipe: exit %d, stderr %q", code, errOut)
	}
}
