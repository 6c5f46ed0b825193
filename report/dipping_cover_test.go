package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestBuildDippingLineCoverAtTraverse: traverses square to a straight pipe
// that dips along its run, fitted with inverse.FitLines, depths below the
// sensors' mean height. Against the simulated truth (the infinite line of
// DOMAIN.md, Biot-Savart, plus a uniform Earth field and 2 nT of noise),
// each station of the route must lie where the pipe passes under its
// traverse (within 5 cm of the traverse's east), and its depth below the
// sensors, and its cover, must match the truth there within 4 sigma:
//
//   - "slope": a pipe laid 1.0 m under ground rising 30% along it, the
//     sensors carried 0.3 m over the ground, so the readings' heights follow
//     the ground. Cover is 1.0 m everywhere: no cover finding against a 0.95
//     m minimum may be made. Before, every station was placed at the pipe's
//     point nearest the readings' centre in space, 0.36 m uphill of the
//     traverse, and its depth there less the sensor height at the traverse
//     read 0.892 ± 0.0008 m of cover, with a false minimum-cover warning.
//   - "dip": a pipe dipping 26.6 degrees under level ground, 5.0 m under the
//     first traverse and 1.25 m under the fourth. Before, the first read
//     3.9 m deep at a point 2.1 m along the route from its traverse.
func TestBuildDippingLineCoverAtTraverse(t *testing.T) {
	const noise = 2.0
	earth := [3]float64{-150, 19200, -45100}
	for _, tc := range []struct {
		name    string
		p0, dir [3]float64 // the pipe: a point and its direction
		ground  float64    // ground rise per metre east
		count   int        // traverses at east 0, 2.5, 5, ...
	}{
		{name: "slope", p0: [3]float64{0, 0, -1}, dir: [3]float64{1, 0, 0.3}, ground: 0.3, count: 7},
		{name: "dip", p0: [3]float64{0, 0, -5}, dir: [3]float64{1, 0, 0.5}, ground: 0, count: 4},
	} {
		n := math.Sqrt(tc.dir[0]*tc.dir[0] + tc.dir[1]*tc.dir[1] + tc.dir[2]*tc.dir[2])
		u := [3]float64{tc.dir[0] / n, tc.dir[1] / n, tc.dir[2] / n}
		rng := rand.New(rand.NewPCG(26, 6))
		var fits []Fit
		for i := range tc.count {
			x := 2.5 * float64(i)
			z := tc.ground*x + 0.3 // the sensors, 0.3 m over the ground
			var prob inverse.Problem
			for k := -50; k <= 50; k++ {
				r := [3]float64{x, 0.1 * float64(k), z}
				b := lineField(tc.p0, u, r, 8)
				var m [3]float64
				for a := range m {
					m[a] = b[a]*1e9 + earth[a] + noise*rng.NormFloat64()
				}
				prob.Points = append(prob.Points, r)
				prob.Fields = append(prob.Fields, m)
			}
			prob.Sigma = noise
			res, err := inverse.FitLines(&prob, &inverse.Settings{Count: 1})
			if err != nil {
				t.Fatalf("%s T%d: %v", tc.name, i+1, err)
			}
			fits = append(fits, Fit{Key: fmt.Sprintf("T%02d", i+1), Problem: &prob, Result: res})
		}
		d, err := Build(Document{}, fits, &BuildSettings{Noise: noise, SensorHeight: 0.3, MinCover: 0.95})
		if err != nil {
			t.Fatal(err)
		}
		if d.Route == nil || len(d.Route.Stations) != tc.count {
			t.Fatalf("%s: route %+v, want %d stations", tc.name, d.Route, tc.count)
		}
		for i, s := range d.Route.Stations {
			x := 2.5 * float64(i)
			// The pipe under the traverse: its height there, the sensors'
			// height, and the ground's.
			zPipe := tc.p0[2] + (x-tc.p0[0])*u[2]/u[0]
			zSensor := tc.ground*x + 0.3
			depth, cover := zSensor-zPipe, zSensor-0.3-zPipe
			if !(math.Abs(s.Point[0]-x) <= 0.05) {
				t.Errorf("%s: %s placed at east %.3f m, want under its traverse at %.2f m", tc.name, s.Key, s.Point[0], x)
			}
			if !(math.Abs(s.Depth-depth) <= 4*s.DepthSigma) {
				t.Errorf("%s: %s depth %.4f ± %.4f m below the sensors, truth %.4f m", tc.name, s.Key, s.Depth, s.DepthSigma, depth)
			}
			if s.Cover == nil || s.CoverSigma == nil {
				t.Errorf("%s: %s has no cover", tc.name, s.Key)
				continue
			}
			if !(math.Abs(*s.Cover-cover) <= 4**s.CoverSigma) {
				t.Errorf("%s: %s cover %.4f ± %.4f m, truth %.4f m", tc.name, s.Key, *s.Cover, *s.CoverSigma, cover)
			}
		}
		for _, f := range d.Findings {
			if strings.Contains(f.Kind, "cover") {
				t.Errorf("%s: %s finding over a pipe with at least 1 m of cover: %s", tc.name, f.Kind, f.Message)
			}
		}
	}
}
