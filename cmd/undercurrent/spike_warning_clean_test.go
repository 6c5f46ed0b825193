package main

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// shortTraverseTOML is a Fenwick Lane cable survey of short traverses: a
// 3 A DC cable 3.3 m below the sensor, eleven 10 m traverses of n readings
// each, 2 nT of white noise and nothing else (no spikes). A fixture.
func shortTraverseTOML(n int) string {
	return fmt.Sprintf(`name = "fenwick-lane-short-%d"
site = "Fenwick Lane cable (invented)"
seed = 1
start = "2026-05-10T09:00:00Z"
[earth]
field_nt = [-300.0, 18000.0, -46000.0]
[sensor]
height_m = 0.3
noise_nt = 2
[survey]
route = [[0.0, 0.0], [100.0, 0.0]]
count = 11
spacing_m = 5.0
first_at_m = 0.0
length_m = 10
speed_m_s = 0.5
sample_spacing_m = %.17g
turn_s = 10.0
[[conductor]]
name = "cable"
kind = "line"
point = [0.0, 0.4, -3]
direction = [1.0, 0.0, 0.0]
current_a = 3
`, n, 10/float64(n-1))
}

// TestSpikeWarningCleanSurveys: the spike warning, which tells the user to
// rerun with --despike, stays quiet on clean simulated surveys (Biot-Savart
// lines and white Gaussian noise, no spikes): the Harrow Fen earthing
// conductor (single-line.toml) and battery-room feeders
// (two-conductors.toml), 100 seeds each, and Fenwick Lane surveys of
// short traverses of 7, 11, 15 and 21 readings, 100 seeds each. At most
// one survey in a hundred of each kind may warn (a Gaussian departure of
// 10 sigma has a probability of 1.5e-23, but the scale is estimated from a
// few neighbours). The quadratic carried past one side's neighbours at a
// traverse's ends warned on 10 and 4 of the hundred (single-line seed 2
// and two-conductors seed 3 among them), and with the median of a whole
// short traverse, which spans the anomaly, on 100, 51, 6 and 38 of the
// short surveys.
func TestSpikeWarningCleanSurveys(t *testing.T) {
	type kind struct {
		name string
		sc   *simulate.Scenario
	}
	var kinds []kind
	for _, name := range []string{"single-line.toml", "two-conductors.toml"} {
		sc, _ := scenario(t, name)
		kinds = append(kinds, kind{name, sc})
	}
	for _, n := range []int{7, 11, 15, 21} {
		sc, err := simulate.Parse([]byte(shortTraverseTOML(n)), fmt.Sprintf("short-%d.toml", n))
		if err != nil {
			t.Fatal(err)
		}
		kinds = append(kinds, kind{fmt.Sprintf("traverses of %d readings", n), sc})
	}
	const seeds = 100
	for _, k := range kinds {
		var warned []string
		for seed := int64(1); seed <= seeds; seed++ {
			k.sc.Seed = seed
			s, err := simulate.Simulate(k.sc)
			if err != nil {
				t.Fatal(err)
			}
			w, err := spikeWarning(k.name, s, false)
			if err != nil {
				t.Fatal(err)
			}
			if w != "" {
				warned = append(warned, fmt.Sprintf("seed %d: %s", seed, w))
			}
		}
		if len(warned) > seeds/100 {
			t.Errorf("%s: %d of %d clean surveys warn of spikes, want at most %d:\n%s", k.name, len(warned), seeds, seeds/100, strings.Join(warned, "\n"))
		}
	}
}

// TestDespikeKeepsShortTraverses: --despike on a clean Fenwick Lane survey
// of eleven 10 m traverses of 7 and 12 readings removes no reading and
// every group is fitted soundly; the median of each whole traverse, which
// spans the cable's anomaly, removed 22 of the 77 readings of the 7-reading
// survey, and the quadratic carried past the ends 12 of the 132 of the
// 12-reading one.
func TestDespikeKeepsShortTraverses(t *testing.T) {
	dir := t.TempDir()
	for _, n := range []int{7, 12} {
		log := simulateText(t, dir, fmt.Sprintf("fenwick-lane-short-%d", n), shortTraverseTOML(n), ".csv")
		out := mustCLI(t, "locate", "--json", "--group-by", "group", "--reference-z", "0", "--despike", log)
		var doc resultDoc
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		for _, w := range doc.Warnings {
			if strings.Contains(w, "spikes") {
				t.Errorf("%d readings a traverse: %s", n, w)
			}
		}
		points := 0
		for _, g := range doc.Groups {
			points += g.Points
			if !g.OK {
				t.Errorf("%d readings a traverse: group %s not sound (RMS %.3g nT)", n, g.Key, g.RMS)
			}
		}
		if len(doc.Groups) != 11 || points != 11*n {
			t.Errorf("%d readings a traverse: %d groups fitted on %d readings, want 11 on %d", n, len(doc.Groups), points, 11*n)
		}
	}
}
