package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestRewalkOffsetKeepsChainage: the Kestrel Moor survey
// (testdata/scenarios/kestrel-moor-step.toml, simulated truth: 21
// traverses every 20 m along the route, so T21 at chainage 400 m, and the
// 0.30 A coating defect at chainage 250 m, between T13 and T14) walked
// again a day later, the second walk's positions moved as a GNSS offset
// between days moves them: 0.5 m and 0.8 m behind the first walk's along
// the route's first leg, 0.8 m ahead, and 0.5 m across it. The route put
// each set of repeats in walk order and chained the stations by the
// straight line from one to the next, so with the later walk behind it
// went back and forth at every station, adding twice the offset each
// time: T21 at 419.7 m and the defect at 264.08 ± 0.85 m, 16 sigma past
// it (found in review); across the route it zigzagged (409 m). Now each
// set of repeats is one point of the route: T21 lies within 1 m of
// 400 m, every repeat within 1 m of its first walk's station, the step's
// most likely chainage within 3 sigma of 250 m, and the route still
// starts at the first walk's T01 at chainage 0.
func TestRewalkOffsetKeepsChainage(t *testing.T) {
	sc, _ := scenario(t, "kestrel-moor-step.toml")
	leg := sc.Survey.Route
	if len(leg) < 2 || sc.Survey.Count < 2 {
		t.Fatal("kestrel-moor-step.toml has no route polyline or traverses")
	}
	last := float64(sc.Survey.Count-1) * sc.Survey.Spacing // 400 m
	const defect = 250.0                                   // the scenario's header
	along := [2]float64{leg[1][0] - leg[0][0], leg[1][1] - leg[0][1]}
	l := math.Hypot(along[0], along[1])
	along[0], along[1] = along[0]/l, along[1]/l
	across := [2]float64{-along[1], along[0]}
	cal := spinCalibration(t, "kestrel-moor-spin.toml")
	dir := t.TempDir()
	args := walkAgain(t, dir, "kestrel-moor-step.toml", nil) // --base b1 --base b2 day1 day2
	day2, err := ingest.ReadSamples(args[5])
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name   string
		shift  [2]float64
		oneLog bool
	}{
		{"0.5 m behind, two logs", [2]float64{-0.5 * along[0], -0.5 * along[1]}, false},
		{"0.5 m behind, one log", [2]float64{-0.5 * along[0], -0.5 * along[1]}, true},
		{"0.8 m behind, two logs", [2]float64{-0.8 * along[0], -0.8 * along[1]}, false},
		{"0.8 m ahead, two logs", [2]float64{0.8 * along[0], 0.8 * along[1]}, false},
		{"0.5 m across, two logs", [2]float64{0.5 * across[0], 0.5 * across[1]}, false},
	} {
		name := strings.NewReplacer(" ", "-", ",", "", ".", "").Replace(c.name)
		moved := rowsOf(day2, func(string) bool { return true }, nil)
		for i := range moved.X {
			moved.X[i] += c.shift[0]
			moved.Y[i] += c.shift[1]
		}
		later := writeSplitLog(t, dir, name+"-day2.csv", moved)
		run := append([]string{"--calibration", cal}, args[:4]...)
		if c.oneLog {
			run = append(run, joinLogs(t, dir, name+"-both.csv", args[4], later))
		} else {
			run = append(run, args[4], later)
		}
		r := locateRewalk(t, dir, name, run)
		if len(r.stations) < 2 || r.stations[0].Key != "T01" || r.stations[0].Chainage != 0 {
			t.Errorf("%s: the route starts %+v, want the first walk's T01 at chainage 0", c.name, r.stations[:min(2, len(r.stations))])
		}
		first := map[string]float64{}
		for _, s := range r.stations {
			if !strings.Contains(s.Key, ":") && !strings.HasSuffix(s.Key, ")") {
				first[s.Key] = s.Chainage
			}
		}
		if got, ok := first["T21"]; !ok || math.Abs(got-last) > 1 {
			t.Errorf("%s: T21 at chainage %.2f m, want %.0f m (the scenario's traverses) within 1 m", c.name, got, last)
		}
		for _, s := range r.stations {
			key := s.Key
			if i := strings.LastIndex(key, ":"); i >= 0 {
				key = key[i+1:]
			}
			key = strings.TrimSuffix(key, " (walk 2)")
			if key == s.Key {
				continue
			}
			if d := s.Chainage - first[key]; math.Abs(d) > 1 {
				t.Errorf("%s: %s at chainage %.2f m, %.2f m from its first walk's %s", c.name, s.Key, s.Chainage, d, key)
			}
		}
		at, sigma := stepLocation(t, filepath.Join(dir, name, "results.json"))
		if !(sigma > 0) || math.Abs(at-defect) > 3*sigma {
			t.Errorf("%s: the step most likely at chainage %.2f ± %.2f m, want the defect's %.0f m within 3 sigma", c.name, at, sigma, defect)
		}
	}
}

// stepLocation returns the most likely chainage of the one current step
// in the results.json at path, and its sigma (zeros when there is not
// exactly one).
func stepLocation(t *testing.T, path string) (at, sigma float64) {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Findings []struct {
			Kind   string `json:"kind"`
			Values []struct {
				Name  string  `json:"name"`
				Value float64 `json:"value"`
				Sigma float64 `json:"sigma"`
			} `json:"values"`
		} `json:"findings"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, f := range doc.Findings {
		if f.Kind != "current-step" {
			continue
		}
		n++
		for _, v := range f.Values {
			if v.Name == "location (chainage)" {
				at, sigma = v.Value, v.Sigma
			}
		}
	}
	if n != 1 {
		t.Errorf("%s: %d current steps, want 1 (the defect)", path, n)
		return 0, 0
	}
	return at, sigma
}
