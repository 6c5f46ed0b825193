package main

// The base log's axes: a base log in north, east, down (the geophysical
// X, Y, Z of IAGA-2002 and observatory practice: X north, Y east, Z down)
// is turned to east, north, up when its file says so or --base-frame ned
// is given. The survey and base are the Kestrel Moor walk-through's
// (kestrelWithBase); the reference is the same base written in east,
// north, up.

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// writeBaseNED writes the base log b (east, north, up) in north, east,
// down: bx north = b.By, by east = b.Bx, bz down = -b.Bz, after the lines
// of head.
func writeBaseNED(t *testing.T, path string, b *ingest.Samples, head string) {
	t.Helper()
	var sb strings.Builder
	sb.WriteString(head)
	sb.WriteString("time,bx,by,bz\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range b.Len() {
		fmt.Fprintf(&sb, "%s,%s,%s,%s\n", f(b.Time[i]), f(b.By[i]), f(b.Bx[i]), f(-b.Bz[i]))
	}
	if err := os.WriteFile(path, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// Before, a base log's "# undercurrent.frame: ned" line was dropped and
// the base read as east, north, up: its north departures were taken from
// the survey's east and its down departures added to up, which left the
// currents further off than no base at all, with every fit sound.
func TestLocateBaseNED(t *testing.T) {
	dir := t.TempDir()
	survey, basePath, base := kestrelWithBase(t, dir)
	want := baseLocateDoc(t, "--base", basePath, survey)

	marked := filepath.Join(dir, "base-ned-marked.csv")
	writeBaseNED(t, marked, base, "# undercurrent.frame: ned\n")
	got := baseLocateDoc(t, "--base", marked, survey)
	sameCurrents(t, "base with a frame line ned", got, want, 1e-3)

	plain := filepath.Join(dir, "base-ned.csv")
	writeBaseNED(t, plain, base, "")
	got = baseLocateDoc(t, "--base", plain, "--base-frame", "ned", survey)
	sameCurrents(t, "--base-frame ned", got, want, 1e-3)

	// --base-frame takes enu or ned, needs --base, and does not apply to
	// an IAGA-2002 base (its elements give its axes).
	for _, c := range []struct {
		args []string
		msg  string
	}{
		{[]string{"--base", plain, "--base-frame", "sensor"}, "want enu or ned"},
		{[]string{"--base-frame", "ned"}, "--base-frame needs --base"},
		// Boulder, ../shared/data/iaga2002 (SOURCE.md).
		{[]string{"--base", ingesttest.IAGAFile(t, "bou20141101vmin.min"), "--base-frame", "ned"}, "--base-frame does not apply"},
	} {
		code, _, stderr := cli(t, append(append([]string{"locate", "--group-by", "group"}, c.args...), survey)...)
		if code != 2 || !strings.Contains(stderr, c.msg) {
			t.Errorf("%q: exit %d, stderr %s; want a usage error saying %q", c.args, code, stderr, c.msg)
		}
	}
}

// A survey read with --frame ned beside a base log that states no frame:
// the base is read as east, north, up (--frame does not reach it), with a
// warning naming --base-frame.
func TestLocateBaseFrameWarning(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	s, err := ingest.ReadSamples(survey)
	if err != nil {
		t.Fatal(err)
	}
	var sb strings.Builder
	sb.WriteString("time,x,y,z,bx,by,bz,group\n")
	f := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for i := range s.Len() {
		fmt.Fprintf(&sb, "%s,%s,%s,%s,%s,%s,%s,%s\n", f(s.Time[i]), f(s.Y[i]), f(s.X[i]), f(-s.Z[i]), f(s.By[i]), f(s.Bx[i]), f(-s.Bz[i]), s.Group[i])
	}
	nedSurvey := filepath.Join(dir, "survey-ned.csv")
	if err := os.WriteFile(nedSurvey, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	plain := filepath.Join(dir, "base-ned.csv")
	writeBaseNED(t, plain, base, "")
	doc := baseLocateDoc(t, "--frame", "ned", "--base", plain, nedSurvey)
	warned := false
	for _, w := range doc.Warnings {
		warned = warned || strings.Contains(w, "--base-frame ned")
	}
	if !warned {
		t.Errorf("warnings %q: want the base log read as enu beside a ned survey warned about, naming --base-frame ned", doc.Warnings)
	}
	right := baseLocateDoc(t, "--frame", "ned", "--base", plain, "--base-frame", "ned", nedSurvey)
	for _, w := range right.Warnings {
		if strings.Contains(w, "--base-frame ned") {
			t.Errorf("warning %q with --base-frame ned given", w)
		}
	}
}
