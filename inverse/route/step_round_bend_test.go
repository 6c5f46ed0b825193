package route

import (
	"math"
	"testing"
)

// bentMain is a fixture of the stations of an invented pipeline, the
// Gorsey Bank main: it runs east along y = 0 to a vertex at (230, 0) and
// turns 28 degrees left there; traverses every 50 m of chainage along it
// (so the vertex lies 30 m after the station at 200 m and 20 m before the
// one at 250 m), each fit placing the pipe exactly on its leg, 1.5 m deep.
// 2 A flows to a coating defect between those two stations that takes
// 0.3 A; the fits' currents carry a small deterministic scatter (a few
// milliamperes, under their 5 mA sigmas).
func bentMain() (st []Station, legs [][2]float64) {
	turn := 28 * math.Pi / 180
	vertex := [2]float64{230, 0}
	at := func(c float64) ([3]float64, [3]float64) {
		if c <= vertex[0] {
			return [3]float64{c, 0, -1.5}, [3]float64{1, 0, 0}
		}
		s := c - vertex[0]
		return [3]float64{vertex[0] + s*math.Cos(turn), s * math.Sin(turn), -1.5}, [3]float64{math.Cos(turn), math.Sin(turn), 0}
	}
	for k := range 11 {
		c := 50 * float64(k)
		p, d := at(c)
		cur := 2.0
		if c > 230 {
			cur = 1.7
		}
		cur += 0.003 * math.Sin(1.7*float64(k))
		st = append(st, Station{Key: key(k + 1), Point: p, Dir: d, Current: cur, CurrentSigma: 0.005,
			Depth: 1.5, DepthSigma: 0.002, OK: true})
	}
	end, _ := at(500)
	legs = [][2]float64{{0, 0}, vertex, {end[0], end[1]}}
	return st, legs
}

// distanceToPolyline is the plan distance, m, from p to the polyline v.
func distanceToPolyline(p [3]float64, v [][2]float64) float64 {
	best := math.Inf(1)
	for i := 0; i+1 < len(v); i++ {
		a, b := v[i], v[i+1]
		dx, dy := b[0]-a[0], b[1]-a[1]
		u := math.Min(math.Max(((p[0]-a[0])*dx+(p[1]-a[1])*dy)/(dx*dx+dy*dy), 0), 1)
		best = math.Min(best, math.Hypot(a[0]+u*dx-p[0], a[1]+u*dy-p[1]))
	}
	return best
}

// TestStepRoundBendOnPipe: a step bracketed by two stations either side of
// a bend is placed on the conductor drawn through their fitted lines, not
// on the chord between their points. The chord's midpoint here lies 4.7 m
// off the pipe (simple geometry of the fixture: the second station 20 m
// up a leg turned 28 degrees, so 20 sin 28 = 9.4 m off the first leg, and
// the midpoint half that); midway along the two legs, 25 m after the
// first station, lies on the pipe.
func TestStepRoundBendOnPipe(t *testing.T) {
	st, legs := bentMain()
	r, err := Build(st, &Settings{})
	if err != nil {
		t.Fatal(err)
	}
	fs := findings(r, KindCurrentStep)
	if len(fs) == 0 {
		t.Fatalf("no step found for the 0.3 A defect; findings: %+v", r.Findings)
	}
	for _, f := range fs {
		if !(f.From < 230 && f.To > 230) {
			t.Errorf("step between chainage %.1f and %.1f m, want it bracketing the defect past the vertex: %s", f.From, f.To, f.Message)
		}
		if d := distanceToPolyline(f.Position, legs); d > 0.5 {
			t.Errorf("step placed at (%.2f, %.2f), %.2f m off the pipe, want within 0.5 m: %s", f.Position[0], f.Position[1], d, f.Message)
		}
	}
}
