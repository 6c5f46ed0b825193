package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// readOrFail reads a whole file.
func readOrFail(t *testing.T, path string) []byte {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return data
}

// calibrate -o refuses, before any work (exit 2), to write over its own
// input log (under any name for it: a link, another spelling), over a file
// that is not a calibration (a survey log typed by mistake) and over a
// directory, and leaves those files as they were. It replaces an earlier
// calibration file. Before, "calibrate --spin spin.csv -o spin.csv" wrote
// the calibration over the spin log it had just recorded the checksum of.
func TestCalibrateOutputNotInput(t *testing.T) {
	dir := t.TempDir()
	spin := spinLog(t, dir)
	survey := filepath.Join(dir, "survey.csv")
	if err := os.WriteFile(survey, readOrFail(t, spin), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "spin-link.csv")
	if err := os.Symlink(spin, link); err != nil {
		t.Fatal(err)
	}
	spinData := readOrFail(t, spin)
	for _, c := range []struct{ out, want string }{
		{spin, "is the input --spin " + spin + " itself"},
		{dir + "/./spin.csv", "is the input --spin"},
		{link, "is the input --spin"},
		{survey, "the file exists and is not a calibration file"},
		{dir, "is a directory"},
	} {
		code, _, stderr := cli(t, "calibrate", "--spin", spin, "-o", c.out)
		if code != 2 || !strings.Contains(stderr, c.want) {
			t.Errorf("-o %s: exit %d, stderr:\n%s\nwant exit 2 and %q", c.out, code, stderr, c.want)
		}
	}
	if !bytes.Equal(readOrFail(t, spin), spinData) || !bytes.Equal(readOrFail(t, survey), spinData) {
		t.Fatal("a refused run changed a log")
	}
	cal := filepath.Join(dir, "cal.json")
	mustCLI(t, "calibrate", "--spin", spin, "-o", cal)
	mustCLI(t, "calibrate", "--spin", spin, "-o", cal) // an earlier calibration is replaced
	// -o does not apply to --show at all (refused before any path check);
	// either refusal leaves the file as it was.
	if code, _, stderr := cli(t, "calibrate", "--show", cal, "-o", cal); code != 2 || !strings.Contains(stderr, "does not apply to --show") {
		t.Errorf("--show cal.json -o cal.json: exit %d, %s", code, stderr)
	}
}

// simulate refuses two outputs on one path, and an output on its scenario
// file, before writing anything. Before, -o s.csv --base-log s.csv
// --truth s.csv printed "wrote s.csv" three times and kept only the truth.
func TestSimulateOutputsDistinct(t *testing.T) {
	dir := t.TempDir()
	_, path := scenario(t, "kestrel-moor-step.toml")
	sc := filepath.Join(dir, "kestrel.toml")
	scData := readOrFail(t, path)
	if err := os.WriteFile(sc, scData, 0o644); err != nil {
		t.Fatal(err)
	}
	s := filepath.Join(dir, "s.csv")
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-o", s, "--base-log", s, "--truth", s}, "-o " + s + " and --base-log " + s + " are the same file"},
		{[]string{"-o", s, "--truth", dir + "/./s.csv"}, "are the same file"},
		{[]string{"-o", s, "--truth", sc}, "--truth " + sc + " is the input SCENARIO " + sc + " itself"},
	} {
		code, _, stderr := cli(t, append([]string{"simulate", sc}, c.args...)...)
		if code != 2 || !strings.Contains(stderr, c.want) {
			t.Errorf("%v: exit %d, stderr:\n%s\nwant exit 2 and %q", c.args, code, stderr, c.want)
		}
	}
	if _, err := os.Stat(s); err == nil {
		t.Error("a refused run wrote s.csv")
	}
	if !bytes.Equal(readOrFail(t, sc), scData) {
		t.Error("a refused run changed the scenario")
	}
}
