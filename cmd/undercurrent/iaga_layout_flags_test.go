package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestIAGALayoutFlagsRefused: --unit, --column, --frame, --delimiter,
// --decimal-comma (and the other flags describing a log's layout) given
// with an IAGA-2002 input to inspect or convert are a usage error before
// any work, as locate refuses --base-unit and the like for an IAGA-2002
// base: the format fixes the columns, their axes and unit (nT). Before,
// they were dropped without a word (exit 0, same output as without
// them). The input is a real INTERMAGNET file (Boulder, November 2014).
func TestIAGALayoutFlagsRefused(t *testing.T) {
	iaga := ingestIAGA(t, "bou20141101vmin.min")
	dir := t.TempDir()
	for _, c := range []struct {
		flags []string
		named string
	}{
		{[]string{"--unit", "bx=uT,by=uT,bz=uT"}, "--unit does not apply"},
		{[]string{"--column", "bx=BOUZ", "--frame", "ned"}, "--column, --frame do not apply"},
		{[]string{"--frame", "ned"}, "--frame does not apply"},
		{[]string{"--delimiter", ";"}, "--delimiter does not apply"},
		{[]string{"--decimal-comma"}, "--decimal-comma does not apply"},
	} {
		for _, cmd := range [][]string{{"inspect", iaga}, {"convert", iaga, filepath.Join(dir, "out.csv")}} {
			args := append(append([]string{cmd[0]}, c.flags...), cmd[1:]...)
			code, stdout, errOut := cli(t, args...)
			if code != 2 || !strings.Contains(errOut, c.named) || !strings.Contains(errOut, "it is an IAGA-2002 file") || stdout != "" {
				t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and %q", args, code, stdout, errOut, c.named)
			}
		}
	}
	if _, err := os.Lstat(filepath.Join(dir, "out.csv")); err == nil {
		t.Error("a refused convert wrote its output")
	}
	// The flags that do apply to an IAGA-2002 file are still taken.
	if code, _, errOut := cli(t, "inspect", "--iaga-baseline-frame", iaga); code != 0 {
		t.Errorf("inspect --iaga-baseline-frame: exit %d: %s", code, errOut)
	}
	if code, _, errOut := cli(t, "convert", iaga, filepath.Join(dir, "ok.csv")); code != 0 {
		t.Errorf("convert: exit %d: %s", code, errOut)
	}
	// A CSV log takes them as before.
	csv := filepath.Join(dir, "ok.csv")
	if code, _, errOut := cli(t, "inspect", "--frame", "enu", csv); code != 0 {
		t.Errorf("inspect --frame enu on CSV: exit %d: %s", code, errOut)
	}
}

// TestIAGALayoutFlagsRefusedEverywhere: the layout flags are refused for
// an IAGA-2002 file given to locate, calibrate or replay as well, before
// any work (exit 2; replay before it connects to any broker), as for
// inspect and convert. locate refuses them only when every log is an
// IAGA-2002 file: in a run that mixes formats they describe the other
// logs, and the run goes on to its next check. An IAGA-2002 record given
// to locate as a survey log is named as one, with --base as the way to
// use it (before, it was told to map positions with --column, which the
// format refuses). The input is a real INTERMAGNET file (Boulder,
// November 2014).
func TestIAGALayoutFlagsRefusedEverywhere(t *testing.T) {
	iaga := ingestIAGA(t, "bou20141101vmin.min")
	other := ingestIAGA(t, "bou20141102vmin.min")
	dir := t.TempDir()
	for _, c := range []struct {
		args  []string
		named string
	}{
		{[]string{"locate", "--unit", "bx=uT", iaga}, "--unit does not apply to LOG " + iaga + ": it is an IAGA-2002 file"},
		{[]string{"locate", "--frame", "ned", iaga, other}, "--frame does not apply to LOGs " + iaga + " and 1 other: every one is an IAGA-2002 file"},
		{[]string{"calibrate", "--spin", iaga, "--column", "bx=X", "-o", filepath.Join(dir, "cal.json")}, "--column does not apply to --spin " + iaga},
		{[]string{"replay", iaga, "--asset", "fenwick-lane", "--unit", "bx=uT", "--broker", "nats://127.0.0.1:1", "--wait", "1s"}, "--unit does not apply to LOG " + iaga},
	} {
		code, stdout, errOut := cli(t, c.args...)
		if code != 2 || !strings.Contains(errOut, c.named) || stdout != "" {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit 2 and %q", c.args, code, stdout, errOut, c.named)
		}
	}
	if _, err := os.Lstat(filepath.Join(dir, "cal.json")); err == nil {
		t.Error("a refused calibrate wrote its output")
	}
	// A mixed run: the flag describes the CSV log, so it is not refused
	// for the IAGA-2002 one (the run then stops at the record's missing
	// positions, named as an observatory record).
	sc := filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml")
	csv := filepath.Join(dir, "line.csv")
	if code, _, errOut := cli(t, "simulate", sc, "-o", csv); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errOut)
	}
	code, _, errOut := cli(t, "locate", "--frame", "enu", csv, iaga)
	if code != 1 || strings.Contains(errOut, "does not apply") || !strings.Contains(errOut, "it is an IAGA-2002 observatory record, which is read as a base station (--base") {
		t.Errorf("locate --frame enu CSV IAGA: exit %d, stderr %q; want exit 1 naming the record as a base station's", code, errOut)
	}
}
