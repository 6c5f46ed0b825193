package main

import (
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// rewriteField writes a copy of the CSV log in at out with each field
// value (columns bx, by, bz) turned by f, every other line as it was.
func rewriteField(t *testing.T, in, out string, f func(axis int, v float64) float64) {
	t.Helper()
	data, err := os.ReadFile(in)
	if err != nil {
		t.Fatal(err)
	}
	var cols [3]int
	header := true
	var sb strings.Builder
	for _, ln := range strings.SplitAfter(string(data), "\n") {
		body := strings.TrimRight(ln, "\r\n")
		if body == "" || strings.HasPrefix(body, "#") {
			sb.WriteString(ln)
			continue
		}
		fields := strings.Split(body, ",")
		if header {
			header = false
			for k, name := range []string{"bx", "by", "bz"} {
				cols[k] = -1
				for i, h := range fields {
					if h == name {
						cols[k] = i
					}
				}
				if cols[k] < 0 {
					t.Fatalf("%s: no column %s in %q", in, name, body)
				}
			}
			sb.WriteString(ln)
			continue
		}
		for k, c := range cols {
			v, err := strconv.ParseFloat(fields[c], 64)
			if err != nil {
				t.Fatal(err)
			}
			fields[c] = strconv.FormatFloat(f(k, v), 'g', -1, 64)
		}
		sb.WriteString(strings.Join(fields, ",") + ln[len(body):])
	}
	if err := os.WriteFile(out, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// A DC survey log in microtesla (or gauss) under names that state no unit
// is refused, naming the unit and --unit; with --unit it gives the nT
// log's currents. The Earth's field at the surface is about 22000-67000 nT
// (IGRF): a full-field log reading a steady 49 "nT" is in uT. Before, the
// uT log ran to every fit "sound" at 1/1000 of the current (0.0017818 A
// for 1.80 A in review) with only a warning after the results. A log with
// the Earth's field removed (each axis less its median: the conductor's
// field and noise, whose size is not steady) is let through with the band
// warning, and gives the nT log's currents.
func TestLocateSurveyMicrotesla(t *testing.T) {
	dir := t.TempDir()
	_, sc := scenario(t, "kestrel-moor-step.toml")
	nT := filepath.Join(dir, "survey.csv")
	mustCLI(t, "simulate", sc, "-o", nT)
	want := baseLocateDoc(t, nT)

	for _, u := range []struct {
		unit  string
		scale float64
	}{{"uT", 1e-3}, {"G", 1e-5}} {
		path := filepath.Join(dir, "survey-"+u.unit+".csv")
		rewriteField(t, nT, path, func(_ int, v float64) float64 { return v * u.scale })
		flag := "--unit bx=" + u.unit + ",by=" + u.unit + ",bz=" + u.unit
		code, _, stderr := cli(t, "locate", "--group-by", "group", path)
		if code != 1 || !strings.Contains(stderr, "probably in "+u.unit) || !strings.Contains(stderr, "Refused: give their unit with "+flag) {
			t.Errorf("%s log: exit %d, stderr:\n%s\nwant it refused, naming %s", u.unit, code, stderr, flag)
		}
		// The refusal says what the band warning says: not both.
		if strings.Contains(stderr, "warning: "+path+": median |B|") {
			t.Errorf("%s log: stderr repeats the refusal as a band warning:\n%s", u.unit, stderr)
		}
		got := baseLocateDoc(t, "--unit", strings.TrimPrefix(flag, "--unit "), path)
		sameCurrents(t, u.unit+" with --unit", got, want, 1e-3)
	}

	// The Earth's field removed by the logger: the medians of the nT log
	// taken off each axis.
	var med [3]float64
	{
		s := readSurveyField(t, nT)
		for k := range med {
			med[k] = medianOf(s[k])
		}
	}
	removed := filepath.Join(dir, "survey-removed.csv")
	rewriteField(t, nT, removed, func(k int, v float64) float64 { return v - med[k] })
	got := baseLocateDoc(t, removed)
	if len(got.Groups) != len(want.Groups) {
		t.Fatalf("field removed: %d groups, want %d", len(got.Groups), len(want.Groups))
	}
	// The background fitted with each line takes up the medians: the
	// currents are the nT log's (a uniform field added to every reading
	// changes no gradient).
	sameCurrents(t, "field removed", got, want, 1e-3)
	warned := false
	for _, w := range got.Warnings {
		warned = warned || strings.HasPrefix(w, removed+": median |B|")
	}
	if !warned {
		t.Errorf("warnings %q: want the band warning for the log with the field removed", got.Warnings)
	}
}

// readSurveyField reads the field columns of a log.
func readSurveyField(t *testing.T, path string) [3][]float64 {
	t.Helper()
	s, err := ingest.ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	return [3][]float64{s.Bx, s.By, s.Bz}
}

// An AC log is not refused for a field in uT read as nT: AC sensors may
// leave the static field out, and an AC log's |B| says less of its unit.
// It draws the band warning naming uT, and its fit runs.
func TestLocateACMicroteslaWarned(t *testing.T) {
	dir := t.TempDir()
	nT := filepath.Join(dir, "walk.csv")
	mustCLI(t, "simulate", filepath.Join("..", "..", "testdata", "scenarios", "ac-walk-2khz.toml"), "-o", nT)
	uT := filepath.Join(dir, "walk-uT.csv")
	rewriteField(t, nT, uT, func(_ int, v float64) float64 { return v * 1e-3 })
	code, stdout, stderr := cli(t, "locate", "--freq", "50", "--window", "0.1", "--group-by", "group", uT)
	if out := stdout + stderr; code != 0 || !strings.Contains(out, uT+": median |B|") || !strings.Contains(out, "probably in uT") {
		t.Errorf("AC log in uT: exit %d, output:\n%s\nwant it fitted with the band warning", code, out)
	}
}

// rewriteLines writes a copy of the log in at out with each line that is
// not a comment passed through f (the header as line 0); f returns the
// lines to write in its place.
func rewriteLines(t *testing.T, in, out string, f func(k int, fields []string) [][]string) {
	t.Helper()
	data, err := os.ReadFile(in)
	if err != nil {
		t.Fatal(err)
	}
	var sb strings.Builder
	k := 0
	for _, ln := range strings.Split(strings.TrimSpace(string(data)), "\n") {
		if strings.HasPrefix(ln, "#") {
			continue
		}
		for _, r := range f(k, strings.Split(ln, ",")) {
			sb.WriteString(strings.Join(r, ",") + "\n")
		}
		k++
	}
	if err := os.WriteFile(out, []byte(sb.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// Longitude and latitude mapped to x and y are refused by locate as
// "undercurrent inspect" warns of them (ingest.DegreesLike), with the
// --column lon=,lat= that reads them. Before, locate read them as metres,
// the whole survey inside 5 cm, and fitted a go-and-return pair of 737
// million amperes (found in review). The same log read by its names
// (Latitude_deg, Longitude_deg) fits; --unit x=m,y=m says they are metres
// and lets them through.
func TestLocateDegreesAsMetres(t *testing.T) {
	dir := t.TempDir()
	a, _, _ := latLonLogs(t, dir)
	deg := filepath.Join(dir, "deg.csv")
	// time,lat,lon,height,bx,by,bz,group without the height.
	rewriteLines(t, a, deg, func(k int, c []string) [][]string {
		if k == 0 {
			return [][]string{{"time", "Latitude_deg", "Longitude_deg", "bx", "by", "bz", "group"}}
		}
		return [][]string{append(c[:3:3], c[4:]...)}
	})
	code, stdout, stderr := cli(t, "locate", "--group-by", "group", "--column", "x=Longitude_deg,y=Latitude_deg", deg)
	if code != 1 || !strings.Contains(stderr, "look like longitude and latitude in degrees") || !strings.Contains(stderr, "--column lon=Longitude_deg,lat=Latitude_deg") {
		t.Errorf("x=Longitude_deg,y=Latitude_deg: exit %d, stderr:\n%s\nwant it refused, naming --column lon=Longitude_deg,lat=Latitude_deg", code, stderr)
	}
	if strings.Contains(stdout, "fitted") {
		t.Errorf("refused, yet fitted:\n%s", stdout)
	}
	doc := baseLocateDoc(t, deg)
	if len(doc.Groups) != 10 {
		t.Errorf("read by its names: %d groups, want T01-T10", len(doc.Groups))
	}
	// Said to be metres: not refused for it.
	if _, _, stderr := cli(t, "locate", "--group-by", "group", "--column", "x=Longitude_deg,y=Latitude_deg", "--unit", "x=m,y=m", deg); strings.Contains(stderr, "look like longitude and latitude") {
		t.Errorf("with --unit x=m,y=m: refused as degrees:\n%s", stderr)
	}
}

// Two latitude/longitude logs without --origin, one traverse cut between
// them, are refused for their origins before their groups are matched:
// before, a false "the group T10 is also in ... 180 m apart" came first,
// the distance taken between readings placed about two origins (found in
// review).
func TestLocateOriginsBeforeGroups(t *testing.T) {
	dir := t.TempDir()
	a, b, _ := latLonLogs(t, dir)
	// The last 20 rows of T10 moved from the first log to the second.
	var tail [][]string
	ca, cb := filepath.Join(dir, "cut-a.csv"), filepath.Join(dir, "cut-b.csv")
	data, err := os.ReadFile(a)
	if err != nil {
		t.Fatal(err)
	}
	n := strings.Count(strings.TrimSpace(string(data)), "\n") // data rows
	rewriteLines(t, a, ca, func(k int, c []string) [][]string {
		if k > n-20 {
			tail = append(tail, c)
			return nil
		}
		return [][]string{c}
	})
	rewriteLines(t, b, cb, func(k int, c []string) [][]string {
		if k == 0 {
			return append([][]string{c}, tail...)
		}
		return [][]string{c}
	})
	if len(tail) != 20 || tail[0][7] != "T10" {
		t.Fatalf("moved %d rows, the first of group %q: want 20 of T10", len(tail), tail[0][7])
	}
	code, stdout, stderr := cli(t, "locate", "--group-by", "group", ca, cb)
	if code != 1 || !strings.Contains(stderr, "add --origin") {
		t.Errorf("exit %d, stderr:\n%s\nwant the refusal naming --origin", code, stderr)
	}
	if out := stdout + stderr; strings.Contains(out, "is also in") {
		t.Errorf("the group matched across logs before the origins were checked:\n%s", out)
	}
}
