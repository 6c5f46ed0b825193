package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// writeGroupedBase writes the base log b as CSV with a "sensor" column
// (an alias of group) whose value for row i is name(i); add(i) is added to
// bx.
func writeGroupedBase(t *testing.T, path string, b *ingest.Samples, name func(i int) string, add func(i int) float64) {
	t.Helper()
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz,sensor\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range b.Len() {
		fmt.Fprintf(&sb, "%s,%s,%s,%s,%s\n", f(b.Time[i]), f(b.Bx[i]+add(i)), f(b.By[i]), f(b.Bz[i]), name(i))
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLocateBaseGroups: a base log is one magnetometer in one
// place. Two sensors logged together in one base file (a sensor column
// whose values overlap in time, their offsets 150 nT apart) are refused:
// the correction jumped between them and the current's sigma grew about
// twentyfold, with no word. Sessions one after another get a warning that
// they must not be traverses, and correct as the same readings without
// the column do; a column of one value is no group. A survey log without
// its position columns given as --base is refused: its readings are the
// survey's own (before, every fit found "no anomaly").
func TestLocateBaseGroups(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, base := kestrelWithBase(t, dir)
	want := baseLocateDoc(t, "--base", basePath, survey)

	two := filepath.Join(dir, "two-sensors.csv")
	writeGroupedBase(t, two, base, func(i int) string { return "B" + strconv.Itoa(1+i%2) }, func(i int) float64 { return 150 * float64(i%2) })
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--base", two, survey)
	if code != 1 || !strings.Contains(errOut, two+": the base log's group column sensor holds 2 values (\"B1\", \"B2\") whose readings overlap in time") {
		t.Errorf("two sensors in one base log: exit %d, stderr %q; want a refusal", code, errOut)
	}

	sessions := filepath.Join(dir, "sessions.csv")
	half := base.Len() / 2
	writeGroupedBase(t, sessions, base, func(i int) string { return "S" + strconv.Itoa(min(1, i/half)) }, func(int) float64 { return 0 })
	code, out, errOut := cli(t, "locate", "--group-by", "group", "--base", sessions, survey)
	if code != 0 || !strings.Contains(out, "warning: "+sessions+": the base log's group column sensor holds 2 values (\"S0\", \"S1\"), one after another in time: if they are traverses, this is a survey log") {
		t.Errorf("base sessions: exit %d, stdout %q, stderr %q; want a warning", code, out, errOut)
	}
	sameCurrents(t, "sessions", baseLocateDoc(t, "--base", sessions, survey), want, 0)

	one := filepath.Join(dir, "one-sensor.csv")
	writeGroupedBase(t, one, base, func(int) string { return "B1" }, func(int) float64 { return 0 })
	code, out, errOut = cli(t, "locate", "--group-by", "group", "--base", one, survey)
	if code != 0 || strings.Contains(out+errOut, "group column") {
		t.Errorf("one sensor: exit %d, stdout %q, stderr %q; want no word about its group column", code, out, errOut)
	}

	// The survey log without x, y, z: the copy check (SHA-256) and the
	// moving-position check cannot see it.
	s, err := ingest.ReadSamples(survey)
	if err != nil {
		t.Fatal(err)
	}
	noPos := filepath.Join(dir, "survey-no-positions.csv")
	var sb strings.Builder
	sb.WriteString("time,bx,by,bz,traverse\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range s.Len() {
		fmt.Fprintf(&sb, "%s,%s,%s,%s,%s\n", f(s.Time[i]), f(s.Bx[i]), f(s.By[i]), f(s.Bz[i]), s.Group[i])
	}
	if err := os.WriteFile(noPos, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--base", noPos, survey)
	if code != 1 || !strings.Contains(errOut, fmt.Sprintf("%s: %d of the base log's %d readings are readings of the survey log %s", noPos, s.Len(), s.Len(), survey)) {
		t.Errorf("survey without positions as --base: exit %d, stderr %q; want a refusal", code, errOut)
	}
}
