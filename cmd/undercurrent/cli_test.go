package main

import (
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// simulateLog writes the log of a scenario in testdata/scenarios into dir.
func simulateLog(t *testing.T, dir, scenarioFile, name string) string {
	t.Helper()
	_, path := scenario(t, scenarioFile)
	out := filepath.Join(dir, name)
	mustCLI(t, "simulate", path, "-o", out)
	return out
}

// TestMissingInputWording: an input file that cannot be read is a failure
// (exit 1) worded "FILE: cannot read: REASON" whichever flag or argument
// names it and whichever part of the program opens it (ingest for logs,
// the calibrate package for a calibration file, the simulator for a
// scenario); README "Exit status".
func TestMissingInputWording(t *testing.T) {
	dir := t.TempDir()
	survey := simulateLog(t, dir, "single-line.toml", "survey.csv")
	nosuch := func(name string) string { return filepath.Join(dir, name) }
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"locate", "--calibration", nosuch("nosuch.json"), survey}, nosuch("nosuch.json") + ": cannot read: no such file or directory"},
		{[]string{"locate", "--base", nosuch("nosuch.csv"), survey}, nosuch("nosuch.csv") + ": cannot read: no such file or directory"},
		{[]string{"locate", nosuch("nosuch.csv")}, nosuch("nosuch.csv") + ": cannot read: no such file or directory"},
		{[]string{"locate", "--calibration", dir, survey}, dir + ": cannot read: is a directory"},
		{[]string{"calibrate", "--show", nosuch("nosuch.json")}, nosuch("nosuch.json") + ": cannot read: no such file or directory"},
		{[]string{"calibrate", "--spin", nosuch("nosuch.csv")}, nosuch("nosuch.csv") + ": cannot read: no such file or directory"},
		{[]string{"simulate", nosuch("nosuch.toml"), "-o", nosuch("x.csv")}, nosuch("nosuch.toml") + ": cannot read: no such file or directory"},
		{[]string{"inspect", nosuch("nosuch.csv")}, nosuch("nosuch.csv") + ": cannot read: no such file or directory"},
		{[]string{"convert", nosuch("nosuch.csv"), nosuch("x.parquet")}, nosuch("nosuch.csv") + ": cannot read: no such file or directory"},
	}
	for _, tc := range cases {
		code, _, errOut := cli(t, tc.args...)
		first, _, _ := strings.Cut(errOut, "\n")
		if code != 1 || !strings.Contains(first, tc.want) || strings.Contains(first, "open ") {
			t.Errorf("%q: exit %d, first line %q; want exit 1 and %q", tc.args, code, first, tc.want)
		}
	}
}

// TestCalibrateRefusesFlagsThatDoNotApply: like --reference with --zero,
// a flag the chosen method does not use is a usage error (exit 2), found
// before any log is read; so is -o naming a directory, which used to fail
// only after the fit, on the rename.
func TestCalibrateRefusesFlagsThatDoNotApply(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "spin.csv")
	writeSpinLog(t, spin, [3]float64{310, -240, 180}, nil)
	cal := filepath.Join(dir, "cal.json")
	mustCLI(t, "calibrate", "--spin", spin, "-o", cal)
	copyPath := filepath.Join(dir, "copy.json")
	sub := filepath.Join(dir, "cal-dir")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"calibrate", "--zero", spin, "--refine"}, "--refine is for the spin method"},
		{[]string{"calibrate", "--show", cal, "-o", copyPath}, "-o (--output) does not apply to --show"},
		{[]string{"calibrate", "--show", cal, "--column", "bx=magX"}, "--column does not apply to --show"},
		{[]string{"calibrate", "--spin", spin, "-o", sub}, "-o " + sub + ": is a directory"},
		// The log named does not exist: the flags are refused first.
		{[]string{"calibrate", "--spin", filepath.Join(dir, "nosuch.csv"), "-o", sub}, "is a directory"},
	}
	for _, tc := range cases {
		code, _, errOut := cli(t, tc.args...)
		if code != 2 || !strings.Contains(errOut, tc.want) {
			t.Errorf("%q: exit %d, stderr %q; want exit 2 and %q", tc.args, code, errOut, tc.want)
		}
	}
	if _, err := os.Stat(copyPath); !os.IsNotExist(err) {
		t.Errorf("--show -o wrote %s", copyPath)
	}
	if entries, _ := os.ReadDir(sub); len(entries) != 0 || hasTemp(t, dir) {
		t.Errorf("-o DIR left files: %v", entries)
	}
}

// hasTemp reports whether dir holds a hidden temporary file.
func hasTemp(t *testing.T, dir string) bool {
	t.Helper()
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") && strings.Contains(e.Name(), ".tmp") {
			return true
		}
	}
	return false
}

// TestCalibrateIgnoresTimeOrder: no calibration method uses time (the
// ellipsoid, flip and zero fits take the readings as a set), so a spin log
// whose clock repeats or steps back is calibrated exactly as the same
// readings in order.
func TestCalibrateIgnoresTimeOrder(t *testing.T) {
	dir := t.TempDir()
	spin := filepath.Join(dir, "spin.csv")
	writeSpinLog(t, spin, [3]float64{310, -240, 180}, nil)
	data, err := os.ReadFile(spin)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	for i := 1; i < len(lines); i++ {
		_, rest, _ := strings.Cut(lines[i], ",")
		lines[i] = []string{"5", "3", "3", "1"}[i%4] + "," + rest // repeats and steps back
	}
	jumbled := filepath.Join(dir, "jumbled.csv")
	if err := os.WriteFile(jumbled, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	offset := func(out string) string {
		for _, l := range strings.Split(out, "\n") {
			if strings.HasPrefix(l, "offset") {
				return l
			}
		}
		return ""
	}
	want := offset(mustCLI(t, "calibrate", "--spin", spin))
	got := offset(mustCLI(t, "calibrate", "--spin", jumbled))
	if want == "" || got != want {
		t.Errorf("offset with times out of order %q, in order %q", got, want)
	}
	// Asked for, the order is still checked.
	if code, _, _ := cli(t, "calibrate", "--spin", jumbled, "--time-order", "ordered"); code != 1 {
		t.Errorf("--time-order ordered: exit %d, want 1", code)
	}
}

// TestLocateJSONWarningsOnStderr: with --json the document goes to stdout,
// usually a file; its warnings go to stderr as well, so the operator sees
// them. A log in uT read as nT is warned about (its median |B| of about
// 50 is far outside the Earth's field of 22000-67000 nT, IGRF).
func TestLocateJSONWarningsOnStderr(t *testing.T) {
	dir := t.TempDir()
	survey := simulateLog(t, dir, "single-line.toml", "survey.csv")
	data, err := os.ReadFile(survey)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(data), "\n"), "\n")
	col := map[string]int{}
	header := -1
	for i, l := range lines {
		if strings.HasPrefix(l, "#") {
			continue
		}
		if header < 0 {
			header = i
			for j, name := range strings.Split(l, ",") {
				col[name] = j
			}
			continue
		}
		cells := strings.Split(l, ",")
		for _, name := range []string{"bx", "by", "bz"} {
			v, err := strconv.ParseFloat(cells[col[name]], 64)
			if err != nil {
				t.Fatalf("line %d: %v", i+1, err)
			}
			cells[col[name]] = strconv.FormatFloat(v/1000, 'g', -1, 64)
		}
		lines[i] = strings.Join(cells, ",")
	}
	uT := filepath.Join(dir, "survey-uT.csv")
	if err := os.WriteFile(uT, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errOut := cli(t, "locate", "--json", uT)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(out, "outside the Earth's field band") {
		t.Fatalf("the document lacks the unit warning")
	}
	if !strings.Contains(errOut, "warning: "+uT+": median |B|") {
		t.Errorf("stderr %q lacks the unit warning", errOut)
	}
}

// TestStaleTempsRemoved: a temporary file or directory that a killed run
// left beside an output is removed by the next run writing that output
// once it is an hour old, and not before (a run still writing touches it);
// nothing else is touched.
func TestStaleTempsRemoved(t *testing.T) {
	dir := t.TempDir()
	old := time.Now().Add(-2 * time.Hour)
	mk := func(name string, isDir bool, stale bool) string {
		p := filepath.Join(dir, name)
		var err error
		if isDir {
			err = os.Mkdir(p, 0o755)
			if err == nil {
				err = os.WriteFile(filepath.Join(p, "results.json"), []byte("{}"), 0o644)
				if err == nil && stale {
					err = os.Chtimes(filepath.Join(p, "results.json"), old, old)
				}
			}
		} else {
			err = os.WriteFile(p, []byte("x"), 0o644)
		}
		if err == nil && stale {
			err = os.Chtimes(p, old, old)
		}
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	// The results that .res.old-77 was the earlier copy of: a
	// replacement that went through (with res missing, it would be put
	// back: TestKilledReplaceRestored).
	mk("res", true, false)
	gone := []string{
		mk(".line.csv.tmp3953550841", false, true),
		mk(".line.csv.tmp12.csv", false, true),
		mk(".res.tmp-1847096839", true, true),
		mk(".res.old-77", true, true),
	}
	kept := []string{
		mk(".line.csv.tmp42", false, false),  // recent: a run may be writing it
		mk(".res.tmp-5", true, false),        // recent
		mk(".line.csv.tmpfile", false, true), // not our pattern
		mk(".other.csv.tmp99", false, true),  // another output's
		mk("line.csv.tmp99", false, true),    // not hidden
		mk(".line.csv.tmp99.csv.bak", false, true),
	}
	// A directory whose own time is old but which holds a recent file is
	// being filled.
	busy := mk(".res.tmp-6", true, false)
	if err := os.Chtimes(busy, old, old); err != nil {
		t.Fatal(err)
	}
	kept = append(kept, busy)
	_, scen := scenario(t, "single-line.toml")
	mustCLI(t, "simulate", scen, "-o", filepath.Join(dir, "line.csv"))
	// locate's result directory: the run need not succeed for the sweep.
	cli(t, "locate", "-o", filepath.Join(dir, "res"), filepath.Join(dir, "nosuch.csv"))
	for _, p := range gone {
		if _, err := os.Lstat(p); !os.IsNotExist(err) {
			t.Errorf("%s: stale, not removed", filepath.Base(p))
		}
	}
	for _, p := range kept {
		if _, err := os.Lstat(p); err != nil {
			t.Errorf("%s: removed, want kept", filepath.Base(p))
		}
	}
}

// TestConvertNamesEveryExtension: convert's help and its refusal of an
// unknown extension list every extension it writes (logExts), as the
// README's command table does.
func TestConvertNamesEveryExtension(t *testing.T) {
	var help strings.Builder
	c := commands["convert"]
	c.printHelp(&help, c.flagSet(io.Discard))
	code, _, errOut := cli(t, "convert", "in.csv", filepath.Join(t.TempDir(), "out.foo"))
	if code != 2 {
		t.Errorf("OUT out.foo: exit %d, want 2", code)
	}
	for ext := range logExts {
		named := regexp.MustCompile(regexp.QuoteMeta(ext) + `([^a-z]|$)`)
		if !named.MatchString(help.String()) {
			t.Errorf("convert --help does not name %s", ext)
		}
		if !named.MatchString(errOut) {
			t.Errorf("convert's refusal %q does not name %s", errOut, ext)
		}
	}
}
