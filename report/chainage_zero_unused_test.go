package report

import (
	"math"
	"strings"
	"testing"
)

// TestChainageZeroSkipsFailedFirstStation: when the first traverse's fit
// failed, its station's point is the centroid of its readings, not the
// conductor's, and takes no part in the route. Chainage 0 must still be
// placed on the fitted conductor, back along the route from the first used
// station by that station's chainage, and the bearing must be the
// route's. The fixture's conductor runs at 60° from north through
// (10, 5) m, T01's crossing, with traverses every 15 m (plane geometry).
// Before, the sentence gave the centroid placed here at (13, 2) and the
// bearing from it to T02, 44°.
func TestChainageZeroSkipsFailedFirstStation(t *testing.T) {
	d := fenwickLane(false)
	s := &d.Route.Stations[0]
	s.Point = [3]float64{13, 2, 0}
	s.Current, s.CurrentSigma, s.Depth, s.DepthSigma, s.Cover, s.CoverSigma = 0, 0, 0, 0, nil, nil
	s.Used = false
	got := ChainageZero(d)
	for _, want := range []string{"T01 (whose fit is not used)", "from T02, the first group whose fit is used",
		"E 10.0 m, N 5.0 m", "60° from north (about north-east)", "towards T12"} {
		if !strings.Contains(got, want) {
			t.Errorf("sentence %q lacks %q", got, want)
		}
	}
	at, dir, ok := routeStart(d)
	if !ok || math.Abs(at[0]-10) > 0.05 || math.Abs(at[1]-5) > 0.05 || math.Abs(dir[0]-0.8660254) > 0.01 {
		t.Errorf("routeStart = %v, %v, %v; want (10, 5) and (sin 60°, cos 60°)", at, dir, ok)
	}
	// No used station: no chainage 0 to give.
	for i := range d.Route.Stations {
		d.Route.Stations[i].Used = false
	}
	if got := ChainageZero(d); got != "" {
		t.Errorf("no used station: %q, want nothing", got)
	}
}
