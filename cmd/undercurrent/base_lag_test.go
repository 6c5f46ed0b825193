package main

import (
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
)

// lagSurvey simulates an invented CP main crossed by 12 traverses, one
// every 753 s (2.5 h) from start, with no drift, and returns the log and,
// when bou is not nil, the log with the real Boulder variation of those
// hours added (bou's east, north, up less their value at the first
// reading, linearly between its minutes), as a survey beside the
// observatory would see it.
func lagSurvey(t *testing.T, dir, start string, bou *ingest.Samples) (clean, varied string) {
	t.Helper()
	sc := filepath.Join(dir, "lag.toml")
	toml := fmt.Sprintf(`name = "lag-check"
site = "Harrow Fen CP main (invented)"
seed = 41
start = %q
[earth]
field_nt = [3300.0, 20600.0, -47477.0]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = 1.0
sample_rate_hz = 10.0
[survey]
route = [[0.0, 0.0], [330.0, 0.0]]
count = 12
spacing_m = 30.0
length_m = 16.0
speed_m_s = 0.3
turn_s = 700.0
[[conductor]]
name = "main"
kind = "polyline"
vertices = [[-100.0, 0.0, -1.5], [500.0, 0.0, -1.5]]
currents_a = [1.5]
`, start)
	if err := os.WriteFile(sc, []byte(toml), 0o644); err != nil {
		t.Fatal(err)
	}
	clean = filepath.Join(dir, "clean-"+start[11:13]+".csv")
	mustCLI(t, "simulate", sc, "-o", clean)
	if bou == nil {
		return clean, ""
	}
	data, err := os.ReadFile(clean)
	if err != nil {
		t.Fatal(err)
	}
	at := func(x float64) [3]float64 {
		j := sort.SearchFloat64s(bou.Time, x)
		if j == 0 || j >= len(bou.Time) {
			t.Fatalf("time %g outside the Boulder record", x)
		}
		w := (x - bou.Time[j-1]) / (bou.Time[j] - bou.Time[j-1])
		lerp := func(v []float64) float64 { return v[j-1] + w*(v[j]-v[j-1]) }
		return [3]float64{lerp(bou.Bx), lerp(bou.By), lerp(bou.Bz)}
	}
	var out []string
	var col map[string]int
	var first *[3]float64
	for _, line := range strings.Split(strings.TrimRight(string(data), "\n"), "\n") {
		if strings.HasPrefix(line, "#") {
			out = append(out, line)
			continue
		}
		f := strings.Split(line, ",")
		if col == nil {
			col = map[string]int{}
			for i, name := range f {
				col[name] = i
			}
			out = append(out, line)
			continue
		}
		ts, err := strconv.ParseFloat(f[col["time"]], 64)
		if err != nil {
			t.Fatal(err)
		}
		v := at(ts)
		if first == nil {
			first = &v
		}
		for a, name := range []string{"bx", "by", "bz"} {
			b, err := strconv.ParseFloat(f[col[name]], 64)
			if err != nil {
				t.Fatal(err)
			}
			f[col[name]] = strconv.FormatFloat(b+v[a]-first[a], 'f', 4, 64)
		}
		out = append(out, strings.Join(f, ","))
	}
	varied = filepath.Join(dir, "varied-"+start[11:13]+".csv")
	if err := os.WriteFile(varied, []byte(strings.Join(out, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	return clean, varied
}

// TestBaseLagCheck: a base record that covers the survey but at the wrong
// time was applied silently and did worse than none (found in review: a
// walk against the real Boulder minutes with the base's times written in
// UTC+01:00 without their offset came out all sound, with invented
// conductors). The survey here carries the real variation of
// bou20141102vmin.min (../shared/data/iaga2002, USGS via INTERMAGNET) from
// 13:30 UTC, a disturbed afternoon. With the file itself as the base no
// word; with the same minutes written an hour late without an offset the
// run is refused, naming the zone UTC+01:00 and the base's times as the
// ones off. A survey with none of that variation (the base record is not
// its variation) is warned of. On the quiet morning from 05:00 UTC, where
// no offset is clearly better, no word either.
func TestBaseLagCheck(t *testing.T) {
	iaga := ingesttest.IAGAFile(t, "bou20141102vmin.min")
	bou, err := ingest.ReadSamples(iaga)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	clean, varied := lagSurvey(t, dir, "2014-11-02T13:30:00Z", bou)
	lagWords := []string{"not paired with the survey's at the right time", "scattered more than"}
	quiet := func(name string, args ...string) {
		t.Helper()
		doc := locateGrouped(t, args...)
		for _, w := range lagWords {
			if containsAll(doc.Warnings, w) {
				t.Errorf("%s: a base record at the right time drew %q: %q", name, w, doc.Warnings)
			}
		}
	}
	quiet("disturbed afternoon", "--base", iaga, varied)

	cet := filepath.Join(dir, "base-cet.csv")
	writeZoneBase(t, cet, bou, time.FixedZone("CET", 3600), "2006-01-02T15:04:05")
	code, _, errOut := cli(t, "locate", "--json", "--group-by", "group", "--base", cet, varied)
	if code == 0 {
		t.Error("a base record an hour late, covering the survey, was applied")
	}
	for _, want := range []string{lagWords[0], "if its times were 1 h earlier", "UTC+01:00 written without their offset", "the survey's times cannot be the ones off"} {
		if !strings.Contains(errOut, want) {
			t.Errorf("refusal lacks %q:\n%s", want, errOut)
		}
	}

	doc := locateGrouped(t, "--base", iaga, clean)
	if !containsAll(doc.Warnings, lagWords[1]) {
		t.Errorf("a base record whose variation the survey does not hold drew no warning: %q", doc.Warnings)
	}

	_, calm := lagSurvey(t, dir, "2014-11-02T05:00:00Z", bou)
	quiet("quiet morning", "--base", iaga, calm)
}
