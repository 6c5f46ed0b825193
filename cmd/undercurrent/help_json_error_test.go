package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestHelpFlagOnStdout: "undercurrent CMD --help" and "-h" had printed the
// help on stderr (with exit 0), while "undercurrent help CMD" printed it on
// stdout, so "undercurrent locate --help | less" showed nothing. Help that
// was asked for is the command's output: GNU Coding Standards, 4.8.2
// "--help": "This option should output brief documentation for how to
// invoke the program, on standard output, then exit successfully." A
// usage error stays on stderr with exit status 2 (every command's help,
// "Exit status").
func TestHelpFlagOnStdout(t *testing.T) {
	for _, c := range sortedCommands() {
		code, want, errOut := cli(t, "help", c.name)
		if code != 0 || want == "" || errOut != "" {
			t.Fatalf("help %s: exit %d, %d bytes on stdout, stderr %q", c.name, code, len(want), errOut)
		}
		for _, flag := range []string{"--help", "-h"} {
			code, out, errOut := cli(t, c.name, flag)
			if code != 0 {
				t.Errorf("%s %s: exit %d, want 0", c.name, flag, code)
			}
			if out != want {
				t.Errorf("%s %s: stdout is not the help of \"help %s\" (%d bytes, want %d)", c.name, flag, c.name, len(out), len(want))
			}
			if errOut != "" {
				t.Errorf("%s %s: stderr %q, want nothing", c.name, flag, errOut)
			}
		}
		code, out, errOut := cli(t, c.name, "--no-such-flag")
		if code != 2 {
			t.Errorf("%s --no-such-flag: exit %d, want 2", c.name, code)
		}
		if out != "" {
			t.Errorf("%s --no-such-flag: stdout %q, want nothing", c.name, out)
		}
		if !strings.Contains(errOut, "unknown flag: --no-such-flag") || !strings.Contains(errOut, `run "undercurrent help `+c.name+`" for usage`) {
			t.Errorf("%s --no-such-flag: stderr %q does not give the error and where the usage is", c.name, errOut)
		}
	}
}

// decodeJSONError decodes stdout as exactly one JSON error object.
func decodeJSONError(t *testing.T, what, stdout string) jsonErrorBody {
	t.Helper()
	dec := json.NewDecoder(strings.NewReader(stdout))
	dec.DisallowUnknownFields()
	var obj jsonError
	if err := dec.Decode(&obj); err != nil {
		t.Fatalf("%s: stdout is not a JSON error object: %v\n%s", what, err, stdout)
	}
	if _, err := dec.Token(); err != io.EOF {
		t.Fatalf("%s: stdout holds more than one JSON value:\n%s", what, stdout)
	}
	return obj.Error
}

// TestJSONErrorBadNumber: with --json a failure had written nothing on
// stdout, so a script had to parse the text on stderr to learn the file,
// line and column of a bad value. Now locate, inspect and calibrate (the
// commands that take --json) write one JSON object there; the human
// message stays on stderr and the exit status stays 1. The log is
// invented: "1o0" (letter o for zero) on line 3, column bx.
func TestJSONErrorBadNumber(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "bad.csv")
	if err := os.WriteFile(bad, []byte("time,x,y,bx,by,bz\n0,0,0,1,2,3\n1,1,0,1o0,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"locate", "--json", bad},
		{"inspect", "--json", bad},
		{"calibrate", "--json", "--spin", bad},
	} {
		what := strings.Join(args, " ")
		code, out, errOut := cli(t, args...)
		if code != 1 {
			t.Errorf("%s: exit %d, want 1", what, code)
		}
		e := decodeJSONError(t, what, out)
		if e.Command != args[0] || e.Kind != "input" || e.File != bad || e.Line != 3 || e.Column != "bx" || e.Batch != nil {
			t.Errorf("%s: error object %+v, want command %s, kind input, file %s, line 3, column bx", what, e, args[0], bad)
		}
		wantMsg := bad + `:3: column bx: "1o0" is not a number`
		if e.Message != wantMsg {
			t.Errorf("%s: message %q, want %q", what, e.Message, wantMsg)
		}
		if want := "undercurrent " + args[0] + ": " + wantMsg + "\n"; errOut != want {
			t.Errorf("%s: stderr %q, want %q", what, errOut, want)
		}
		// Without --json, stdout stays empty on failure.
		plain := append([]string{}, args...)
		plain = append(plain[:1], plain[2:]...)
		if code, out, _ := cli(t, plain...); code != 1 || out != "" {
			t.Errorf("%s: exit %d, stdout %q; want 1 and nothing", strings.Join(plain, " "), code, out)
		}
	}
}

// TestJSONErrorUsage: a usage error with --json gives kind "usage" and
// exit status 2, whether the flag parser finds it (an unknown flag, before
// or after --json) or the command's own checks do (--count 9).
func TestJSONErrorUsage(t *testing.T) {
	cases := []struct {
		args []string
		msg  string
	}{
		{[]string{"locate", "--json", "--no-such-flag", "x.csv"}, "unknown flag: --no-such-flag"},
		{[]string{"locate", "--no-such-flag", "--json", "x.csv"}, "unknown flag: --no-such-flag"},
		{[]string{"locate", "--json", "--count", "9", "x.csv"}, `--count "9": want 1, 2, 3, 4 or auto`},
		{[]string{"inspect", "--json"}, ""},
		{[]string{"calibrate", "--json"}, ""},
	}
	for _, tc := range cases {
		what := strings.Join(tc.args, " ")
		code, out, errOut := cli(t, tc.args...)
		if code != 2 {
			t.Errorf("%s: exit %d, want 2 (stderr %q)", what, code, errOut)
		}
		e := decodeJSONError(t, what, out)
		if e.Command != tc.args[0] || e.Kind != "usage" || e.File != "" || e.Line != 0 || e.Column != "" {
			t.Errorf("%s: error object %+v, want command %s and kind usage only", what, e, tc.args[0])
		}
		if tc.msg != "" && e.Message != tc.msg {
			t.Errorf("%s: message %q, want %q", what, e.Message, tc.msg)
		}
		if e.Message == "" || !strings.Contains(errOut, e.Message) {
			t.Errorf("%s: message %q is not the one on stderr %q", what, e.Message, errOut)
		}
	}
	// "--json" as another flag's value, or after "--", is not --json.
	for _, args := range [][]string{
		{"locate", "--no-such-flag", "--", "--json"},
		{"locate", "--json=false", "--no-such-flag"},
	} {
		if code, out, _ := cli(t, args...); code != 2 || out != "" {
			t.Errorf("%s: exit %d, stdout %q; want 2 and nothing", strings.Join(args, " "), code, out)
		}
	}
}

// TestJSONErrorInterrupted: an interrupted --json run says so on stdout
// with kind "interrupted" and keeps its exit status (130 for a cancelled
// run, as for SIGINT).
func TestJSONErrorInterrupted(t *testing.T) {
	dir := t.TempDir()
	survey := simulateLog(t, dir, "single-line.toml", "survey.csv")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	var out, errOut bytes.Buffer
	code := run(ctx, []string{"locate", "--json", survey}, &out, &errOut)
	if code != 130 {
		t.Fatalf("exit %d, want 130 (stderr %q)", code, errOut.String())
	}
	e := decodeJSONError(t, "interrupted locate --json", out.String())
	if e.Command != "locate" || e.Kind != "interrupted" || !strings.HasPrefix(e.Message, "interrupted") {
		t.Errorf("error object %+v, want command locate, kind interrupted", e)
	}
}

// TestJSONErrorKind: how a failure is sorted for the error object: a
// failed write of an output (under its own name or its temporary one) is
// "output", the same failure on an input is "input", a fault of the
// program is "internal".
func TestJSONErrorKind(t *testing.T) {
	outs := []string{"res/out"}
	cases := []struct {
		err        error
		kind, file string
	}{
		{&pathWriteError{path: "cal.json", err: errors.New("no space left on device")}, "output", ""},
		{&fs.PathError{Op: "write", Path: "res/.out.tmp123/results.json", Err: errors.New("no space")}, "output", "res/out/results.json"},
		{&fs.PathError{Op: "write", Path: "res/.out.tmp456", Err: errors.New("no space")}, "output", "res/out"},
		{&fs.PathError{Op: "open", Path: "res/out/results.json", Err: errors.New("no space")}, "output", ""},
		{&fs.PathError{Op: "mkdir", Path: "res/out", Err: fs.ErrPermission}, "output", ""},
		{&fs.PathError{Op: "open", Path: "survey.csv", Err: fs.ErrNotExist}, "input", ""},
		{&fs.PathError{Op: "open", Path: "res/outer.csv", Err: fs.ErrNotExist}, "input", ""},
		{errors.New("internal error: the result document is not valid: x"), "internal", ""},
		{errors.New("no traverse could be fitted"), "input", ""},
	}
	for _, tc := range cases {
		if kind, file := errorKind(tc.err, false, outs); kind != tc.kind || file != tc.file {
			t.Errorf("errorKind(%v) = %q, %q; want %q, %q", tc.err, kind, file, tc.kind, tc.file)
		}
	}
	if kind, _ := errorKind(errors.New("x"), true, outs); kind != "usage" {
		t.Errorf("a usage error is kind %q, want usage", kind)
	}
}

// TestLocateBaseLogFlag: simulate writes the base log with --base-log and
// locate read it only with --base, so the README walk-through used both
// names one line apart and "locate --base-log FILE" was an unknown flag.
// --base-log is now --base on locate: the documents agree but for their
// time of creation, the help still names --base alone, and the base log
// is an input (never an output whose stale temporaries are cleared).
func TestLocateBaseLogFlag(t *testing.T) {
	dir := t.TempDir()
	survey, base, _ := kestrelWithBase(t, dir)
	doc := func(flag string) string {
		out := mustCLI(t, "locate", "--json", "--group-by", "group", flag, base, survey)
		var kept []string
		for _, line := range strings.Split(out, "\n") {
			if !strings.HasPrefix(strings.TrimSpace(line), `"created":`) {
				kept = append(kept, line)
			}
		}
		return strings.Join(kept, "\n")
	}
	withBase, withBaseLog := doc("--base"), doc("--base-log")
	if withBase != withBaseLog {
		t.Errorf("locate --base-log gives another document than --base")
	}
	if !strings.Contains(withBase, filepath.Base(base)) {
		t.Errorf("the document does not name the base log %s", base)
	}
	_, help, _ := cli(t, "help", "locate")
	if strings.Contains(help, "base-log") || !strings.Contains(help, "--base BASE") {
		t.Errorf("locate's help should name --base and not --base-log")
	}
	c := commands["locate"]
	flags := c.flagSet(io.Discard)
	if err := flags.Parse([]string{"--base-log", base, survey}); err != nil {
		t.Fatal(err)
	}
	if outs := outputPaths("locate", flags, flags.Args()); len(outs) != 0 {
		t.Errorf("locate --base-log %s: outputs %v, want none", base, outs)
	}
}
