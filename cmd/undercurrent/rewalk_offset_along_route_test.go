package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// corranLey is a simulated survey (the truth is the scenario itself): a
// DC feeder 1.0 m deep running due north along x = 0 at current a until
// N loss m and b after it, walked across by count traverses 12 m long
// every spacing m from N spacing on, 5 nT noise, from start.
func corranLey(spacing float64, count int, loss, a, b float64, seed int, start string) string {
	return fmt.Sprintf(`name = "corran-ley"
site = "Corran Ley, a feeder losing current on its way north"
seed = %d
start = "%s"

[earth]
field_nt = [-180.0, 19150.0, -45250.0]

[sensor]
height_m = 0.3
noise_nt = 5.0

[survey]
route = [[0.0, 0.0], [0.0, %g]]
count = %d
spacing_m = %g
first_at_m = %g
length_m = 12.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0

[[conductor]]
name = "Corran feeder"
kind = "polyline"
vertices = [[0.0, -300.0, -1.0], [0.0, %g, -1.0], [0.0, 3000.0, -1.0]]
currents_a = [%g, %g]
`, seed, start, spacing*float64(count+1), count, spacing, spacing, loss, a, b)
}

// TestRewalkOffsetAlongRoutePaired: the Corran Ley feeder (simulated
// truth: 25 A losing 3 A at the scenario's loss point) walked on one day
// and again the next at 10% more current (27.5 A losing 3.3 A), the
// second day's positions moved north, along the route, as an uncorrected
// GNSS offset between days moves them (commonly 0.5-2 m; from memory of
// field practice): 0.3 m and 1.2 m on traverses 4 m apart, 2 m on
// traverses 20 m apart, in one log and in two. The route told repeats by
// chainage within a tenth of the spacing, and took the spacing for the
// median of the intervals, half of which were the offset: no station had
// a repeat, every walk stood at its own chainage, the 10% between the
// walks read as a rise and fall at every traverse, and the 3 A loss went
// unreported ("findings: none"), with no walks-differ (found in review).
// Now the walks of a traverse (T04, T04 (walk 2), day2.csv:T04) share its
// station: every repeat at its first walk's chainage, the last traverse
// at (count - 1) x spacing, one current step of 3 A (the first walk's
// level, the second brought to it) within 4 sigma, placed at the loss's
// chainage within 3 sigma, the walks-differ finding, and the route
// setting off due north from the first walk's T01.
func TestRewalkOffsetAlongRoutePaired(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		name    string
		spacing float64 // m
		count   int
		loss    float64 // N, m, of the loss
		shift   float64 // m north, the second day's offset
		twoLogs bool
	}{
		{"4 m spacing, 0.3 m on, one log", 4, 13, 42, 0.3, false},
		{"4 m spacing, 1.2 m on, one log", 4, 13, 42, 1.2, false},
		{"4 m spacing, 0.3 m on, two logs", 4, 13, 42, 0.3, true},
		{"20 m spacing, 2 m on, one log", 20, 12, 130, 2, false},
		{"20 m spacing, 2 m on, two logs", 20, 12, 130, 2, true},
	} {
		tag := strings.NewReplacer(" ", "-", ",", "", ".", "").Replace(c.name)
		var logs [2]string
		for d, sc := range []string{
			corranLey(c.spacing, c.count, c.loss, 25, 22, 61, "2026-09-14T09:00:00Z"),
			corranLey(c.spacing, c.count, c.loss, 27.5, 24.2, 62, "2026-09-15T09:00:00Z"),
		} {
			logs[d] = simulateText(t, dir, fmt.Sprintf("%s-day%d", tag, d+1), sc, ".csv")
		}
		day2, err := ingest.ReadSamples(logs[1])
		if err != nil {
			t.Fatal(err)
		}
		moved := rowsOf(day2, func(string) bool { return true }, nil)
		for i := range moved.Y {
			moved.Y[i] += c.shift
		}
		later := writeSplitLog(t, dir, tag+"-day2-moved.csv", moved)
		run := []string{"--reference-z", "0"}
		if c.twoLogs {
			run = append(run, logs[0], later)
		} else {
			run = append(run, joinLogs(t, dir, tag+"-both.csv", logs[0], later))
		}
		out := filepath.Join(dir, tag)
		summary := mustCLI(t, append([]string{"locate", "--group-by", "group", "-o", out}, run...)...)
		raw, err := os.ReadFile(filepath.Join(out, "results.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc struct {
			Route *struct {
				FirstWalk string `json:"first_walk"`
				Stations  []struct {
					Key      string  `json:"key"`
					Chainage float64 `json:"chainage_m"`
				} `json:"stations"`
			} `json:"route"`
			Findings []docFinding `json:"findings"`
		}
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		if doc.Route == nil || len(doc.Route.Stations) != 2*c.count {
			t.Fatalf("%s: the route holds no %d stations: %+v", c.name, 2*c.count, doc.Route)
		}
		// The first walk's stations, by traverse name.
		first := map[string]float64{}
		for _, s := range doc.Route.Stations {
			if !strings.Contains(s.Key, ":") && !strings.HasSuffix(s.Key, ")") {
				first[s.Key] = s.Chainage
			}
		}
		if len(first) != c.count {
			t.Fatalf("%s: %d first-walk stations, want %d: %+v", c.name, len(first), c.count, doc.Route.Stations)
		}
		last := fmt.Sprintf("T%02d", c.count)
		if got, want := first[last], c.spacing*float64(c.count-1); math.Abs(got-want) > 0.5 {
			t.Errorf("%s: %s at chainage %.2f m, want %.0f m (the scenario's traverses) within 0.5 m", c.name, last, got, want)
		}
		if first["T01"] != 0 {
			t.Errorf("%s: T01 at chainage %.3f m, want the route to start at the first walk's T01", c.name, first["T01"])
		}
		for _, s := range doc.Route.Stations {
			key := s.Key
			if i := strings.LastIndex(key, ":"); i >= 0 {
				key = key[i+1:]
			}
			key = strings.TrimSuffix(key, " (walk 2)")
			if key == s.Key {
				continue
			}
			if d := s.Chainage - first[key]; math.Abs(d) > 0.01 {
				t.Errorf("%s: %s at chainage %.2f m, %.2f m from its first walk's %s: not taken for its repeat", c.name, s.Key, s.Chainage, d, key)
			}
		}
		var steps, differ int
		for _, f := range doc.Findings {
			switch f.Kind {
			case "walks-differ":
				differ++
			case "current-step":
				steps++
				size, sizeSigma := f.value("step")
				at, atSigma := f.value("location (chainage)")
				if !(sizeSigma > 0) || math.Abs(size+3) > 4*sizeSigma {
					t.Errorf("%s: current step %.3f ± %.3f A, want -3 A (the first walk's loss) within 4 sigma", c.name, size, sizeSigma)
				}
				if want := c.loss - c.spacing; !(atSigma > 0) || math.Abs(at-want) > 3*atSigma {
					t.Errorf("%s: the step most likely at chainage %.2f ± %.2f m, want the loss's %.0f m within 3 sigma", c.name, at, atSigma, want)
				}
			}
		}
		if steps != 1 {
			t.Errorf("%s: %d current steps, want the one loss:\n%s", c.name, steps, summary)
		}
		if differ != 1 || doc.Route.FirstWalk == "" {
			t.Errorf("%s: %d walks-differ findings and first walk %q, want the 10%% change between the walks named and the second walk brought to the first's level", c.name, differ, doc.Route.FirstWalk)
		}
		if m := regexp.MustCompile(`setting off (\d+)° from north`).FindStringSubmatch(summary); m == nil || (m[1] != "0" && m[1] != "360") {
			t.Errorf("%s: the route sets off %v, want due north (0°)", c.name, m)
		}
	}
}

// TestRewalkAtBendOneChainage: testdata/scenarios/open/bend.toml (simulated
// truth: a 20 A cable turning 45° at east 50 m, 25 traverses 4 m apart)
// walked again the next day at 22 A, the second walk's positions moved
// 1.2 m east, along the first leg (an uncorrected GNSS offset between
// days), in one log. The walks of each traverse are repeats, but the
// chainage through a bend places each station by its own point, so T13
// and T13 (walk 2), at the bend, lay 0.9 m apart after the set had been
// put at one chainage, and the report (which tells repeats by chainage)
// no longer took them for one station. Every later walk now lies at its
// first walk's chainage, at the bend as on the straight.
func TestRewalkAtBendOneChainage(t *testing.T) {
	dir := t.TempDir()
	logs := walkTwice(t, dir, filepath.Join("open", "bend.toml"), 1, 2, func(text []byte) []byte {
		out := strings.Replace(string(text), "current_a = 20.0", "current_a = 22.0", 1)
		if out == string(text) {
			t.Fatal("bend.toml has no current_a = 20.0 line to change")
		}
		return []byte(out)
	}, nil)
	if len(logs) != 2 {
		t.Fatalf("bend.toml walked twice gave %q, want two logs and no base", logs)
	}
	day2, err := ingest.ReadSamples(logs[1])
	if err != nil {
		t.Fatal(err)
	}
	moved := rowsOf(day2, func(string) bool { return true }, nil)
	for i := range moved.X {
		moved.X[i] += 1.2
	}
	later := writeSplitLog(t, dir, "day2-moved.csv", moved)
	r := locateRewalk(t, dir, "bend-again", []string{"--reference-z", "0", joinLogs(t, dir, "both.csv", logs[0], later)})
	first := map[string]float64{}
	for _, s := range r.stations {
		if !strings.HasSuffix(s.Key, ")") {
			first[s.Key] = s.Chainage
		}
	}
	if len(first) != 25 || len(r.stations) != 50 {
		t.Fatalf("%d stations, %d of the first walk; want 50 and 25", len(r.stations), len(first))
	}
	for _, s := range r.stations {
		key := strings.TrimSuffix(s.Key, " (walk 2)")
		if key == s.Key {
			continue
		}
		if d := s.Chainage - first[key]; math.Abs(d) > 0.01 {
			t.Errorf("%s at chainage %.2f m, %.2f m from its first walk's %s", s.Key, s.Chainage, d, key)
		}
	}
}
