package report

import (
	"strings"
	"testing"
)

// rewalkedRoute is a 20 A conductor walked at traverses T12-T16, 20 m
// apart, then walked again at 10% more current (simulated truth: 22 A,
// the rv16d review's ac.toml walked again at +10%), each repeat at its
// station's chainage and every station brought to the first walk's level
// (day1.csv) as the route's steps take it; T14's first-walk current is
// t14 (and its repeat's 1.1 times that), sigmas 0.02 A.
func rewalkedRoute(t14 float64) *Route {
	r := &Route{FirstWalk: "day1.csv", RepeatGap: 10}
	for k, key := range []string{"T12", "T13", "T14", "T15", "T16"} {
		first := 20.0
		if key == "T14" {
			first = t14
		}
		for walk, scale := range []float64{1, 1.1} {
			name := key
			if walk == 1 {
				name = "day2.csv:" + key
			}
			lv, ls := first, 0.02
			r.Stations = append(r.Stations, Station{Key: name, Chainage: 20 * float64(k), Used: true,
				Current: first * scale, CurrentSigma: 0.02 * scale, CurrentFirstWalk: &lv, CurrentFirstWalkSigma: &ls})
		}
	}
	return r
}

// TestRouteCoverDoubtRewalkAtFirstWalkLevel: on a route walked again at
// 10% more current, a station that agrees with the route (T14 at 20 A
// with its neighbours at 20 A, the first walk's level) draws no doubt,
// where it had been compared with its own repeat and the other walk's
// T13 at their raw currents ("T14's 20.145 A differs from both
// neighbours' (22.008 A at T13 (walk 2), 22.160 A at T14 (walk 2))"),
// and a station that does depart from the route (T14 at 14.9 A, a steel
// object over the cable: the case routeCoverDoubt was written for) still
// draws one naming its neighbours T13 and T15, not its own repeat.
func TestRouteCoverDoubtRewalkAtFirstWalkLevel(t *testing.T) {
	d := &Document{}
	r := rewalkedRoute(20)
	if why := routeCoverDoubt(d, r, r.Stations[4]); why != "" {
		t.Errorf("T14 at the route's current: %s", why)
	}
	r = rewalkedRoute(14.9)
	why := routeCoverDoubt(d, r, r.Stations[4])
	if !strings.Contains(why, "differs from both neighbours") || strings.Contains(why, "at day2.csv:T14") ||
		!strings.Contains(why, "at the level of day1.csv") {
		t.Errorf("T14 at 14.9 A: %q", why)
	}
}
