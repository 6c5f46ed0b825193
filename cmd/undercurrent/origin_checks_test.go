package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// groupPoints runs locate --json with args and returns each group's first
// source point (local metres), by group key.
func groupPoints(t *testing.T, args ...string) map[string][3]float64 {
	t.Helper()
	doc := locateDoc(t, args...)
	got := map[string][3]float64{}
	for _, g := range doc.Groups {
		if len(g.Sources) > 0 {
			got[g.Key] = g.Sources[0].Point
		}
	}
	return got
}

// TestLocateLocalLogWithoutOrigin: a log of local metres with no origin,
// beside logs of WGS84 latitude and longitude (converted with the WGS84
// ellipsoid, NIMA TR8350.2, see latLonLogs), was placed about their
// origin, by default their own first reading, 6 m from the origin its
// x, y are about: the Kestrel Moor cable's later traverses came out 6 m
// off without a word. It is refused, naming the log and both remedies;
// either one (the log's origin written into it, or given with --origin)
// places the traverses where the local log alone puts them, within 1 cm.
func TestLocateLocalLogWithoutOrigin(t *testing.T) {
	dir := t.TempDir()
	a, _, local := latLonLogs(t, dir)
	later := laterTraverses(t, local)
	want := groupPoints(t, "--group-by", "group", later)

	// The later traverses without their origin.
	var keep []string
	for _, l := range strings.SplitAfter(readText(t, later), "\n") {
		if !strings.HasPrefix(l, "# undercurrent.origin") {
			keep = append(keep, l)
		}
	}
	bare := filepath.Join(dir, "bare-t11.csv")
	if err := os.WriteFile(bare, []byte(strings.Join(keep, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, logs := range [][]string{{a, bare}, {bare, a}} {
		code, _, errOut := cli(t, append([]string{"locate", "--group-by", "group"}, logs...)...)
		if code != 1 || !strings.Contains(errOut, bare+": the log's x, y are local metres with no geographic origin, beside logs with latitude and longitude ("+a+")") ||
			!strings.Contains(errOut, `"# undercurrent.origin: LAT LON HEIGHT"`) || !strings.Contains(errOut, "--origin LAT,LON[,HEIGHT]") {
			t.Errorf("locate %s: exit %d, want 1 and a refusal naming %s and how to give its origin:\n%s", strings.Join(logs, " "), code, bare, errOut)
		}
	}

	check := func(what string, args ...string) {
		t.Helper()
		got := groupPoints(t, append([]string{"--group-by", "group"}, args...)...)
		for k, p := range want {
			q, ok := got[k]
			if !ok {
				t.Errorf("%s: no fit of %s", what, k)
				continue
			}
			if d := math.Hypot(q[0]-p[0], q[1]-p[1]); d > 0.01 {
				t.Errorf("%s: %s's line at (%.3f, %.3f), %.3f m from where the local log alone puts it (%.3f, %.3f)", what, k, q[0], q[1], d, p[0], p[1])
			}
		}
	}
	// The origin given with --origin: the latitude/longitude log is
	// placed about it, and the local log taken to be about it.
	check("--origin", "--origin", "54.3125,-2.0883,312", a, bare)
	// The origin written into the log: locate then names the --origin to
	// give, which works.
	with := filepath.Join(dir, "with-t11.csv")
	if err := os.WriteFile(with, []byte("# undercurrent.origin: 54.3125 -2.0883 312\n"+strings.Join(keep, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut := cli(t, "locate", "--group-by", "group", a, with)
	m := regexp.MustCompile(`the local log's origin, --origin (\S+)$`).FindStringSubmatch(strings.TrimSpace(errOut))
	if code != 1 || m == nil {
		t.Fatalf("a log given its origin beside a latitude/longitude log: exit %d, want 1 and the --origin to give:\n%s", code, errOut)
	}
	check("the origin written into the log", "--origin", m[1], a, with)
}

// TestLocateOriginGivenBack: the --origin locate suggests for a
// latitude/longitude log beside a local one converted from another
// (whose origin, that log's first reading, has nine decimals) was printed
// to seven decimals, and the same origin given back was refused as "not
// the log's own", the message printing the same numbers it said differ.
// It is printed to 1e-9 degrees now, and origins within 1e-7 degrees
// (1.1 cm of latitude on the WGS84 ellipsoid, NIMA TR8350.2) and 1 cm of
// height are one, so the seven-decimal form works too. With the local log
// first, the message no longer speaks of its latitude and longitude.
func TestLocateOriginGivenBack(t *testing.T) {
	dir := t.TempDir()
	a, b, _ := latLonLogs(t, dir)
	bLocal := filepath.Join(dir, "ll-b-local.csv")
	mustCLI(t, "convert", b, bLocal)
	var own string
	for _, l := range strings.Split(readText(t, bLocal), "\n") {
		if v, ok := strings.CutPrefix(l, "# undercurrent.origin: "); ok {
			own = strings.Join(strings.Fields(v), ",")
		}
	}
	lat, lon, h := parseOrigin(t, own)
	if math.Abs(lat*1e7-math.Round(lat*1e7)) < 1e-3 && math.Abs(lon*1e7-math.Round(lon*1e7)) < 1e-3 {
		t.Fatalf("the converted log's origin %s has no more than 7 decimals: the test needs more", own)
	}
	for _, logs := range [][]string{{a, bLocal}, {bLocal, a}} {
		code, _, errOut := cli(t, append([]string{"locate", "--group-by", "group"}, logs...)...)
		m := regexp.MustCompile(`give the logs with latitude and longitude the local log's origin, --origin (\S+)$`).FindStringSubmatch(strings.TrimSpace(errOut))
		if code != 1 || m == nil || strings.Contains(errOut, "each log's latitude and longitude") {
			t.Errorf("locate %s: exit %d, want 1 and the local log's origin to give:\n%s", strings.Join(logs, " "), code, errOut)
			continue
		}
		if la, lo, he := parseOrigin(t, m[1]); math.Abs(la-lat) > 1e-9 || math.Abs(lo-lon) > 1e-9 || math.Abs(he-h) > 1e-3 {
			t.Errorf("suggested --origin %s, want the local log's own %s", m[1], own)
		}
		mustCLI(t, append([]string{"locate", "--group-by", "group", "--origin", m[1]}, logs...)...)
	}
	seven := strconv.FormatFloat(lat, 'f', 7, 64) + "," + strconv.FormatFloat(lon, 'f', 7, 64) + "," + strconv.FormatFloat(h, 'f', 2, 64)
	mustCLI(t, "locate", "--group-by", "group", "--origin", seven, a, bLocal)
	// An origin 1e-6 degrees (11 cm) off is another.
	off := strconv.FormatFloat(lat+1e-6, 'f', 9, 64) + "," + strconv.FormatFloat(lon, 'f', 9, 64) + "," + strconv.FormatFloat(h, 'f', 3, 64)
	code, _, errOut := cli(t, "locate", "--group-by", "group", "--origin", off, a, bLocal)
	m := regexp.MustCompile(`give the log's own, --origin (\S+)$`).FindStringSubmatch(strings.TrimSpace(errOut))
	if code != 1 || m == nil {
		t.Fatalf("--origin 11 cm from the local log's own: exit %d, want 1 and a refusal giving its own:\n%s", code, errOut)
	}
	mustCLI(t, "locate", "--group-by", "group", "--origin", m[1], a, bLocal)
}

// TestLocateOriginUnreadLog: --origin with a log that cannot be read (a
// file that is not there, a latitude/longitude log whose field columns
// need --column) said the log had no latitude and longitude columns and
// to leave --origin out, which loses an origin the log needs; the read's
// own error is reported now.
func TestLocateOriginUnreadLog(t *testing.T) {
	dir := t.TempDir()
	a, _, _ := latLonLogs(t, dir)
	missing := filepath.Join(dir, "no-such-file.csv")
	code, _, errOut := cli(t, "locate", "--origin", "54.3125,-2.0883", missing)
	if code == 0 || strings.Contains(errOut, "leave --origin out") || !strings.Contains(errOut, missing+": cannot read") {
		t.Errorf("--origin with a missing log: exit %d, want the read error:\n%s", code, errOut)
	}
	text := readText(t, a)
	named := filepath.Join(dir, "ll-a-names.csv")
	if err := os.WriteFile(named, []byte(strings.Replace(text, "bx,by,bz", "magE,magN,magU", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errOut = cli(t, "locate", "--group-by", "group", "--origin", "54.3125,-2.0883,312", named)
	if code == 0 || strings.Contains(errOut, "leave --origin out") || !strings.Contains(errOut, "no column for bx, by, bz") {
		t.Errorf("--origin with a log whose field columns need --column: exit %d, want the read error:\n%s", code, errOut)
	}
	mustCLI(t, "locate", "--group-by", "group", "--origin", "54.3125,-2.0883,312", "--column", "bx=magE,by=magN,bz=magU", named)
}
