package report

import (
	"math"
	"testing"

	"undercurrent/inverse/simulate"
)

// stepBesideScenario is an invented survey at Marlow Fen: a feeder 1.0 m
// below the ground carrying 25 A the whole way, and a supply cable 3 m
// beside it, 0.8 m down, whose current falls from 18 A to 8 A at north 130
// m (a polyline, each piece its own current: current leaving the cable
// there). Sensors 0.3 m up, 5 nT noise, 12 traverses 12 m long, 20 m apart
// from north 20 m (after review rg26a's s9-step-on-c2).
const stepBesideScenario = `
name = "marlow-fen-step-beside"
site = "Marlow Fen feeder and supply (invented)"
seed = 1
start = "2026-06-03T09:00:00Z"
[earth]
field_nt = [-180.0, 19150.0, -45250.0]
[sensor]
height_m = 0.3
noise_nt = 5.0
[survey]
route = [[0.0, 0.0], [0.0, 260.0]]
count = 12
spacing_m = 20.0
first_at_m = 20.0
length_m = 12.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "feeder"
kind = "polyline"
vertices = [[0.0, -300.0, -1.0], [0.0, 130.0, -1.0], [0.0, 800.0, -1.0]]
currents_a = [25.0, 25.0]
[[conductor]]
name = "supply cable"
kind = "polyline"
vertices = [[3.0, -300.0, -0.8], [3.0, 130.0, -0.8], [3.0, 800.0, -0.8]]
currents_a = [18.0, 8.0]
`

// TestStepBesideWidensFeeder: a step found on a further conductor widens
// conductor 1's stations near it for the field of that step, which the
// fits' straight lines do not model. The truth is the scenario's: by
// Kirchhoff's current law the feeder, which nothing joins or leaves,
// carries 25 A at every traverse, 1.3 m below the sensors. Before, the
// cable's 10 A step was found and its own stations widened, while the
// feeder's two traverses beside the step read 5-7 sigma off in current
// (about 1%) and up to 5 sigma in depth on three seeds (review rg26a).
func TestStepBesideWidensFeeder(t *testing.T) {
	const current, depth, k = 25.0, 1.3, 3.5
	for seed := int64(1); seed <= 3; seed++ {
		sc, err := simulate.Parse([]byte(stepBesideScenario), "marlow-fen")
		if err != nil {
			t.Fatal(err)
		}
		sc.Seed = seed
		d := simulatedSensorDoc(t, sc)
		if d.Route == nil {
			t.Fatalf("seed %d: no route", seed)
		}
		stepped := false
		for _, f := range d.Findings {
			stepped = stepped || f.Conductor == 2 && f.Kind == "current-step"
		}
		if !stepped {
			t.Fatalf("seed %d: the cable's step was not found: the fixture no longer tests this", seed)
		}
		for _, s := range d.Route.Stations {
			if !s.Used {
				continue
			}
			if z := (math.Abs(s.Current) - current) / s.CurrentSigma; math.Abs(z) > k {
				t.Errorf("seed %d: %s at %.1f m reads %.4f ± %.4f A, %.1f sigma from the feeder's %g A", seed, s.Key, s.Chainage, math.Abs(s.Current), s.CurrentSigma, z, current)
			}
			if z := (s.Depth - depth) / s.DepthSigma; math.Abs(z) > k {
				t.Errorf("seed %d: %s at %.1f m is %.4f ± %.4f m down, %.1f sigma from %g m", seed, s.Key, s.Chainage, s.Depth, s.DepthSigma, z, depth)
			}
		}
	}
}
