package report

import (
	"math"
	"strings"
	"testing"
)

// A fit's own sensor height (Fit.SensorHeight) against the datum
// (BuildSettings.SensorHeight): kestrelMoor's line lies 1.2 m below the
// sensors of every traverse (simulated truth); with K5-K8 walked by a
// crew whose sensors stood 0.25 m above the ground and the datum 0.30 m,
// the route's cover is 1.2 - 0.30 = 0.90 m at K1-K4 and 1.2 - 0.25 =
// 0.95 m at K5-K8, each within 3 of its sigmas; K5-K8 give their height,
// the document says the depths are per log, and Validate passes. A fit
// height that is NaN, or given with no datum, is refused.
func TestBuildFitSensorHeight(t *testing.T) {
	fits := kestrelMoor(t)
	for i := 4; i < len(fits); i++ {
		fits[i].SensorHeight = 0.25
	}
	d, err := Build(Document{}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if err := d.Validate(); err != nil {
		t.Fatal(err)
	}
	if !d.DepthReference.PerLog || d.DepthReference.SensorHeight != 0.3 {
		t.Errorf("depth reference %+v: want per_log and the datum 0.3 m", d.DepthReference)
	}
	for i, g := range d.Groups {
		if want := map[bool]float64{true: 0.25, false: 0}[i >= 4]; g.SensorHeight != want {
			t.Errorf("%s: SensorHeight %g, want %g", g.Key, g.SensorHeight, want)
		}
	}
	if d.Route == nil || len(d.Route.Stations) != 8 {
		t.Fatalf("route %+v, want 8 stations", d.Route)
	}
	for i, s := range d.Route.Stations {
		want := map[bool]float64{true: 1.2 - 0.25, false: 1.2 - 0.3}[i >= 4]
		if s.Cover == nil || s.CoverSigma == nil || math.Abs(*s.Cover-want) > 3**s.CoverSigma {
			t.Errorf("%s: cover %v ± %v, want %.2f m within 3 sigma", s.Key, s.Cover, s.CoverSigma, want)
		}
	}
	for _, c := range []struct {
		h, datum float64
		want     string
	}{{math.NaN(), 0.3, "want a height in metres"}, {0.25, 0, "the datum"}} {
		fits[4].SensorHeight = c.h
		if _, err := Build(Document{}, fits, &BuildSettings{SensorHeight: c.datum}); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("K5 SensorHeight %g, datum %g: err %v, want %q", c.h, c.datum, err, c.want)
		}
	}
}
