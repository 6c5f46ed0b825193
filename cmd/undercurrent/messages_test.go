package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCleanMessage checks the printing of library errors: one
// "undercurrent CMD:" prefix (added by run), no package names, no doubled
// words, the file, line and column kept, and a file named like a package
// kept too.
func TestCleanMessage(t *testing.T) {
	cases := []struct {
		cmd  string
		args []string
		msg  string
		want string
	}{
		{"locate", nil, "calibrate: line.arrow: demodulate: 50 Hz (harmonic 1 of 50 Hz) is at or above the Nyquist frequency 2.5 Hz of the log",
			"line.arrow: AC demodulation: 50 Hz (harmonic 1 of 50 Hz) is at or above the Nyquist frequency 2.5 Hz of the log"},
		{"locate", nil, "calibrate: base correction: base record b.min does not overlap rover log a.csv",
			"base correction: base record b.min does not overlap rover log a.csv"},
		{"simulate", nil, "simulate: simulate: x.toml:4:8: conductor 1: unknown kind", "x.toml:4:8: conductor 1: unknown kind"},
		{"inspect", nil, `ingest: a.csv:3: column bz: "1oo.0" is not a number`, `a.csv:3: column bz: "1oo.0" is not a number`},
		{"serve", nil, "live: asset fenwick-lane: no sensors", "asset fenwick-lane: no sensors"},
		{"locate", []string{"report"}, "ingest: report: no data rows", "report: no data rows"},
		{"convert", nil, "ingest: h.csv:38: column bx: missing value (empty cell); missing values are not allowed by default",
			"h.csv:38: column bx: missing value (empty cell); --strict refuses missing values (without it they are carried over)"},
		{"locate", nil, "ingest: h.csv:38: column bx: missing value (empty cell); missing values are not allowed by default",
			"h.csv:38: column bx: missing value (empty cell); missing values are refused unless --drop-missing drops their rows"},
	}
	for _, tc := range cases {
		if got := cleanMessage(tc.cmd, tc.args, tc.msg); got != tc.want {
			t.Errorf("%s %q:\n got %q\nwant %q", tc.cmd, tc.msg, got, tc.want)
		}
	}
}

// TestCommandErrorsClean checks whole command lines: a demodulation
// frequency above the log's Nyquist frequency, a missing value under
// convert --strict, and a missing output directory.
func TestCommandErrorsClean(t *testing.T) {
	dir := t.TempDir()
	log := simulatedLog(t, dir, "line.csv")
	holes := filepath.Join(dir, "holes.csv")
	if err := os.WriteFile(holes, []byte("time,x,y,z,bx,by,bz\n0,0,0,0.3,1,2,3\n1,0.1,0,0.3,,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		args []string
		want string // the whole of stderr
		code int
	}{
		{[]string{"convert", "--strict", holes, filepath.Join(dir, "h.csv")},
			"undercurrent convert: " + holes + ":3: column bx: missing value (empty cell); --strict refuses missing values (without it they are carried over)\n", 1},
		{[]string{"convert", log, filepath.Join(dir, "nodir", "x.csv")},
			"undercurrent convert: OUT " + filepath.Join(dir, "nodir", "x.csv") + ": output directory " + filepath.Join(dir, "nodir") + " does not exist\n" + `run "undercurrent help convert" for usage` + "\n", 2},
		{[]string{"locate", "-o", filepath.Join(log, "res"), log},
			"undercurrent locate: -o " + filepath.Join(log, "res") + ": output directory " + log + " is not a directory\n" + `run "undercurrent help locate" for usage` + "\n", 2},
	}
	for _, tc := range cases {
		code, _, errOut := cli(t, tc.args...)
		if code != tc.code || errOut != tc.want {
			t.Errorf("%s: exit %d, stderr\n %q\nwant\n %q", strings.Join(tc.args, " "), code, errOut, tc.want)
		}
	}
	code, _, errOut := cli(t, "locate", "--freq", "1e6", log)
	if code != 1 || !strings.HasPrefix(errOut, "undercurrent locate: "+log+": AC demodulation: ") || strings.Count(errOut, "undercurrent") != 1 || strings.Contains(errOut, "calibrate:") {
		t.Errorf("demodulation above Nyquist: exit %d, stderr %q", code, errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, "nodir")); !os.IsNotExist(err) {
		t.Error("a missing output directory was created")
	}
}
