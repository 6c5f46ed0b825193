package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// perLogCoverSigmas is how many of a station's cover sigmas its cover may
// lie from the simulated truth: the fits' sigmas cover the reading noise
// only, and the simulated walks read the 1.30 m cover to within 2.2 of
// them (day1.csv's T01, 1.2930 ± 0.0033 m).
const perLogCoverSigmas = 3

// perLogDoc is the part of results.json the per-log sensor height test
// reads.
type perLogDoc struct {
	DepthReference struct {
		SensorHeight float64 `json:"sensor_height_m"`
		PerLog       bool    `json:"per_log"`
	} `json:"depth_reference"`
	Groups []struct {
		Key          string  `json:"key"`
		Log          string  `json:"log"`
		SensorHeight float64 `json:"sensor_height_m"`
	} `json:"groups"`
	Findings []docFinding `json:"findings"`
	Route    struct {
		Stations []struct {
			Key        string   `json:"key"`
			Cover      *float64 `json:"cover_m"`
			CoverSigma *float64 `json:"cover_sigma_m"`
		} `json:"stations"`
	} `json:"route"`
}

// TestLocateSensorHeightPerLog: Fernholme Lane (fernholmeDay, a pipe
// 1.30 m below the ground) walked by one crew with a 0.30 m staff at
// 0-40 m and the next day by another with a 0.25 m staff at 20-80 m, the
// two logs located together. With --sensor-height given per log (both as
// LOG=H for each and as a bare default with one log named), every route
// station's cover, from both logs, lies within perLogCoverSigmas of the
// simulated 1.30 m, in results.json, results.csv and route.geojson alike;
// no walks-depth-differ caution (the heights explain the difference) and
// no shallow-cover finding against a 1.27 m minimum. With one height,
// 0.30 m, for both (as before, when the flag took one number) day2.csv's
// cover reads 5 cm shallow, beyond the same tolerance, and is called
// shallower than the minimum, and walks-depth-differ names the 5 cm.
func TestLocateSensorHeightPerLog(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two logs")
	}
	const truth = 1.30 // the pipe's cover in fernholmeDay, m
	dir := t.TempDir()
	var logs []string
	for _, d := range []struct {
		name, start string
		first       float64
		count       int
		staff       float64
		seed        int
	}{{"day1", "2026-05-12T07:30:00Z", 0, 5, 0.30, 601}, {"day2", "2026-05-13T06:45:00Z", 20, 7, 0.25, 602}} {
		path := filepath.Join(dir, d.name+".toml")
		if err := os.WriteFile(path, []byte(fernholmeDay(d.seed, d.start, d.first, d.count, d.staff, 1)), 0o644); err != nil {
			t.Fatal(err)
		}
		log := filepath.Join(dir, d.name+".csv")
		mustCLI(t, "simulate", path, "-o", log)
		logs = append(logs, log)
	}
	day2 := func(key string) bool { return strings.HasPrefix(key, "day2.csv:") }
	kinds := func(doc *perLogDoc) map[string][]docFinding {
		out := map[string][]docFinding{}
		for _, f := range doc.Findings {
			out[f.Kind] = append(out[f.Kind], f)
		}
		return out
	}

	for _, form := range []struct {
		name  string
		flags []string
	}{
		{"each log named", []string{"--sensor-height", "day1.csv=0.30", "--sensor-height", logs[1] + "=0.25"}},
		{"a bare default", []string{"--sensor-height", "0.30", "--sensor-height", "day2.csv=0.25"}},
	} {
		out := filepath.Join(dir, "out-"+strings.ReplaceAll(form.name, " ", "-"))
		args := append(append([]string{"locate", "--group-by", "group", "--min-cover", "1.27"}, form.flags...), append(logs, "-o", out)...)
		mustCLI(t, args...)
		raw, err := os.ReadFile(filepath.Join(out, "results.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc perLogDoc
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		if !doc.DepthReference.PerLog || doc.DepthReference.SensorHeight != 0.30 {
			t.Errorf("%s: depth reference per_log %v, sensor_height_m %g: want true, the datum 0.30 m", form.name, doc.DepthReference.PerLog, doc.DepthReference.SensorHeight)
		}
		for _, g := range doc.Groups {
			if want := map[bool]float64{true: 0.25, false: 0}[day2(g.Key)]; g.SensorHeight != want {
				t.Errorf("%s: group %s (%s) sensor_height_m %g, want %g", form.name, g.Key, g.Log, g.SensorHeight, want)
			}
		}
		from := map[bool]int{}
		for _, s := range doc.Route.Stations {
			if s.Cover == nil || s.CoverSigma == nil {
				t.Fatalf("%s: station %s has no cover", form.name, s.Key)
			}
			from[day2(s.Key)]++
			if math.Abs(*s.Cover-truth) > perLogCoverSigmas**s.CoverSigma {
				t.Errorf("%s: station %s cover %.4f ± %.4f m, want %.2f m within %d sigma", form.name, s.Key, *s.Cover, *s.CoverSigma, truth, perLogCoverSigmas)
			}
		}
		if from[false] != 5 || from[true] != 7 {
			t.Errorf("%s: %d stations of day1.csv and %d of day2.csv, want 5 and 7", form.name, from[false], from[true])
		}
		k := kinds(&doc)
		if len(k["walks-depth-differ"]) != 0 || len(k["shallow-cover"]) != 0 {
			t.Errorf("%s: walks-depth-differ %v, shallow-cover %v: want neither with each log's height given", form.name, k["walks-depth-differ"], k["shallow-cover"])
		}
		// results.csv: each conductor row's cover.
		rows := readCSVFile(t, filepath.Join(out, "results.csv"))
		col := map[string]int{}
		for i, h := range rows[0] {
			col[h] = i
		}
		n2 := 0
		for _, r := range rows[1:] {
			c, err1 := strconv.ParseFloat(r[col["cover_m"]], 64)
			s, err2 := strconv.ParseFloat(r[col["cover_sigma_m"]], 64)
			if err1 != nil || err2 != nil {
				t.Errorf("%s: results.csv row %v: cover %q ± %q", form.name, r[col["group"]], r[col["cover_m"]], r[col["cover_sigma_m"]])
				continue
			}
			if filepath.Base(r[col["log"]]) == "day2.csv" {
				n2++
			}
			if math.Abs(c-truth) > perLogCoverSigmas*s {
				t.Errorf("%s: results.csv %s (%s) cover %g ± %g m, want %.2f m within %d sigma", form.name, r[col["group"]], r[col["log"]], c, s, truth, perLogCoverSigmas)
			}
		}
		if n2 != 7 {
			t.Errorf("%s: %d rows of day2.csv in results.csv, want 7", form.name, n2)
		}
		// route.geojson: each conductor point's cover, and day2.csv's
		// points name their height and the datum.
		var fc struct {
			Features []struct {
				Properties map[string]any `json:"properties"`
			} `json:"features"`
		}
		raw, err = os.ReadFile(filepath.Join(out, "route.geojson"))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(raw, &fc); err != nil {
			t.Fatal(err)
		}
		points := 0
		for _, f := range fc.Features {
			p := f.Properties
			if p["feature"] != "conductor" {
				continue
			}
			points++
			c, _ := p["cover_m"].(float64)
			s, _ := p["cover_sigma_m"].(float64)
			if math.Abs(c-truth) > perLogCoverSigmas*s {
				t.Errorf("%s: route.geojson %v cover %g ± %g m, want %.2f m within %d sigma", form.name, p["group"], c, s, truth, perLogCoverSigmas)
			}
			h, _ := p["sensor_height_m"].(float64)
			note, _ := p["depth_note"].(string)
			if l, _ := p["log"].(string); filepath.Base(l) == "day2.csv" && (h != 0.25 || !strings.Contains(note, "datum 0.30 m")) {
				t.Errorf("%s: route.geojson %v sensor_height_m %v, depth_note %q: want 0.25 and the datum named", form.name, p["group"], p["sensor_height_m"], note)
			}
		}
		if points != 12 {
			t.Errorf("%s: %d conductor points in route.geojson, want 12", form.name, points)
		}
	}

	// One height for both logs: day2.csv's cover 5 cm shallow, where a
	// station's sigma tells 5 cm (the two beside the loss at 55 m are
	// fitted to ±0.016 m).
	doc := locateInto[perLogDoc](t, append([]string{"--group-by", "group", "--min-cover", "1.27", "--sensor-height", "0.30"}, logs...)...)
	told := 0
	for _, s := range doc.Route.Stations {
		if !day2(s.Key) || s.Cover == nil || s.CoverSigma == nil || *s.CoverSigma > 0.05/(2*perLogCoverSigmas) {
			continue
		}
		told++
		if math.Abs(*s.Cover-truth) <= perLogCoverSigmas**s.CoverSigma || math.Abs(*s.Cover-(truth-0.05)) > perLogCoverSigmas**s.CoverSigma {
			t.Errorf("one height: station %s cover %.4f ± %.4f m, want 5 cm short of %.2f m", s.Key, *s.Cover, *s.CoverSigma, truth)
		}
	}
	if told < 4 {
		t.Errorf("one height: %d stations of day2.csv whose sigma tells 5 cm, want at least 4", told)
	}
	k := kinds(doc)
	if len(k["shallow-cover"]) == 0 {
		t.Errorf("one height: no shallow-cover finding for day2.csv's cover read 1.25 m against 1.27 m")
	}
	if len(k["walks-depth-differ"]) != 1 {
		t.Fatalf("one height: %d walks-depth-differ findings, want 1", len(k["walks-depth-differ"]))
	}
	if v, s := k["walks-depth-differ"][0].value("depth change day2.csv"); !(s > 0) || math.Abs(v+0.05) > 3*s {
		t.Errorf("one height: walks-depth-differ depth change %.4f ± %.4f m, want -0.05 m within 3 sigma", v, s)
	}
}

// TestLocateSensorHeightPerLogRefused: a log named that is not given, a
// log left without a height where others are named and no bare height,
// and a named height of 0 are usage errors naming the flag.
func TestLocateSensorHeightPerLogRefused(t *testing.T) {
	dir := t.TempDir()
	var logs []string
	for i, name := range []string{"a", "b"} {
		path := filepath.Join(dir, name+".toml")
		if err := os.WriteFile(path, []byte(fernholmeDay(700+i, "2026-05-12T07:30:00Z", 0, 2, 0.3, 1)), 0o644); err != nil {
			t.Fatal(err)
		}
		logs = append(logs, filepath.Join(dir, name+".csv"))
		mustCLI(t, "simulate", path, "-o", logs[i])
	}
	for _, c := range []struct {
		flags []string
		want  string
	}{
		{[]string{"--sensor-height", "c.csv=0.3"}, "c.csv is not one of the logs given"},
		{[]string{"--sensor-height", "a.csv=0.3"}, "but not of " + logs[1]},
		{[]string{"--sensor-height", "a.csv=0", "--sensor-height", "0.3"}, "want a height in metres > 0"},
		{[]string{"--sensor-height", "0.3", "--sensor-height", "0.25"}, "given twice without a log"},
	} {
		code, _, errOut := cli(t, append(append([]string{"locate", "--group-by", "group"}, c.flags...), logs...)...)
		if code != 2 || !strings.Contains(errOut, "--sensor-height") || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: exit %d, %q: want 2 and %q", c.flags, code, errOut, c.want)
		}
	}
}
