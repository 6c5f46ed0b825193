package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// pairBesideHead is the survey of a 50 Hz go-and-return pair at the
// invented Sallow Carr: ten 8 m traverses 5 m apart along x, sensors 0.3 m
// up, 0.5 nT noise; the conductors follow.
const pairBesideHead = `name = "pair beside a line"
site = "Sallow Carr"
seed = SEED
start = "2026-03-14T11:00:00Z"
[origin]
lat_deg = 52.3311
lon_deg = -0.4120
height_m = 10.0
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 18.0, -8.0]
[sensor]
height_m = 0.3
noise_nt = 0.5
sample_rate_hz = 2000
[survey]
route = [[0.0, 0.0], [65.0, 0.0]]
count = 10
spacing_m = 5.0
first_at_m = 10.0
length_m = 8
speed_m_s = 1.0
turn_s = 3.0
`

// pairStreetLightScenario: a healthy pair, 30 A at 20 degrees and 30 A at
// 200, cores 1 m apart at 0.9 m (y = 0 and 1), and a street-light cable at
// y = 1.45 m, 0.6 m down, 2.5 A at 100 degrees falling to 1.5 A at x = 32.5
// (chainage 22.5 m): about 0.99 m from the pair's centre line, against
// the pair's 1 m spacing.
const pairStreetLightScenario = pairBesideHead + `[[conductor]]
name = "go"
kind = "line"
point = [0, 0, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 30
frequency_hz = 50.0
phase_deg = 20
[[conductor]]
name = "return"
kind = "line"
point = [0, 1, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 30
frequency_hz = 50.0
phase_deg = 200
[[conductor]]
name = "street light"
kind = "polyline"
vertices = [[-300, 1.45, -0.6], [32.5, 1.45, -0.6], [400, 1.45, -0.6]]
currents_a = [2.5, 1.5]
frequency_hz = 50.0
phase_deg = 100
`

// TestPairStreetLightNotSwitchedIntoNet: a line beside a pair, near the
// distance within which the pair's net current takes in a weak line
// (pairStreetLightScenario), is fitted at every traverse. It must be
// judged once along the route: no current finding on the pair, whose net
// current (truth 0 A) must read under 0.3 A at every station, and the
// cable's own 1 A fall reported on a further conductor. Before, the
// per-traverse distance cut counted it on some traverses and not others
// (net 2.5 A at T01-T04, 0.16 A at T05, 1.63 A at T06...), and the route
// warned of 2.51 A and 1.46 A earth faults on seeds 1-3 (the case found in
// review).
func TestPairStreetLightNotSwitchedIntoNet(t *testing.T) {
	for _, seed := range []int{1, 2, 3} {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			text := strings.Replace(pairStreetLightScenario, "SEED", fmt.Sprint(seed), 1)
			log := simulateText(t, t.TempDir(), "pairlight", text, ".csv")
			doc := locateInto[pairWireDoc](t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
			if doc.Route == nil || !doc.Route.PairNet || len(doc.Route.Stations) != 10 {
				t.Fatalf("route %+v: want a pair route over 10 stations", doc.Route)
			}
			for _, st := range doc.Route.Stations {
				if !(math.Abs(st.Current) < 0.3) {
					t.Errorf("%s: net current %.3f ± %.3f A, want under 0.3 A (the pair is balanced)", st.Key, st.Current, st.CurrentSigma)
				}
			}
			fall := false
			for _, f := range doc.Findings {
				if !strings.HasPrefix(f.Kind, "current-") {
					continue
				}
				if f.Conductor <= 1 {
					t.Errorf("false finding on the healthy pair: %s %s", f.Severity, f.Message)
				} else if strings.Contains(f.Message, "current falls") {
					fall = true
				}
			}
			if !fall {
				t.Error("the street light's own fall is not reported on a further conductor")
			}
		})
	}
}

// pairJointFaultScenario: a pair, 30 A at 20 degrees on y = 0 and 27 A at
// 200, whose return core moves from y = 1 to y = 0.5 over x = 32-33 m (a
// joint where the spacing changes from 1 m to 0.5 m), and at the same
// joint (x = 32.5, chainage 22.5 m) the go core loses 3 A to earth: the
// net current falls from 3 A to 0.
const pairJointFaultScenario = pairBesideHead + `[[conductor]]
name = "go"
kind = "polyline"
vertices = [[-300, 0, -0.9], [32.5, 0, -0.9], [400, 0, -0.9]]
currents_a = [30, 27]
frequency_hz = 50.0
phase_deg = 20
[[conductor]]
name = "return"
kind = "polyline"
vertices = [[-300, 1.0, -0.9], [32, 1.0, -0.9], [33, 0.5, -0.9], [400, 0.5, -0.9]]
currents_a = [27, 27, 27]
frequency_hz = 50.0
phase_deg = 200
`

// TestPairJointFaultNotDemoted: a real 3 A earth fault at a joint where
// the pair's spacing changes (pairJointFaultScenario) must be reported as
// a warning on the pair, its size within 0.1 A and three sigma of 3 A
// (the stations either side read the simulated 3 A and 0 A to within
// 0.6 A where the joint lies in the traverse's span), and not worded as
// resting on a change of partner. Before, each group's partner spacing
// was set against the median of its four nearest groups', two at 1 m and
// two at 0.5 m, 0.75 m, so correctly paired groups beside the joint were
// marked odd and the fault was demoted to a caution on seeds 1-3 (the case
// found in review).
func TestPairJointFaultNotDemoted(t *testing.T) {
	for _, seed := range []int{1, 2, 3} {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			text := strings.Replace(pairJointFaultScenario, "SEED", fmt.Sprint(seed), 1)
			log := simulateText(t, t.TempDir(), "pairjoint", text, ".csv")
			doc := locateInto[pairWireDoc](t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
			if doc.Route == nil || !doc.Route.PairNet {
				t.Fatalf("route %+v: want a pair route", doc.Route)
			}
			found := false
			for _, f := range doc.Findings {
				if f.Kind != "current-step" || f.Conductor > 1 {
					continue
				}
				if strings.Contains(f.Message, "change of the core paired") {
					t.Errorf("fault worded as a change of partner: %s %s", f.Severity, f.Message)
				}
				if f.Severity != "warning" || !(f.From <= 22.5 && 22.5 <= f.To) {
					continue
				}
				for _, v := range f.Values {
					if v.Name == "step" && math.Abs(math.Abs(v.Value)-3) <= math.Max(0.1, 3*v.Sigma) {
						found = true
					}
				}
			}
			if !found {
				for _, f := range doc.Findings {
					t.Logf("%s %s c%d %v %s", f.Kind, f.Severity, f.Conductor, f.Values, f.Message)
				}
				t.Error("no warning of the 3 A earth fault at the joint (chainage 22.5 m)")
			}
		})
	}
}

// TestPairStrongWireTradeNoWarning: the earth wire of pairEarthWireScenario
// carrying 3.5 A at 200 degrees (11.7% of the go core, near the share
// below which a line beside the pair is counted in its net current) is
// fitted at every traverse and read 2.2 A on some and 3.3-3.5 A on others,
// the cores' net current moving with it by the same amount (the fit trades
// current between them; truth: nothing changes along the route). No change
// in the pair's net current may be a warning, and one there must say that a
// line beside the pair changes by as much. Before, the wire was counted in
// the net on the traverses where it read under a tenth (T01-T02 on seed 2)
// and the route warned of a 2.31 A earth fault; counting it nowhere still
// left a 1.15 A warning on seed 2 and a 1.21 A one on seed 3 (the case found
// in review).
func TestPairStrongWireTradeNoWarning(t *testing.T) {
	for _, seed := range []int{2, 3} {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) {
			text := strings.Replace(pairEarthWireScenario, "seed = 1", fmt.Sprintf("seed = %d", seed), 1)
			text = strings.Replace(text, "current_a = 0.45", "current_a = 3.5", 1)
			text = strings.Replace(text, "WIREPHASE", "200.0", 1)
			log := simulateText(t, t.TempDir(), "pairwire35", text, ".csv")
			doc := locateInto[pairWireDoc](t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
			if doc.Route == nil || !doc.Route.PairNet {
				t.Fatalf("route %+v: want a pair route", doc.Route)
			}
			for _, f := range doc.Findings {
				if !strings.HasPrefix(f.Kind, "current-") || f.Conductor > 1 {
					continue
				}
				if f.Severity == "warning" || !strings.Contains(f.Message, "the fit trades current between such a line and the cores") {
					t.Errorf("change in the healthy pair's net current not worded as the fit's trade with the wire: %s %s", f.Severity, f.Message)
				}
			}
		})
	}
}
