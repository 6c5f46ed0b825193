package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestCableCrossingPipe: a cable (30 A, 0.8 m deep, running north) crossing a pipe
// carrying cathodic-protection current (12 A, 1.5 m deep, azimuth 70 deg) under a
// 5 m x 5 m grid; the automatic count finds both with their azimuths.
func TestCableCrossingPipe(t *testing.T) {
	pts := grid(11, 41, 2.5, 0.5, 0)
	lines := []Line{
		{Point: [3]float64{0.4, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0, -0.5, -1.5}, Dir: [3]float64{math.Sin(70 * math.Pi / 180), math.Cos(70 * math.Pi / 180), 0}},
	}
	f := simulate(pts, lines, []float64{30, 12}, [3]float64{17000, 1500, -44000}, 5, rand.New(rand.NewPCG(4, 4)))
	res, err := FitLines(&Problem{Points: pts, Fields: f}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range res.Criteria {
		t.Logf("K=%d RSS %.1f BIC %.1f chosen %v %s", c.Count, c.RSS, c.BIC, c.Chosen, c.Rejected)
	}
	if len(res.Sources) != 2 {
		t.Fatalf("found %d lines", len(res.Sources))
	}
	want := []struct{ cur, depth, az float64 }{{30, 0.8, 0}, {12, 1.5, 70}}
	for i, e := range res.Sources {
		t.Logf("line %d: I %.3f+-%.3f depth %.4f+-%.4f az %.3f+-%.3f dip %.3f+-%.3f", i, e.Current, e.CurrentSigma, e.Depth, e.DepthSigma, e.Azimuth, e.AzimuthSigma, e.Dip, e.DipSigma)
		within3(t, "current", e.Current, want[i].cur, e.CurrentSigma)
		within3(t, "depth", e.Depth, want[i].depth, e.DepthSigma)
		az := e.Azimuth
		if az > 90 && want[i].az < 10 {
			az -= 180
		}
		within3(t, "azimuth", az, want[i].az, e.AzimuthSigma)
	}
}

// TestAICChoice: the AIC criterion also chooses both lines of the crossing, and its
// values are reported for every count tried.
func TestAICChoice(t *testing.T) {
	pts := grid(7, 31, 2.5, 0.6, 0)
	lines := []Line{
		{Point: [3]float64{0.4, 0, -0.8}, Dir: [3]float64{0, 1, 0}},
		{Point: [3]float64{0, -0.5, -1.2}, Dir: [3]float64{1, 0.3, 0}},
	}
	f := simulate(pts, lines, []float64{30, 15}, [3]float64{}, 5, rand.New(rand.NewPCG(9, 9)))
	res, err := FitLines(&Problem{Points: pts, Fields: f, Sigma: 5}, &Settings{Criterion: AIC})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Sources) != 2 || len(res.Criteria) < 3 {
		t.Fatalf("%d sources, criteria %+v", len(res.Sources), res.Criteria)
	}
	for _, c := range res.Criteria {
		// With Sigma given, AIC = chi2 + 2k exactly.
		if c.Rejected == "" || c.RSS > 0 {
			if want := c.RSS/25 + 2*float64(c.Params); math.Abs(c.AIC-want) > 1e-9*want {
				t.Errorf("K=%d: AIC %v, want chi2 + 2k = %v", c.Count, c.AIC, want)
			}
		}
	}
}
