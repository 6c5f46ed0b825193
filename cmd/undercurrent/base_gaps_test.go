package main

// The base log in locate: a copy of the survey log, positions that move,
// the base log's own column names, repeated rows, gaps as times, readings
// left out as spikes, and the IAGA-2002 cases. Each test simulates the
// README walk-through's Kestrel Moor survey with its base station
// (kestrelWithBase) and changes the base log.

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// A byte-for-byte copy of the survey log given as --base is refused
// (usage error), as the survey log itself is. Before, it was accepted and
// every traverse reported "the readings show no anomaly".
func TestLocateBaseCopyOfSurveyRefused(t *testing.T) {
	dir := t.TempDir()
	survey, _, _ := kestrelWithBase(t, dir)
	data, err := os.ReadFile(survey)
	if err != nil {
		t.Fatal(err)
	}
	cp := filepath.Join(dir, "survey-copy.csv")
	if err := os.WriteFile(cp, data, 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", cp, survey)
	if code != 2 || !strings.Contains(stderr, "--base "+cp+" has the same content as the survey log "+survey) {
		t.Errorf("a copy of the survey: exit %d, stderr:\n%s\nwant exit 2 and the copy named", code, stderr)
	}
	// A survey log edited by one byte is no copy, but its positions move
	// by metres: a base station stands still, so it is refused too.
	edited := filepath.Join(dir, "survey-edited.csv")
	if err := os.WriteFile(edited, append(data, '\n'), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = cli(t, "locate", "--group-by", "group", "--base", edited, survey)
	if code != 1 || !strings.Contains(stderr, edited+": the base log's positions move") {
		t.Errorf("a survey log as the base: exit %d, stderr:\n%s\nwant exit 1 and the moving positions named", code, stderr)
	}
}

// A base log with its own column names is read with --base-column and
// gives the currents of the same log under the standard names; without the
// flag the error names --base-column, not --column (which applies to the
// survey logs only).
func TestLocateBaseColumn(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, _ := kestrelWithBase(t, dir)
	data, err := os.ReadFile(basePath)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(data), "\n")
	hdr := -1
	for i, l := range lines {
		if strings.HasPrefix(l, "time,") {
			hdr = i
			break
		}
	}
	if hdr < 0 {
		t.Fatalf("no header line in %s:\n%.300s", basePath, data)
	}
	lines[hdr] = strings.NewReplacer("bx", "magX", "by", "magY", "bz", "magZ").Replace(lines[hdr])
	renamed := filepath.Join(dir, "base-magXYZ.csv")
	if err := os.WriteFile(renamed, []byte(strings.Join(lines, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", renamed, survey)
	if code != 1 || !strings.Contains(stderr, "--base-column bx=NAME") || !strings.Contains(stderr, "this is the base log") {
		t.Errorf("exit %d, stderr:\n%s\nwant exit 1 and --base-column named", code, stderr)
	}
	want := baseLocateDoc(t, "--base", basePath, survey)
	got := baseLocateDoc(t, "--base", renamed, "--base-column", "bx=magX,by=magY,bz=magZ", survey)
	sameCurrents(t, "--base-column", got, want, 1e-6)
	if code, _, stderr := cli(t, "locate", "--group-by", "group", "--base-column", "bx=magX", survey); code != 2 || !strings.Contains(stderr, "--base-column needs --base") {
		t.Errorf("--base-column without --base: exit %d, stderr:\n%s", code, stderr)
	}
}

// A row written twice in the base log is left out with a warning naming
// its file line; a repeated time with other values is refused naming both
// lines. Before, both were "row 299: time ... does not follow ...", a
// 0-based index, with --time-order any too.
func TestLocateBaseRepeatedRow(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, _ := kestrelWithBase(t, dir)
	data, err := os.ReadFile(basePath)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(data), "\n")
	const at = 305 // 0-based: file line 306, a data row
	if len(lines) < at+2 || strings.HasPrefix(lines[at], "#") || strings.HasPrefix(lines[at], "time") {
		t.Fatalf("line %d of %s is no data row", at+1, basePath)
	}
	write := func(name, extra string) string {
		p := filepath.Join(dir, name)
		out := append(append(append([]string(nil), lines[:at+1]...), extra), lines[at+1:]...)
		if err := os.WriteFile(p, []byte(strings.Join(out, "")), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	dupe := write("base-dupe.csv", lines[at])
	clean := baseLocateDoc(t, "--base", basePath, survey)
	for _, extra := range [][]string{nil, {"--time-order", "any"}} {
		doc := baseLocateDoc(t, append(append([]string{"--base", dupe}, extra...), survey)...)
		found := false
		for _, w := range doc.Warnings {
			found = found || strings.Contains(w, dupe+": 1 row of the base log repeats the row before exactly") && strings.Contains(w, "on line 307")
		}
		if !found {
			t.Errorf("%v: warnings %q, want the repeat on line 307 named", extra, doc.Warnings)
		}
		sameCurrents(t, "repeated row", doc, clean, 1e-6)
	}
	f := strings.Split(strings.TrimSpace(lines[at]), ",")
	f[1] = "0" // bx: another value at the same time
	other := write("base-other.csv", strings.Join(f, ",")+"\n")
	code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", other, survey)
	if code != 1 || !strings.Contains(stderr, other+":307: the base log repeats time") || !strings.Contains(stderr, "on lines 306 and 307 with other values") {
		t.Errorf("exit %d, stderr:\n%s\nwant exit 1 and lines 306 and 307 named", code, stderr)
	}
}

// The gap limit is a time: a 6-s gap in the 1-s base log is interpolated
// by default (at least 60 s), and refused when --base-hold sets a smaller
// limit (below the default, as its help says), 0 included.
func TestLocateBaseGapSeconds(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	mid := base.Len() / 2
	gap := filepath.Join(dir, "base-gap6s.csv")
	writeBaseCSV(t, gap, base, 1, func(i int) bool { return i < mid || i >= mid+6 })
	if code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", gap, survey); code != 0 {
		t.Errorf("a 7-s gap in a 1-s base: exit %d, stderr:\n%s\nwant it interpolated", code, stderr)
	}
	for _, hold := range []string{"3", "0"} {
		code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", gap, "--base-hold", hold, survey)
		if code != 1 || !strings.Contains(stderr, "has a gap longer than") || !strings.Contains(stderr, "(7 s;") {
			t.Errorf("--base-hold %s: exit %d, stderr:\n%s\nwant the 7-s gap refused", hold, code, stderr)
		}
	}
}

// Readings the base despike leaves out are readings, not a gap: a 7-s
// spike in the base log, left out, passes with --base-hold 2 (a limit the
// 8 s between the readings either side would break). Before, the
// despike's hole was refused as a gap longer than 5 s, blaming the base
// record.
func TestLocateBaseSpikeIsNoGap(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	for i := 300; i < 307; i++ {
		base.Bz[i] += 5000
	}
	spiky := filepath.Join(dir, "base-spike.csv")
	writeBaseCSV(t, spiky, base, 1, nil)
	for _, extra := range [][]string{nil, {"--despike"}} {
		args := append(append([]string{"locate", "--json", "--group-by", "group", "--base", spiky, "--base-hold", "2"}, extra...), survey)
		code, stdout, stderr := cli(t, args...)
		if code != 0 || !strings.Contains(stdout, "7 readings of the base log depart") {
			t.Errorf("%v: exit %d, stderr:\n%s\nwant the spike left out (and warned about) and no gap", extra, code, stderr)
		}
	}
}

// The IAGA-2002 cases (the Boulder and LLO files in
// ../shared/data/iaga2002, SOURCE.md): --base-unit and --base-column do not
// apply to an IAGA-2002 base and are refused; an instrument-frame (UVW)
// record is refused with what to use instead.
func TestLocateBaseIAGAFlags(t *testing.T) {
	dir := t.TempDir()
	survey, _, _ := kestrelWithBase(t, dir)
	bou := ingesttest.IAGAFile(t, "bou20141101vmin.min")
	for _, f := range [][]string{{"--base-unit", "bx=uT,by=uT,bz=uT"}, {"--base-column", "bx=X"}} {
		code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", bou, f[0], f[1], survey)
		if code != 2 || !strings.Contains(stderr, f[0]+" does not apply to "+bou+": it is an IAGA-2002 file") {
			t.Errorf("%s with an IAGA-2002 base: exit %d, stderr:\n%s", f[0], code, stderr)
		}
	}
	llo := ingesttest.IAGAFile(t, "LLO20200106vsec.sec")
	head, err := os.ReadFile(llo)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(head[:min(len(head), 4000)], []byte("UVW")) {
		t.Fatalf("%s: not a UVW record", llo)
	}
	code, _, stderr := cli(t, "locate", "--group-by", "group", "--base", llo, survey)
	if code != 1 || !strings.Contains(stderr, fmt.Sprintf("base record %s is an IAGA-2002 record of elements UVW", llo)) ||
		!strings.Contains(stderr, "use the observatory's XYZ, HDZ or HEZ variation data") {
		t.Errorf("a UVW base: exit %d, stderr:\n%s", code, stderr)
	}
}
