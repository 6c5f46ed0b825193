package route

import (
	"strings"
	"testing"
)

// TestLoneCoverWhyMatchesCounts: the reason a lone line is not followed
// matches what the fits show of it. A line along the route (the feeder
// beside the conductor followed, invented street) seen in line at eight
// groups, where three make a track, is not "too few groups ... a crossing
// service": it was seen at enough, and runs along the route. A line across
// the route seen at two groups keeps the old words; one along it at one
// group is not called a crossing service. Before, every case read "too few
// groups ... a crossing service" (review rv28b).
func TestLoneCoverWhyMatchesCounts(t *testing.T) {
	set := &Settings{MinCover: 0.45, SensorHeight: 0}
	p := &Placed{Station: Station{Key: "T02", OK: true, Current: 12, CurrentSigma: 0.1, Depth: 0.6, DepthSigma: 0.01, Dir: [3]float64{1, 0, 0}}}
	along := Line{Point: [3]float64{8, -0.3, -0.34}, Dir: [3]float64{1, 0.002, 0}, Current: 3.4, CurrentSigma: 0.3, Depth: 0.34, DepthSigma: 0.02, AzimuthSigma: 0.7}
	across := along
	across.Dir = [3]float64{0.57, 0.82, 0}

	many := along
	many.InLineWith = []string{"T01", "T04", "T07", "T08", "T09", "T12", "T14"}
	many.TrackMin = 3
	f, ok := LoneCover(p, many, set, false)
	if !ok {
		t.Fatal("no cover finding for a line 0.34 m down against 0.45 m")
	}
	if strings.Contains(f.Message, "too few groups") || strings.Contains(f.Message, "crossing service") {
		t.Errorf("a line along the route seen at 8 groups: %s", f.Message)
	}
	if !strings.Contains(f.Message, "8 groups in all") || !strings.Contains(f.Message, "along the route") {
		t.Errorf("the count or the direction not said: %s", f.Message)
	}

	two := across
	two.InLineWith = []string{"T03"}
	two.TrackMin = 3
	if f, _ := LoneCover(p, two, set, false); !strings.Contains(f.Message, "too few groups to follow it as a conductor: a crossing service, for example") {
		t.Errorf("a line across the route at two groups: %s", f.Message)
	}

	if f, _ := LoneCover(p, along, set, false); strings.Contains(f.Message, "crossing service") || !strings.Contains(f.Message, "too few groups show it") {
		t.Errorf("a line along the route at one group: %s", f.Message)
	}
}
