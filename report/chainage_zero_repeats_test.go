package report

import (
	"math"
	"strings"
	"testing"
)

// TestChainageZeroPassesOverRepeats: the Fenwick Lane fixture (its
// conductor runs at 60° from north through (10, 5) m, traverses every
// 15 m; plane geometry) walked again, each station followed by its
// repeat from the second walk, 1.4 mm away across the traverse (as two
// walks' fits of one traverse lie) and 1.4 mm on in chainage. The bearing
// of chainage 0 and the plan's arrow (routeStart) had been taken to T01's
// own repeat, across the route: 150° here (found in review, 177° on a
// route running east). They must pass over the repeats and follow the
// route, 60°, and the sentence must say the route runs towards T12, the
// first walk's last traverse, not its repeat.
func TestChainageZeroPassesOverRepeats(t *testing.T) {
	d := fenwickLane(false)
	const az = 60 * math.Pi / 180
	across := [3]float64{math.Cos(az) * 0.0014, -math.Sin(az) * 0.0014, 0}
	var st []Station
	for _, s := range d.Route.Stations {
		again := s
		again.Key = "later.csv:" + s.Key
		for a := range again.Point {
			again.Point[a] += across[a]
		}
		again.Chainage += 0.0014
		st = append(st, s, again)
	}
	d.Route.Stations = st
	at, dir, ok := routeStart(d)
	if !ok || math.Hypot(at[0]-10, at[1]-5) > 0.05 || math.Abs(dir[0]-math.Sin(az)) > 0.01 || math.Abs(dir[1]-math.Cos(az)) > 0.01 {
		t.Errorf("routeStart = %v, %v, %v; want (10, 5) and (sin 60°, cos 60°)", at, dir, ok)
	}
	got := ChainageZero(d)
	for _, want := range []string{"first traverse along the route, T01,", "60° from north (about north-east)", "towards T12,"} {
		if !strings.Contains(got, want) {
			t.Errorf("sentence %q lacks %q", got, want)
		}
	}
}
