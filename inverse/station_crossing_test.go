package inverse

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestStationAtTraverseCrossing: a line's reported point (SourceEstimate.Point)
// lies where the line crosses a walked traverse in plan, with the depth there,
// against the simulated truth (the infinite line of DOMAIN.md through
// simulate, 2 nT of noise per axis, a uniform Earth field):
//
//   - "oblique off-centre": a level 25 A line at azimuth 60 degrees, 1.4 m
//     below the sensors, a traverse at 40 degrees to it running from 2 m
//     before the crossing to 7 m past it. The point under the readings'
//     centroid lay 2.5 m x cos 40 degrees = 1.9 m along the line from the
//     crossing.
//   - "dipping": the same traverse over a line dipping 10 degrees along
//     itself: the point, and the depth, are the line's where the traverse
//     crosses it, not under the centroid (0.34 m deeper there).
//
// Readings that are not a walked traverse keep the point under the
// centroid: four fixed sensors in a row, read over and over, and a compact
// grid.
func TestStationAtTraverseCrossing(t *testing.T) {
	const noise = 2.0
	bg := [3]float64{-150, 19200, -45100}
	az := 60 * math.Pi / 180
	uh := [2]float64{math.Sin(az), math.Cos(az)}
	nh := [2]float64{-uh[1], uh[0]}
	ang := 40 * math.Pi / 180
	td := [2]float64{uh[0]*math.Cos(ang) + nh[0]*math.Sin(ang), uh[1]*math.Cos(ang) + nh[1]*math.Sin(ang)}
	cross := [2]float64{5 * uh[0], 5 * uh[1]} // where the traverse crosses the line in plan
	var walk [][3]float64
	for k := -20; k <= 70; k++ {
		s := 0.1 * float64(k)
		walk = append(walk, [3]float64{cross[0] + s*td[0], cross[1] + s*td[1], 0})
	}
	for _, tc := range []struct {
		name string
		dip  float64 // degrees, the line descending along +uh
	}{
		{"oblique off-centre", 0},
		{"dipping", 10},
	} {
		dp := tc.dip * math.Pi / 180
		dir := [3]float64{uh[0] * math.Cos(dp), uh[1] * math.Cos(dp), -math.Sin(dp)}
		// The line passes 1.4 m below the sensors where the traverse crosses it.
		line := Line{Point: [3]float64{cross[0], cross[1], -1.4}, Dir: dir}
		rng := rand.New(rand.NewPCG(13, 40))
		p := &Problem{Points: walk, Fields: simulate(walk, []Line{line}, []float64{25}, bg, noise, rng), Sigma: noise}
		res, err := FitLines(p, &Settings{Count: 1})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		e := res.Sources[0]
		if !e.AtTrackCrossing {
			t.Errorf("%s: point not at the traverse's crossing (notes %q)", tc.name, e.Notes)
		}
		if d := math.Hypot(e.Point[0]-cross[0], e.Point[1]-cross[1]); !(d <= 0.02) {
			t.Errorf("%s: point at E %.3f N %.3f, %.3f m from the crossing at E %.3f N %.3f", tc.name, e.Point[0], e.Point[1], d, cross[0], cross[1])
		}
		// Depths are below the sensors' mean height (0 here): 1.4 m.
		if !(math.Abs(e.Depth-1.4) <= 4*e.DepthSigma) {
			t.Errorf("%s: depth %.4f ± %.4f m at the crossing, truth 1.4 m", tc.name, e.Depth, e.DepthSigma)
		}
	}

	// Readings that are not a walked traverse: the point under the centroid.
	line := Line{Point: [3]float64{0.5, 0, -1.2}, Dir: [3]float64{math.Sin(az), math.Cos(az), 0}}
	var row, grid [][3]float64
	for range 60 {
		for _, x := range []float64{-1.5, -0.5, 0.5, 1.5} {
			row = append(row, [3]float64{x, 0, 0})
		}
	}
	for i := -10; i <= 10; i++ {
		for j := -10; j <= 10; j++ {
			grid = append(grid, [3]float64{0.2 * float64(i), 0.2 * float64(j), 0})
		}
	}
	for _, tc := range []struct {
		name string
		pts  [][3]float64
	}{{"fixed sensors in a row", row}, {"grid", grid}} {
		rng := rand.New(rand.NewPCG(13, 41))
		p := &Problem{Points: tc.pts, Fields: simulate(tc.pts, []Line{line}, []float64{25}, bg, noise, rng), Sigma: noise}
		res, err := FitLines(p, &Settings{Count: 1})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		e := res.Sources[0]
		if e.AtTrackCrossing {
			t.Errorf("%s: point said to be at a traverse's crossing", tc.name)
		}
		// The foot of the perpendicular from the centroid (0, 0) to the line
		// in plan: the line's point along it by -(P . u) from P.
		s := -(line.Point[0]*line.Dir[0] + line.Point[1]*line.Dir[1])
		foot := [2]float64{line.Point[0] + s*line.Dir[0], line.Point[1] + s*line.Dir[1]}
		if d := math.Hypot(e.Point[0]-foot[0], e.Point[1]-foot[1]); !(d <= 0.02) {
			t.Errorf("%s: point at E %.3f N %.3f, %.3f m from the line's point under the centroid (E %.3f N %.3f)", tc.name, e.Point[0], e.Point[1], d, foot[0], foot[1])
		}
	}
}

// TestStationAlongNearlyParallelTraverse: a walked traverse within 20 degrees of
// a line keeps the point under the readings' centroid (the crossing would move
// along the line by the traverse's distance from it over tan of the angle); at
// 30 degrees the point is the crossing. Checked by plane geometry on the
// survey alone (no fit): a traverse along east from (-5, 0) to (5, 0), the
// centroid at the origin, a line through (0, 2).
func TestStationAlongNearlyParallelTraverse(t *testing.T) {
	var pts [][3]float64
	for k := -50; k <= 50; k++ {
		pts = append(pts, [3]float64{0.1 * float64(k), 0, 0})
	}
	sv := newSurvey(&Problem{Points: pts, Fields: make([][3]float64, len(pts))})
	if !sv.walked {
		t.Fatal("a traverse of 101 readings along east is not taken as walked")
	}
	p := [3]float64{0, 2, -1}
	for _, tc := range []struct {
		deg      float64
		crossing bool
	}{{10, false}, {30, true}, {90, true}} {
		a := tc.deg * math.Pi / 180
		u := [3]float64{math.Cos(a), math.Sin(a), 0} // tc.deg from the traverse
		s, crossing := sv.stationAlong(sub(sv.centroid, p), u)
		if crossing != tc.crossing {
			t.Errorf("%.0f degrees: crossing %v, want %v", tc.deg, crossing, tc.crossing)
		}
		q := add(p, scale(u, s))
		if tc.crossing {
			// On the traverse's line (north 0), at east -2 / tan(angle).
			if want := -2 / math.Tan(a); !(math.Abs(q[1]) < 1e-9 && math.Abs(q[0]-want) < 1e-9) {
				t.Errorf("%.0f degrees: point at E %.6f N %.6f, want E %.6f N 0", tc.deg, q[0], q[1], want)
			}
		} else if d := (q[0]*u[0] + q[1]*u[1]); !(math.Abs(d) < 1e-9) {
			t.Errorf("%.0f degrees: point at E %.6f N %.6f is not under the centroid (along-line offset %.3g)", tc.deg, q[0], q[1], d)
		}
	}
}
