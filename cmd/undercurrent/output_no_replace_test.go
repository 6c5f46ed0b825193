package main

import (
	"bytes"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fieldLog is a stand-in for a crew's own log, which no run can make again.
const fieldLog = "time,x,y,z,bx,by,bz\n0,0,0,0.3,1830.5,16021.0,-46258.7\n0.1,0.1,0,0.3,1831.2,16020.4,-46257.9\n"

// writeText writes text to dir/name and returns the path.
func writeText(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// unchanged fails the test when the file at p no longer holds text.
func unchanged(t *testing.T, what, p, text string) {
	t.Helper()
	got, err := os.ReadFile(p)
	if err != nil || string(got) != text {
		t.Errorf("%s: %s was replaced or removed (%v)", what, p, err)
	}
}

// noTemps fails the test when dir holds a temporary file of an output.
func noTemps(t *testing.T, dir string) {
	t.Helper()
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("%s left behind in %s", e.Name(), dir)
		}
	}
}

// TestConvertRefusesExistingOut checks that convert does not replace an
// existing OUT without --force: IN and OUT given the wrong way round
// (convert survey.parquet survey.csv, meaning the other way) replaced the
// crew's CSV log without a word. The refusal is a usage error found before
// any work (exit 2, as calibrate -o over a file that is no calibration);
// --force replaces the file, and an empty file is taken as new.
func TestConvertRefusesExistingOut(t *testing.T) {
	dir := t.TempDir()
	survey := writeText(t, dir, "survey.csv", fieldLog)
	pq := filepath.Join(dir, "survey.parquet")
	if code, _, errOut := cli(t, "convert", survey, pq); code != 0 {
		t.Fatalf("convert to Parquet: exit %d: %s", code, errOut)
	}
	// The arguments swapped: the log is kept.
	code, out, errOut := cli(t, "convert", pq, survey)
	if code != 2 || out != "" || !strings.Contains(errOut, "OUT "+survey+": the file exists") || !strings.Contains(errOut, "--force") {
		t.Errorf("convert over an existing log: exit %d, stdout %q, stderr %q; want exit 2 naming the file and --force", code, out, errOut)
	}
	unchanged(t, "convert IN OUT swapped", survey, fieldLog)
	// Into another format too (the existing Parquet file).
	other := writeText(t, dir, "other.csv", strings.Replace(fieldLog, "1830.5", "1900.0", 1))
	pqBefore, _ := os.ReadFile(pq)
	if code, _, _ := cli(t, "convert", other, pq); code != 2 {
		t.Errorf("convert over an existing Parquet file: exit %d, want 2", code)
	}
	if got, _ := os.ReadFile(pq); !bytes.Equal(got, pqBefore) {
		t.Error("the existing Parquet file was replaced")
	}
	// With --force it is replaced, and with --drop-missing (read whole) too.
	for _, extra := range [][]string{{"--force"}, {"--force", "--drop-missing"}} {
		args := append(append([]string{"convert"}, extra...), other, survey)
		if code, _, errOut := cli(t, args...); code != 0 {
			t.Fatalf("%q: exit %d: %s", args, code, errOut)
		}
		got, _ := os.ReadFile(survey)
		if !strings.Contains(string(got), "1900") {
			t.Errorf("%q: OUT not replaced:\n%s", args, got)
		}
	}
	// --drop-missing without --force refuses as well.
	if code, _, _ := cli(t, "convert", "--drop-missing", other, pq); code != 2 {
		t.Errorf("convert --drop-missing over an existing file: exit %d, want 2", code)
	}
	// An empty file, as mktemp makes, is taken as new.
	empty := writeText(t, dir, "empty.csv", "")
	if code, _, errOut := cli(t, "convert", other, empty); code != 0 {
		t.Errorf("convert over an empty file: exit %d: %s", code, errOut)
	}
	// A directory is refused as one, --force or not.
	if err := os.Mkdir(filepath.Join(dir, "d.csv"), 0o755); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "convert", "--force", other, filepath.Join(dir, "d.csv")); code != 2 || !strings.Contains(errOut, "is a directory") {
		t.Errorf("convert into a directory: exit %d, stderr %q", code, errOut)
	}
	// --force never replaces IN itself, through a link either.
	link := filepath.Join(dir, "link.csv")
	if err := os.Symlink(other, link); err != nil {
		t.Fatal(err)
	}
	if code, _, errOut := cli(t, "convert", "--force", other, link); code != 2 || !strings.Contains(errOut, "is the input") {
		t.Errorf("convert --force onto a link to IN: exit %d, stderr %q", code, errOut)
	}
	noTemps(t, dir)
}

// TestSimulateRefusesExistingOutputs checks that simulate replaces none of
// its output files (-o, --base-log, --truth) that exists without --force,
// and writes none of them then: before, simulate -o over a crew's log
// replaced it without a word. With --force all three are written.
func TestSimulateRefusesExistingOutputs(t *testing.T) {
	_, scen := scenario(t, "single-line.toml")
	for _, flag := range []string{"-o", "--base-log", "--truth"} {
		t.Run(flag, func(t *testing.T) {
			dir := t.TempDir()
			paths := map[string]string{
				"-o":         filepath.Join(dir, "line.csv"),
				"--base-log": filepath.Join(dir, "base.csv"),
				"--truth":    filepath.Join(dir, "truth.csv"),
			}
			kept := writeText(t, dir, filepath.Base(paths[flag]), fieldLog)
			args := []string{"simulate", scen, "-o", paths["-o"], "--base-log", paths["--base-log"], "--truth", paths["--truth"]}
			code, out, errOut := cli(t, args...)
			if code != 2 || out != "" || !strings.Contains(errOut, flag+" "+kept+": the file exists") {
				t.Errorf("exit %d, stdout %q, stderr %q; want exit 2 naming %s", code, out, errOut, flag)
			}
			unchanged(t, "simulate", kept, fieldLog)
			for f, p := range paths {
				if _, err := os.Stat(p); f != flag && err == nil {
					t.Errorf("%s %s written by a refused run", f, p)
				}
			}
			code, out, errOut = cli(t, append(args, "--force")...)
			if code != 0 {
				t.Fatalf("--force: exit %d: %s", code, errOut)
			}
			for f, p := range paths {
				if !strings.Contains(out, "wrote "+p) {
					t.Errorf("--force: %s %s not reported written: %s", f, p, out)
				}
			}
			if got, _ := os.ReadFile(kept); string(got) == fieldLog {
				t.Errorf("--force: %s not replaced", kept)
			}
			noTemps(t, dir)
		})
	}
}

// TestPlaceFileNeverReplaces checks the last step of a write without
// --force: a file made under the output's name while the output was being
// written (after the check before any work found none) is kept, the
// output is not written and its temporary file is gone; of outputs put in
// place together, those already placed are removed again, so that none
// of them appears.
func TestPlaceFileNeverReplaces(t *testing.T) {
	dir := t.TempDir()
	tmp := writeText(t, dir, ".out.csv.tmp1", "new\n")
	out := writeText(t, dir, "out.csv", fieldLog)
	if err := placeFile(tmp, out, false); err == nil || !strings.Contains(err.Error(), "was made while this output was being written") {
		t.Errorf("placeFile over a file: %v", err)
	}
	unchanged(t, "placeFile", out, fieldLog)
	if _, err := os.Stat(tmp); err == nil {
		t.Error("temporary file left")
	}
	// Together: the first is new, the second appears meanwhile.
	first, second := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	var st staged
	for _, p := range []string{first, second} {
		if err := st.add(p, func() (string, error) {
			return stageFile(p, ".csv", func(w io.Writer) error { _, err := io.WriteString(w, "x\n"); return err })
		}); err != nil {
			t.Fatal(err)
		}
	}
	writeText(t, dir, "b.csv", fieldLog)
	if err := st.place(false); err == nil {
		t.Error("placed over a file made meanwhile")
	}
	st.discard()
	if _, err := os.Stat(first); err == nil {
		t.Error("the first output was left although the second could not be placed")
	}
	unchanged(t, "staged", second, fieldLog)
	// With replace set both are placed.
	st = staged{}
	for _, p := range []string{first, second} {
		if err := st.add(p, func() (string, error) {
			return stageFile(p, ".csv", func(w io.Writer) error { _, err := io.WriteString(w, "x\n"); return err })
		}); err != nil {
			t.Fatal(err)
		}
	}
	if err := st.place(true); err != nil {
		t.Fatal(err)
	}
	for _, p := range []string{first, second} {
		if got, _ := os.ReadFile(p); string(got) != "x\n" {
			t.Errorf("%s holds %q after a forced placing", p, got)
		}
	}
	noTemps(t, dir)
}
