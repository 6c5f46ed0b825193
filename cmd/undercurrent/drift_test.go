package main

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// stormScenario is an invented DC survey: seven 10 m traverses walked in
// alternating directions at 0.5 m/s across a 5 A cable 1 m down, 2 nT
// noise, while the Earth's field drifts at a storm's rate (300, -900,
// 600 nT/h), with a base station beside the site.
const stormScenario = `name = "storm"
site = "Pellow Carr test strip (invented)"
seed = 1
start = "2026-03-10T10:00:00Z"
[earth]
field_nt = [-300.0, 18500.0, -46000.0]
drift_nt_per_hour = [300.0, -900.0, 600.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
count = 7
spacing_m = 4.0
first_at_m = 2.0
length_m = 10.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[base]
sample_rate_hz = 1.0
noise_nt = 0.1
margin_s = 60.0
[[conductor]]
name = "cable"
kind = "line"
point = [0, 0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 5.0
`

// TestDriftWithoutBaseWarned: with no base log, a storm's drift biased
// every fit (currents 3.5 sigma off rms, dips 5.6, over 30 seeds in
// review) with every fit "sound" and no word. Simulated truth: the drift
// is the scenario's, 1122 nT/h, and the warning must give its rate within
// 10% and ask for --base. With the base log given, no warning. Without
// drift but with a far 71 A line along the traverses 90 m from the route
// (a steady change of the field along the route: the backgrounds step
// 5-6 nT from traverse to traverse, as with the drift, but nothing changes
// within a traverse), no warning: taking the trend out makes the fits
// worse. On a quiet day logged at 500 Hz (quietDriftScenario), no warning:
// the drift is found, but taking it out moves no result by a sigma.
func TestDriftWithoutBaseWarned(t *testing.T) {
	dir := t.TempDir()
	scen := filepath.Join(dir, "storm.toml")
	if err := os.WriteFile(scen, []byte(stormScenario), 0o644); err != nil {
		t.Fatal(err)
	}
	log, base := filepath.Join(dir, "storm.csv"), filepath.Join(dir, "base.csv")
	mustCLI(t, "simulate", scen, "-o", log, "--base-log", base)
	if !strings.Contains(stormScenario, "drift_nt_per_hour = [300.0, -900.0, 600.0]\n") {
		t.Fatal("stormScenario's drift changed")
	}
	still := strings.Replace(stormScenario, "drift_nt_per_hour = [300.0, -900.0, 600.0]\n", "drift_nt_per_hour = [0.0, 0.0, 0.0]\n", 1) + `[[conductor]]
name = "far line"
kind = "line"
point = [0, -90.0, -5.0]
direction = [1.0, 0.0, 0.0]
current_a = 71.0
`
	gradient := simulateText(t, dir, "gradient", still, ".csv")
	quiet := simulateText(t, dir, "quiet", quietDriftScenario, ".csv")
	truth := math.Sqrt(300*300+900*900+600*600) / 60 // nT a minute
	for _, c := range []struct {
		args []string
		warn bool
	}{
		{[]string{log}, true},
		{[]string{"--base", base, log}, false},
		{[]string{gradient}, false},
		{[]string{quiet}, false},
	} {
		doc := locateDoc(t, append([]string{"--group-by", "group", "--reference-z", "0"}, c.args...)...)
		var got string
		for _, w := range doc.Warnings {
			if strings.Contains(w, "the Earth's field drifted") {
				got = w
			}
		}
		if !c.warn {
			if got != "" {
				t.Errorf("%v: warning %q", c.args, got)
			}
			continue
		}
		if !strings.Contains(got, "--base") {
			t.Fatalf("%v: warnings %q, want one of drift asking for --base", c.args, doc.Warnings)
		}
		var rate float64
		const lead = "through the survey, by "
		i := strings.Index(got, lead)
		if i < 0 {
			t.Fatalf("no rate in %q", got)
		}
		if _, err := fmt.Sscan(got[i+len(lead):], &rate); err != nil {
			t.Fatalf("no rate in %q: %v", got, err)
		}
		if math.Abs(rate/truth-1) > 0.1 {
			t.Errorf("drift %.3g nT a minute, true %.3g", rate, truth)
		}
	}
}

// quietDriftScenario is an invented survey at Mossbank Lane: a 5 A DC cable
// 1 m down, logged every 2 mm (500 readings a second at 1 m/s) on a quiet
// day's drift of (20, -10, 8) nT an hour, with no base station. So many
// readings make the drift significant (the fits with it taken out miss
// the readings by less, by far more than driftGain), but taking it out
// moves no current, depth or offset by a sigma: the fits stand within
// their sigmas of the truth (current and depth z RMS 1.14 and 1.18 over
// the eleven traverses; found in review), and no warning is due.
const quietDriftScenario = `name = "mossbank-quiet"
site = "Mossbank Lane (invented)"
seed = 1
start = "2026-05-10T11:00:00Z"
[earth]
field_nt = [-300.0, 18000.0, -46000.0]
drift_nt_per_hour = [20.0, -10.0, 8.0]
[sensor]
height_m = 0.3
noise_nt = 1.0
[survey]
route = [[0.0, 0.0], [0.0, 100.0]]
count = 11
spacing_m = 10.0
first_at_m = 0.0
length_m = 20.0
speed_m_s = 1.0
sample_spacing_m = 0.002
turn_s = 30.0
[[conductor]]
name = "cable"
kind = "line"
point = [0.0, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 5.0
`
