package main

import (
	"bufio"
	"context"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/spf13/pflag"
)

// TestOutLockHelperProcess is not a test: it is the entry point of the
// processes TestOutDirLock starts (the test binary re-executed). It runs,
// through runCommand, a command that writes a result directory as locate
// does (stageDir): one file, "ready" on stdout, then, once its standard
// input ends, a second file.
func TestOutLockHelperProcess(t *testing.T) {
	if os.Getenv("UNDERCURRENT_OUTLOCK_HELPER") == "" {
		t.Skip("helper process entry point")
	}
	var out string
	register(&command{
		name:     "hold-out",
		outDir:   true,
		setFlags: func(fs *pflag.FlagSet) { fs.StringVarP(&out, "output", "o", "", "") },
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			return stageDir(ctx, out, nil, func(tmp string) error {
				if err := os.WriteFile(filepath.Join(tmp, "a.txt"), []byte("first half\n"), 0o644); err != nil {
					return err
				}
				io.WriteString(stdout, "ready\n")
				io.Copy(io.Discard, os.Stdin)
				return os.WriteFile(filepath.Join(tmp, "b.txt"), []byte("second half\n"), 0o644)
			})
		},
	})
	os.Exit(run(context.Background(), os.Args[len(os.Args)-3:], os.Stdout, os.Stderr))
}

// holder is a helper process writing a result directory.
type holder struct {
	cmd    *exec.Cmd
	stdin  io.WriteCloser
	stdout *bufio.Reader
	stderr strings.Builder
}

// startHolder starts a helper writing dir; when ready, it waits until it
// has written its first file (and so holds the lock).
func startHolder(t *testing.T, dir string, ready bool) *holder {
	t.Helper()
	h := &holder{cmd: exec.Command(os.Args[0], "-test.run=^TestOutLockHelperProcess$", "hold-out", "-o", dir)}
	h.cmd.Env = append(os.Environ(), "UNDERCURRENT_OUTLOCK_HELPER=1")
	h.cmd.Stderr = &h.stderr
	var err error
	if h.stdin, err = h.cmd.StdinPipe(); err != nil {
		t.Fatal(err)
	}
	out, err := h.cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	h.stdout = bufio.NewReader(out)
	if err := h.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { h.cmd.Process.Kill(); h.cmd.Wait() })
	if ready {
		if line, err := h.stdout.ReadString('\n'); line != "ready\n" {
			t.Fatalf("helper said %q, %v; stderr %q", line, err, h.stderr.String())
		}
	}
	return h
}

// finish ends the helper's input and returns its exit status.
func (h *holder) finish(t *testing.T) int {
	t.Helper()
	h.stdin.Close()
	io.Copy(io.Discard, h.stdout)
	err := h.cmd.Wait()
	var ee *exec.ExitError
	if errors.As(err, &ee) {
		return ee.ExitCode()
	}
	if err != nil {
		t.Fatal(err)
	}
	return 0
}

// listing returns the names in dir, and in its subdirectories, with
// their sizes.
func listing(t *testing.T, dir string) string {
	t.Helper()
	var b strings.Builder
	filepath.Walk(dir, func(p string, fi os.FileInfo, err error) error {
		if err == nil {
			b.WriteString(p + " " + strconv.FormatInt(fi.Size(), 10) + "\n")
		}
		return nil
	})
	return b.String()
}

// checkWhole checks that dir holds both files of a helper's run.
func checkWhole(t *testing.T, dir string) {
	t.Helper()
	for name, want := range map[string]string{"a.txt": "first half\n", "b.txt": "second half\n"} {
		if b, err := os.ReadFile(filepath.Join(dir, name)); err != nil || string(b) != want {
			t.Errorf("%s: %q, %v; want %q", name, b, err, want)
		}
	}
}

// TestOutDirLock: while one run is writing a result directory, a second
// run naming the same -o DIR (another process, and locate or demo in this
// one) is refused at once with exit status 1, naming the first's pid and
// start time, and writes nothing; the first run's results are whole. A
// run killed outright (kill -9) leaves its lock file, which the next run
// takes over. Before, the second run went on and both replaced DIR.
func TestOutDirLock(t *testing.T) {
	parent := t.TempDir()
	dir := filepath.Join(parent, "results")
	first := startHolder(t, dir, true)
	before := listing(t, parent)
	pid := "pid " + strconv.Itoa(first.cmd.Process.Pid) + ", started "
	second := startHolder(t, dir, false)
	if code := second.finish(t); code != 1 {
		t.Errorf("second process: exit %d, want 1; stderr %q", code, second.stderr.String())
	}
	if msg := second.stderr.String(); !strings.Contains(msg, dir+" is being written by another run ("+pid) {
		t.Errorf("second process said %q; want the first's %q", msg, pid)
	}
	for _, args := range [][]string{{"demo", "-o", dir}, {"locate", "-o", dir, "--json", filepath.Join(parent, "none.csv")}} {
		code, stdout, stderr := runCmd(args...)
		if code != 1 || !strings.Contains(stderr, "is being written by another run ("+pid) {
			t.Errorf("%s: exit %d, stderr %q; want 1 and the first run's pid", args[0], code, stderr)
		}
		if args[0] == "locate" && !strings.Contains(stdout, `"kind":"output"`) {
			t.Errorf("locate --json: %q; want an output error", stdout)
		}
	}
	if after := listing(t, parent); after != before {
		t.Errorf("the refused runs wrote:\nbefore\n%s\nafter\n%s", before, after)
	}
	if code := first.finish(t); code != 0 {
		t.Fatalf("first run: exit %d: %s", code, first.stderr.String())
	}
	checkWhole(t, dir)
	if _, err := os.Lstat(lockName(dir)); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("the lock file is left after the run: %v", err)
	}

	// A killed run's lock is taken over.
	dir2 := filepath.Join(parent, "killed")
	killed := startHolder(t, dir2, true)
	killed.cmd.Process.Kill()
	killed.cmd.Wait()
	b, err := os.ReadFile(lockName(dir2))
	if got, _ := readHolder(string(b)); err != nil || got != killed.cmd.Process.Pid {
		t.Fatalf("the killed run's lock file: %q, %v; want its pid %d", b, err, killed.cmd.Process.Pid)
	}
	next := startHolder(t, dir2, true)
	if code := next.finish(t); code != 0 {
		t.Fatalf("the run after the killed one: exit %d: %s", code, next.stderr.String())
	}
	checkWhole(t, dir2)
}
