package route

import "math"

// legPoint returns the point a fraction f (0 at a, 1 at b) of the way from
// station a to station b along the conductor drawn through their fitted
// lines: where the two lines turn by bendTurn degrees or more in plan and
// meet ahead of a and behind b, at a vertex V, the path runs along a's line
// to V and on along b's line to b (as cornerChainage measures chainage
// round a bend); elsewhere it is the straight chord. Its height runs
// evenly along the path. A step bracketed across a 28 degree bend of a
// pipeline, 48 m between the stations, was placed at the chord's midpoint,
// 5.7 m off the pipe (found in review); a crew walking to that point digs
// beside the pipe.
func legPoint(a, b *Placed, f float64) [3]float64 {
	f = math.Min(math.Max(f, 0), 1)
	chord := func() [3]float64 {
		var p [3]float64
		for i := range p {
			p[i] = a.Point[i] + f*(b.Point[i]-a.Point[i])
		}
		return p
	}
	da, okA := horizUnit(a.Dir)
	db, okB := horizUnit(b.Dir)
	if !okA || !okB {
		return chord()
	}
	dx, dy := b.Point[0]-a.Point[0], b.Point[1]-a.Point[1]
	det := da[0]*db[1] - da[1]*db[0]
	if math.Abs(det) < math.Sin(bendTurn*math.Pi/180) {
		return chord()
	}
	s := (dx*db[1] - dy*db[0]) / det
	t := (da[0]*dy - da[1]*dx) / det
	// The legs meet between the stations, and not far off the chord (two
	// lines offset across it, turned a little, meet far away: not a bend).
	if !(s > 0) || !(t > 0) || s+t > maxLegDetour*math.Hypot(dx, dy) {
		return chord()
	}
	u := f * (s + t)
	z := a.Point[2] + f*(b.Point[2]-a.Point[2])
	if u <= s {
		return [3]float64{a.Point[0] + u*da[0], a.Point[1] + u*da[1], z}
	}
	w := s + t - u
	return [3]float64{b.Point[0] - w*db[0], b.Point[1] - w*db[1], z}
}

// maxLegDetour bounds the length of the two legs of legPoint against the
// chord between the stations: a 90 degree corner midway between them makes
// them 1.41 times the chord.
const maxLegDetour = 1.5
