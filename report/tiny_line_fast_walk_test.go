package report

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// fastWalkScenario is an invented walked survey at Ashgrove Drove: one 40 A
// DC feeder rising from 0.9 m to 0.45 m below the ground along 330 m, then
// level and turning slightly, crossed by eight 12 m traverses around that
// change of slope, walked at 1 m/s and logged at 500 Hz (6000 readings a
// traverse, 2 nT of noise). The sensors are 0.3 m up. %s stands for the
// seed and %s for any further conductor.
const fastWalkScenario = `
name = "ashgrove-fast-walk"
site = "Ashgrove Drove feeder, walked at 500 Hz (invented)"
seed = %s
start = "2026-06-02T07:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
sample_rate_hz = 500.0
[survey]
pattern = "traverses"
route = [[700.0, 40.0], [1300.0, 300.0]]
count = 8
spacing_m = 5.7
first_at_m = 302.0
length_m = 12.0
speed_m_s = 1.0
turn_s = 5.0
zigzag = true
[[conductor]]
name = "feeder"
kind = "polyline"
vertices = [[698.0, 41.0, -0.9], [1000.0, 171.0, -0.45], [1040.0, 188.0, -0.45], [1299.0, 301.0, -1.0]]
currents_a = [40.0, 40.0, 40.0]
%s`

// fastWalkService is a 0.05 A service crossing the route at 60 degrees
// under T04 (chainage 319.1 m), 0.45 m below the ground: its field at the
// sensors, 0.75 m above it, peaks at 13 nT, a thousandth of the feeder's
// current but well above the noise of one reading.
const fastWalkService = `
[[conductor]]
name = "service"
kind = "line"
point = [992.81, 166.88, -0.45]
direction = [0.8034, -0.5954, 0.0]
current_a = 0.05
`

// TestTinyLineNotKeptOnFastWalk: where the one conductor's straight-line
// model is off by a fraction of a nanotesla (its change of slope near T04
// to T06), thousands of readings a traverse let a further line of a
// hundredth of an ampere pass the information criterion and the current's
// 3 sigma by absorbing that error; such a line was then reported as a buried
// service ("confirm before digging here"; in review a 0.0118 A line 0.22 m
// above the ground at a 250 Hz traverse, and a 0.0039 A one at 500 Hz).
// Simulated truth (Biot-Savart through the simulate package): one
// conductor, so no fit may keep a further line and no finding may be about
// one. Before the fix, seeds 1, 4 and 5 kept lines of 0.014-0.017 A, 1.5 to
// 2.8 m below the sensors, at T05 or T06 (0.4 to 0.9 nT RMS over the
// readings, under the 2 nT noise). A genuine service of 0.05 A crossing the
// route 0.45 m down, whose field stands above the noise, must still be
// fitted and warned of.
func TestTinyLineNotKeptOnFastWalk(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 32 traverses of 6000 readings")
	}
	bs := &BuildSettings{MinCover: 0.6} // depths below the ground at up = 0
	for _, seed := range []int{1, 4, 5} {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			d := fastWalkDoc(t, seed, "", bs)
			for _, g := range d.Groups {
				if len(g.Sources) != 1 {
					t.Errorf("%s: %d sources, want the feeder alone", g.Key, len(g.Sources))
				}
				for _, s := range g.Sources[min(1, len(g.Sources)):] {
					t.Logf("%s: further line %.4g ± %.2g A, %.2f m below the ground", g.Key, s.Current, s.CurrentSigma, s.Depth)
				}
			}
			for _, f := range d.Findings {
				if f.Lone || f.Kind == "weak-source" {
					t.Errorf("finding about a further line: %s %s: %s", f.Severity, f.Kind, f.Message)
				}
			}
		})
	}
	t.Run("service", func(t *testing.T) {
		d := fastWalkDoc(t, 1, fastWalkService, bs)
		var found bool
		for _, g := range d.Groups {
			if g.Key != "T04" || len(g.Sources) < 2 {
				continue
			}
			for _, s := range g.Sources[1:] {
				// The service's current within 10%, 0.45 m below the
				// ground within 0.1 m.
				if math.Abs(math.Abs(s.Current)-0.05) < 0.005 && math.Abs(s.Depth-0.45) < 0.1 {
					found = true
				}
			}
			if !found {
				for _, s := range g.Sources {
					t.Logf("T04: line %.4g ± %.2g A, %.2f m below the ground", s.Current, s.CurrentSigma, s.Depth)
				}
			}
		}
		if !found {
			t.Fatal("the 0.05 A service is not fitted at T04")
		}
		warned := false
		for _, f := range d.Findings {
			if f.Kind == "shallow-cover" && (f.Lone || f.Conductor > 0) && strings.Contains(strings.Join(f.Groups, " "), "T04") {
				warned = true
			}
		}
		if !warned {
			for _, f := range d.Findings {
				t.Logf("%s %s %d %v: %s", f.Severity, f.Kind, f.Conductor, f.Groups, f.Message)
			}
			t.Error("no cover finding for the service at T04, 0.45 m down against a 0.6 m minimum")
		}
	})
}

// fastWalkDoc simulates fastWalkScenario with seed and the further
// conductors more, and builds its document with bs.
func fastWalkDoc(t *testing.T, seed int, more string, bs *BuildSettings) *Document {
	t.Helper()
	sc, err := simulate.Parse([]byte(fmt.Sprintf(fastWalkScenario, fmt.Sprint(seed), more)), "ashgrove-fast-walk")
	if err != nil {
		t.Fatal(err)
	}
	return simulatedDocWith(t, sc, bs)
}
