package main

// Gaps in the base record that survey readings fall in, and base records in
// several files. The surveys are simulated (a slow DC survey over a 0.3 A
// line 1.2 m deep) with the real variation of the Boulder observatory added
// (INTERMAGNET / USGS, IAGA-2002 one-minute H D Z, bou20141101vmin.min and
// bou20141102vmin.min; see ../shared/data/iaga2002/SOURCE.md); the tests
// skip when those files are absent.

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
	"undercurrent/inverse/simulate"
	"undercurrent/report"
)

// slowDCScenario is a slow DC survey at the Boulder observatory's latitude
// (an invented site): count traverses of 12 m at 0.03 m/s (400 s each, a
// minute's turn between), 5 readings a second, 0.5 nT noise, over a 0.3 A
// line 1.2 m deep, from start (UTC).
func slowDCScenario(t *testing.T, dir, start string, count int) *simulate.Scenario {
	t.Helper()
	src := fmt.Sprintf(`name = "marram-bank-dc"
site = "Marram Bank cathodic feed (invented)"
seed = 11
start = %q
[origin]
lat_deg = 40.1
lon_deg = -105.2
height_m = 1600.0
[earth]
field_nt = [0.0, 20870.0, -47470.0]
drift_nt_per_hour = [0.0, 0.0, 0.0]
[sensor]
height_m = 0.3
noise_nt = 0.5
sample_rate_hz = 5.0
[survey]
route = [[0.0, 0.0], [%g, 0.0]]
count = %d
spacing_m = 10.0
length_m = 12.0
speed_m_s = 0.03
turn_s = 60.0
[[conductor]]
name = "feed"
kind = "line"
point = [0.0, 0.3, -1.2]
direction = [1.0, 0.0, 0.0]
current_a = 0.3
`, start, 10*float64(count-1), count)
	p := filepath.Join(dir, "marram-bank.toml")
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	sc, err := simulate.Load(p)
	if err != nil {
		t.Fatal(err)
	}
	return sc
}

// withBoulderVariation simulates sc and adds the observatory's departure
// from its median, linearly interpolated between minutes, to the survey
// field (the correction subtracts the same departure, so it removes it
// exactly when the base record is whole). It writes the survey log and
// returns its path and readings.
func withBoulderVariation(t *testing.T, dir string, sc *simulate.Scenario, base *ingest.Samples) (string, *ingest.Samples) {
	t.Helper()
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	col := [3][]float64{base.Bx, base.By, base.Bz}
	rov := [3][]float64{s.Bx, s.By, s.Bz}
	j := 0
	for i, tm := range s.Time {
		for j+1 < base.Len() && base.Time[j+1] <= tm {
			j++
		}
		if base.Time[j] > tm || j+1 >= base.Len() {
			t.Fatalf("survey time %v outside the base record", tm)
		}
		f := (tm - base.Time[j]) / (base.Time[j+1] - base.Time[j])
		for k := range 3 {
			d := col[k][j] + f*(col[k][j+1]-col[k][j])
			if math.IsNaN(d) {
				t.Fatalf("missing base value near %v", tm)
			}
			rov[k][i] += d - col[k][0]
		}
	}
	p := filepath.Join(dir, "marram-bank.csv")
	if err := ingest.WriteSamples(p, s); err != nil {
		t.Fatal(err)
	}
	return p, s
}

// locateDoc runs locate --json and decodes the result document.
func locateBaseDoc(t *testing.T, args ...string) (*report.Document, string) {
	t.Helper()
	code, out, stderr := cli(t, append([]string{"locate", "--json", "--group-by", "group", "--reference-z", "0"}, args...)...)
	if code != 0 {
		t.Fatalf("locate %s: exit %d\n%s", strings.Join(args, " "), code, stderr)
	}
	var doc report.Document
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	return &doc, stderr
}

// A base gap shorter than the limit, bridged by a straight line, is
// reported, with the groups whose readings fall in it, and those groups are
// not called sound. Four minutes of Boulder's record (16:01-16:04 UTC on 1
// November 2014, while the declination moved by 1.2 arc-minutes) are set
// missing: a 5-minute gap, inside the default limit of 300 s. Before, the
// gap was bridged without a word and every fit was "sound", though the
// traverse most in the gap read its current 10 sigma off the simulated
// truth.
func TestLocateBaseGapGroupsReported(t *testing.T) {
	full := ingesttest.IAGAFile(t, "bou20141101vmin.min")
	base, err := ingest.ReadSamples(full, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	sc := slowDCScenario(t, dir, "2014-11-01T15:40:00Z", 5)
	survey, s := withBoulderVariation(t, dir, sc, base)
	truth := sc.Conductors[0].Current

	// The base record with the four minutes missing (the IAGA-2002
	// missing value, 99999.00).
	data, err := os.ReadFile(full)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(string(data), "\n")
	cut := 0
	for i, l := range lines {
		for _, m := range []string{"16:01", "16:02", "16:03", "16:04"} {
			if strings.HasPrefix(l, "2014-11-01 "+m+":00.000") {
				f := strings.Fields(l)
				lines[i] = fmt.Sprintf("%s %s %s %12s %9s %9s %9s\n", f[0], f[1], f[2], "99999.00", "99999.00", "99999.00", "99999.00")
				cut++
			}
		}
	}
	if cut != 4 {
		t.Fatalf("found %d of the 4 minutes to cut", cut)
	}
	gapped := filepath.Join(dir, "bou-gap.min")
	if err := os.WriteFile(gapped, []byte(strings.Join(lines, "")), 0o644); err != nil {
		t.Fatal(err)
	}

	// The survey readings in the gap and their groups, from the log.
	g0 := time.Date(2014, 11, 1, 16, 0, 0, 0, time.UTC).Unix()
	g1 := g0 + 300
	inGap := map[string]int{}
	n := 0
	for i, tm := range s.Time {
		if tm > float64(g0) && tm < float64(g1) {
			inGap[s.Group[i]]++
			n++
		}
	}
	if len(inGap) == 0 {
		t.Fatal("no survey reading in the gap: the scenario has moved")
	}

	// The whole record: every fit sound and within 4 sigma of the truth,
	// no gap reported.
	whole, _ := locateBaseDoc(t, "--base", full, survey)
	if whole.BaseStation == nil || len(whole.BaseStation.BaseGaps) != 0 {
		t.Fatalf("the whole record: base station %+v, want no gaps", whole.BaseStation)
	}
	for _, g := range whole.Groups {
		c := g.Sources[0]
		if g.Problem != "" || math.Abs(c.Current-truth) > 4*c.CurrentSigma {
			t.Errorf("the whole record: %s: %.5f ± %.5f A (truth %g), problem %q", g.Key, c.Current, c.CurrentSigma, truth, g.Problem)
		}
	}

	doc, stderr := locateBaseDoc(t, "--base", gapped, survey)
	if doc.BaseStation == nil || len(doc.BaseStation.BaseGaps) != 1 {
		t.Fatalf("the gapped record: base station %+v, want one gap", doc.BaseStation)
	}
	bg := doc.BaseStation.BaseGaps[0]
	if bg.From != "2014-11-01T16:00:00Z" || bg.To != "2014-11-01T16:05:00Z" || bg.Seconds != 300 || bg.Readings != n {
		t.Errorf("gap %+v, want 16:00 to 16:05 UTC, 300 s, %d readings", bg, n)
	}
	if bg.LineErrorRMS == nil || !(*bg.LineErrorRMS > 0) {
		t.Errorf("gap %+v: no estimate of the straight line's error", bg)
	}
	var found *report.Finding
	for i := range doc.Findings {
		if doc.Findings[i].Kind == BaseGapKind {
			found = &doc.Findings[i]
		}
	}
	if found == nil || len(found.Groups) != len(inGap) {
		t.Fatalf("findings %+v: want a %s finding naming the %d groups %v", doc.Findings, BaseGapKind, len(inGap), inGap)
	}
	for _, g := range doc.Groups {
		marked := strings.Contains(g.Problem, "base gap")
		if marked != (inGap[g.Key] > 0) {
			t.Errorf("%s: %d readings in the gap, problem %q", g.Key, inGap[g.Key], g.Problem)
		}
		// Every fit the gap moved off the simulated truth is marked.
		c := g.Sources[0]
		if math.Abs(c.Current-truth) > 4*c.CurrentSigma && !marked {
			t.Errorf("%s: %.5f ± %.5f A, truth %g, and not marked", g.Key, c.Current, c.CurrentSigma, truth)
		}
		if marked && !strings.Contains(stderr, fmt.Sprintf("%s (%d of %d)", g.Key, inGap[g.Key], g.Points)) {
			t.Errorf("the warning does not name %s with its %d readings in the gap:\n%s", g.Key, inGap[g.Key], stderr)
		}
	}
	if bg.BaseReadingsMissing != 4 {
		t.Errorf("gap %+v: want 4 base readings missing (16:01 to 16:04)", bg)
	}
	if !strings.Contains(stderr, "from 2014-11-01T16:00:00Z to 2014-11-01T16:05:00Z (300 s, 4 base readings missing;") {
		t.Errorf("no warning naming the gap:\n%s", stderr)
	}
	if !strings.Contains(doc.BaseStation.Summary, "bridged by a straight line") {
		t.Errorf("base summary %q does not say so", doc.BaseStation.Summary)
	}
	// All three components missing: Missing is left out (README: only
	// when not all three are).
	if bg.Missing != nil {
		t.Errorf("gap %+v: all three components missing, want no missing list", bg)
	}
	// The summary line counts a group marked only for the gap as such,
	// not as poor or ambiguous: the gap-marked groups here fit (ok, with
	// no other problem). Before: "N sound, M poor or ambiguous", M
	// taking in the gap-marked groups.
	sound, gapOnly := 0, 0
	for _, g := range doc.Groups {
		switch {
		case g.OK && g.Problem == "":
			sound++
		case g.OK && strings.HasPrefix(g.Problem, "base gap:"):
			gapOnly++
		}
	}
	if gapOnly == 0 {
		t.Fatalf("no group marked for the gap alone: %+v", doc.Groups)
	}
	code, out, _ := cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", gapped, survey)
	want := fmt.Sprintf("%d sound, %d poor or ambiguous, %d marked for a base gap\n", sound, len(doc.Groups)-sound-gapOnly, gapOnly)
	if code != 0 || !strings.Contains(out, want) {
		t.Errorf("summary: exit %d, want %q in:\n%s", code, want, out)
	}
}

// Two daily observatory files for a survey across midnight UTC, given as
// two --base flags, are joined in time order: the result is the same as
// with the two files joined by hand, in either order, and every fit
// recovers the simulated current. Before, the first --base was dropped
// without a word and the survey was refused as not covered. Files that
// overlap with other values, or of two stations, are refused, with exit
// status 1 (data that cannot be used), not 2 (a usage error).
func TestLocateBaseDailyFilesJoined(t *testing.T) {
	day1 := ingesttest.IAGAFile(t, "bou20141101vmin.min")
	day2 := ingesttest.IAGAFile(t, "bou20141102vmin.min")
	dir := t.TempDir()
	b1, err := os.ReadFile(day1)
	if err != nil {
		t.Fatal(err)
	}
	b2, err := os.ReadFile(day2)
	if err != nil {
		t.Fatal(err)
	}
	both := filepath.Join(dir, "bou-both.min")
	if err := os.WriteFile(both, append(append([]byte(nil), b1...), b2...), 0o644); err != nil {
		t.Fatal(err)
	}
	base, err := ingest.ReadSamples(both, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	sc := slowDCScenario(t, dir, "2014-11-01T23:45:00Z", 3)
	survey, _ := withBoulderVariation(t, dir, sc, base)

	code, _, stderr := cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", day2, survey)
	if code == 0 || !strings.Contains(stderr, "--base may be given more than once") {
		t.Errorf("one day's file for a survey across midnight: exit %d, stderr:\n%s\nwant a refusal that suggests the second file", code, stderr)
	}
	joined, _ := locateBaseDoc(t, "--base", both, survey)
	for _, order := range [][2]string{{day1, day2}, {day2, day1}} {
		doc, _ := locateBaseDoc(t, "--base", order[0], "--base", order[1], survey)
		if len(doc.Groups) != len(joined.Groups) {
			t.Fatalf("%d groups, %d with the files joined by hand", len(doc.Groups), len(joined.Groups))
		}
		for i, g := range doc.Groups {
			c, w := g.Sources[0], joined.Groups[i].Sources[0]
			if c.Current != w.Current || c.Depth != w.Depth {
				t.Errorf("%s: %v A %v m, joined by hand %v A %v m", g.Key, c.Current, c.Depth, w.Current, w.Depth)
			}
			if math.Abs(c.Current-sc.Conductors[0].Current) > 4*c.CurrentSigma || g.Problem != "" {
				t.Errorf("%s: %.5f ± %.5f A, truth %g; problem %q", g.Key, c.Current, c.CurrentSigma, sc.Conductors[0].Current, g.Problem)
			}
		}
		if n := 0; true {
			for _, in := range doc.Inputs {
				if in.Role == "base" {
					n++
				}
			}
			if n != 2 {
				t.Errorf("%d base inputs recorded, want 2", n)
			}
		}
	}
	// The same file twice overlaps with the same readings: accepted.
	locateBaseDoc(t, "--base", day1, "--base", both, survey)
	// An overlap with another value at one minute (H 2 nT higher) is
	// refused.
	var lines []string
	for _, l := range strings.SplitAfter(string(b1), "\n") {
		if strings.HasPrefix(l, "2014-11-01 23:50:00.000") {
			f := strings.Fields(l)
			var h float64
			if _, err := fmt.Sscan(f[3], &h); err != nil {
				t.Fatal(err)
			}
			l = fmt.Sprintf("%s %s %s %12.2f %9s %9s %9s\n", f[0], f[1], f[2], h+2, f[4], f[5], f[6])
		}
		lines = append(lines, l)
	}
	edited := filepath.Join(dir, "bou-edited.min")
	if err := os.WriteFile(edited, []byte(strings.Join(lines, "")), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", both, "--base", edited, survey)
	// The values to 0.01 nT, with the difference in H named (before:
	// 17-digit east and north values that neither file holds).
	if code != 1 || !strings.Contains(stderr, "overlap and disagree") || !strings.Contains(stderr, "2014-11-01T23:50:00") ||
		!strings.Contains(stderr, "horizontal intensity +2.00 nT, vertical +0.00 nT") || strings.Contains(stderr, ".0000") {
		t.Errorf("overlapping files that disagree: exit %d, stderr:\n%s", code, stderr)
	}
	// Another station's code: refused.
	other := filepath.Join(dir, "xyz-day2.min")
	if err := os.WriteFile(other, []byte(strings.Replace(string(b2), "IAGA CODE              BOU", "IAGA CODE              XYZ", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = cli(t, "locate", "--group-by", "group", "--reference-z", "0", "--base", day1, "--base", other, survey)
	// Exit 1, input that cannot be used, as for the overlap above
	// (before: 2, a usage error, though found only once the files are read).
	if code != 1 || !strings.Contains(stderr, "records of two stations") || strings.Contains(stderr, "for usage") {
		t.Errorf("two stations: exit %d, stderr:\n%s", code, stderr)
	}
}

// A gap of a minute or less in a fast base log (six readings missing from
// the Kestrel Moor simulation's 1-second base) is bridged as one-minute
// observatory data are everywhere: counted in the base summary, and no
// group is marked for it, so that a logger's dropped samples do not cost
// the fits their standing.
func TestLocateShortBaseGapNotMarked(t *testing.T) {
	dir := t.TempDir()
	survey, _, base := kestrelWithBase(t, dir)
	mid := base.Len() / 2
	gap := filepath.Join(dir, "base-gap6s.csv")
	writeBaseCSV(t, gap, base, 1, func(i int) bool { return i < mid || i >= mid+6 })
	doc, stderr := locateBaseDoc(t, "--base", gap, survey)
	if !strings.Contains(doc.BaseStation.Summary, "of the base record of a minute or less, bridged by a straight line") {
		t.Errorf("base summary %q: want the short gap counted", doc.BaseStation.Summary)
	}
	if len(doc.BaseStation.BaseGaps) != 0 || strings.Contains(stderr, "over a minute long") {
		t.Errorf("a 7-s gap listed for review: %+v\n%s", doc.BaseStation.BaseGaps, stderr)
	}
	for _, g := range doc.Groups {
		if strings.Contains(g.Problem, "base gap") {
			t.Errorf("%s marked for a 7-s gap: %q", g.Key, g.Problem)
		}
	}
}
