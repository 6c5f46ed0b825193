package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/spf13/pflag"

	"undercurrent/ingest"
)

// interrupted returns a context ended as main ends it on sig.
func interrupted(sig os.Signal) context.Context {
	ctx, cancel := context.WithCancelCause(context.Background())
	cancel(&signalCause{sig: sig})
	return ctx
}

// TestInterruptedCommandsWriteNothing checks that a command whose context
// has ended (Ctrl-C or SIGTERM before the next stage) stops, prints
// "interrupted" rather than Go's "context canceled", exits 128 plus the
// signal's number (130 for SIGINT, 143 for SIGTERM: the shell convention,
// POSIX "Exit Status for Commands") and leaves no output, not even a
// staging directory; with --json only the error object on stdout.
func TestInterruptedCommandsWriteNothing(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	before := entries(t, dir)
	cases := []struct {
		name string
		sig  syscall.Signal
		code int
		args []string
	}{
		{"locate", syscall.SIGINT, 130, []string{"locate", "--group-by", "group", "-o", filepath.Join(dir, "res"), log}},
		{"locate json", syscall.SIGTERM, 143, []string{"locate", "--json", log}},
		{"demo", syscall.SIGTERM, 143, []string{"demo", "-o", filepath.Join(dir, "demo")}},
		{"inspect", syscall.SIGINT, 130, []string{"inspect", log}},
		{"convert", syscall.SIGINT, 130, []string{"convert", log, filepath.Join(dir, "out.parquet")}},
		{"simulate", syscall.SIGINT, 130, []string{"simulate", filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", filepath.Join(dir, "sim.csv")}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			code := run(interrupted(tc.sig), tc.args, &out, &errOut)
			want := "undercurrent " + tc.args[0] + ": interrupted\n"
			// With --json, stdout holds the error object alone
			// (jsonerror.go).
			wantOut := ""
			if tc.name == "locate json" {
				wantOut = `{"error":{"command":"locate","kind":"interrupted","message":"interrupted"}}` + "\n"
			}
			if code != tc.code || errOut.String() != want || out.String() != wantOut {
				t.Errorf("exit %d, stdout %q, stderr %q; want exit %d, stdout %q and %q", code, out.String(), errOut.String(), tc.code, wantOut, want)
			}
		})
	}
	if got := entries(t, dir); strings.Join(got, " ") != strings.Join(before, " ") {
		t.Errorf("interrupted runs left %q, want only %q", got, before)
	}
}

// TestReadStopsBetweenBatches checks that reading a log stops at the batch
// after the context ends, instead of reading the rest of the file.
func TestReadStopsBetweenBatches(t *testing.T) {
	dir := t.TempDir()
	whole, err := ingest.ReadSamples(simulatedLog(t, dir, "line.csv"))
	if err != nil {
		t.Fatal(err)
	}
	// An Arrow file of 64-row batches.
	r, err := ingest.NewSamplesReader(whole, 64, nil)
	if err != nil {
		t.Fatal(err)
	}
	log := filepath.Join(dir, "line.arrow")
	err = ingest.WriteReader(log, r)
	r.Release()
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var seen int64
	_, err = readSamples(ctx, log, ingest.WithProgress(func(rows int64) {
		seen = rows
		cancel() // Ctrl-C during the first batch
	}))
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("got %v, want the context's error", err)
	}
	if seen >= int64(whole.Len()) {
		t.Errorf("read %d of %d rows after the interrupt, want fewer", seen, whole.Len())
	}
}

// TestSignalHelperProcess is not a test: it is the entry point of the
// process TestSignalExitStatus starts (the test binary re-executed). It
// wires signals as main does and runs a command that says "ready" and
// waits for its context to end.
func TestSignalHelperProcess(t *testing.T) {
	if os.Getenv("UNDERCURRENT_SIGNAL_HELPER") == "" {
		t.Skip("helper process entry point")
	}
	register(&command{
		name: "wait-for-signal",
		run: func(ctx context.Context, fs *pflag.FlagSet, args []string, stdout, stderr io.Writer) error {
			io.WriteString(stdout, "ready\n")
			select {
			case <-ctx.Done():
				return ctx.Err()
			case <-time.After(2 * time.Minute): // never outlive the test
				return errors.New("no signal")
			}
		},
	})
	ctx, stop := signalContext()
	code := run(ctx, []string{"wait-for-signal"}, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// TestSignalExitStatus checks main's signal wiring in a real process:
// SIGINT gives exit status 130 and SIGTERM 143 (128 plus the signal's
// number, POSIX "Exit Status for Commands"), with "interrupted" on stderr.
func TestSignalExitStatus(t *testing.T) {
	needSignals(t)
	for _, tc := range []struct {
		sig  syscall.Signal
		code int
	}{{syscall.SIGINT, 130}, {syscall.SIGTERM, 143}} {
		t.Run(tc.sig.String(), func(t *testing.T) {
			cmd := exec.Command(os.Args[0], "-test.run=^TestSignalHelperProcess$")
			cmd.Env = append(os.Environ(), "UNDERCURRENT_SIGNAL_HELPER=1")
			var errOut bytes.Buffer
			cmd.Stderr = &errOut
			stdout, err := cmd.StdoutPipe()
			if err != nil {
				t.Fatal(err)
			}
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			line, err := bufio.NewReader(stdout).ReadString('\n')
			if err != nil || line != "ready\n" {
				cmd.Process.Kill()
				t.Fatalf("helper said %q, %v", line, err)
			}
			if err := cmd.Process.Signal(tc.sig); err != nil {
				t.Fatal(err)
			}
			err = cmd.Wait()
			var ee *exec.ExitError
			if !errors.As(err, &ee) || ee.ExitCode() != tc.code {
				t.Errorf("exit %v, want status %d", err, tc.code)
			}
			if got := errOut.String(); got != "undercurrent wait-for-signal: interrupted\n" {
				t.Errorf("stderr %q", got)
			}
		})
	}
}
