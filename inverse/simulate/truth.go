package simulate

import "math"

// Crossing is where a survey line passes over a line or polyline conductor:
// the ground truth that a fit of that line's readings should recover.
type Crossing struct {
	// Line is the survey line's key ("T07").
	Line string
	// Conductor is the index of the conductor in Scenario.Conductors.
	Conductor int
	// Point is the point of the conductor under the survey line, m ENU.
	Point [3]float64
	// Dir is the unit direction of current flow there.
	Dir [3]float64
	// Current is the current there, A (RMS for AC), along Dir, at Time:
	// current_after_a once a change of current (change_at_s) has happened
	// by then, current_a (or the segment's currents_a) before it.
	Current float64
	// Time is when the sensor passes over the crossing, s after the first
	// reading (the clock of change_at_s): the time of the survey line's
	// first reading plus Along over the walking speed. The readings on
	// either side of the crossing are taken from half a sample interval
	// before to after it, so a change of current within the line's walk
	// leaves the readings before the change at the old current.
	Time float64
	// Frequency is the AC frequency, Hz (0 for DC), and Phase the phase at
	// Unix time zero, degrees.
	Frequency, Phase float64
	// Harmonics are the conductor's further tones (Conductor.Harmonics),
	// the same in every segment.
	Harmonics []Tone
	// Depth is the conductor's depth below the ground (up = 0), m.
	Depth float64
	// Along is the distance along the survey line from its start, m.
	Along float64
}

// Crossings lists, line by line in walking order, where each survey line
// crosses a line or polyline conductor in plan view. Dipoles have no
// crossing; a conductor running along a survey line (parallel in plan) has
// none either, nor has a vertical conductor or polyline segment (an earth
// rod: a point in plan, whose top is the crossing of the segment that
// reaches it), and nor does a sensor standing still (a spin, a fixed
// sensor).
func (sc *Scenario) Crossings() []Crossing {
	var out []Crossing
	spans, _ := sc.spans()
	for li, l := range sc.lines {
		if l.Length() == 0 {
			continue
		}
		t0 := spans[li].t0 - sc.start
		for ci, c := range sc.Conductors {
			switch c.Kind {
			case "line":
				d := *c.Direction
				n := norm(d)
				u := [3]float64{d[0] / n, d[1] / n, d[2] / n}
				p := *c.Point
				s, t, ok := planIntersect(l.From, l.To, [2]float64{p[0], p[1]}, [2]float64{p[0] + u[0], p[1] + u[1]})
				if !ok || s < 0 || s > 1 {
					continue
				}
				pt := [3]float64{p[0] + t*u[0], p[1] + t*u[1], p[2] + t*u[2]}
				out = append(out, sc.crossing(l, t0, ci, c, s, pt, u, c.Current))
			case "polyline":
				cur := c.segmentCurrents()
				const eps = 1e-9
				var prev *[3]float64
				for j := 0; j+1 < len(c.Vertices); j++ {
					a, b := c.Vertices[j], c.Vertices[j+1]
					s, t, ok := planIntersect(l.From, l.To, [2]float64{a[0], a[1]}, [2]float64{b[0], b[1]})
					if !ok || s < -eps || s > 1+eps || t < -eps || t > 1+eps {
						continue
					}
					d := [3]float64{b[0] - a[0], b[1] - a[1], b[2] - a[2]}
					pt := [3]float64{a[0] + t*d[0], a[1] + t*d[1], a[2] + t*d[2]}
					// A line through a vertex meets both segments there:
					// keep the crossing once, with the current downstream.
					if prev != nil && norm([3]float64{pt[0] - prev[0], pt[1] - prev[1], pt[2] - prev[2]}) < 1e-6 {
						out = out[:len(out)-1]
					}
					n := norm(d)
					u := [3]float64{d[0] / n, d[1] / n, d[2] / n}
					out = append(out, sc.crossing(l, t0, ci, c, s, pt, u, cur[j]))
					prev = &pt
				}
			}
		}
	}
	return out
}

// crossing is the crossing of conductor ci (c) by survey line l, whose
// first reading is at t0 s after the survey's first, at fraction s of
// l's length; current is the conductor's current there before any change
// of current.
func (sc *Scenario) crossing(l Line, t0 float64, ci int, c Conductor, s float64, pt, u [3]float64, current float64) Crossing {
	along := s * l.Length()
	at := t0 + along/sc.speed()
	// As the readings take it (source.at): the current after the change
	// from change_at_s on.
	if c.ChangeAt != nil && at >= *c.ChangeAt {
		current = *c.CurrentAfter
	}
	return Crossing{
		Line:      l.Key,
		Conductor: ci,
		Point:     pt,
		Dir:       u,
		Current:   current,
		Frequency: c.Frequency,
		Phase:     c.Phase,
		Harmonics: c.Harmonics,
		Depth:     -pt[2],
		Along:     along,
		Time:      at,
	}
}

// planIntersect intersects segment p0->p1 with the line q0->q1 in the plane:
// the point is p0 + s (p1 - p0) = q0 + t (q1 - q0). ok is false for
// parallel lines and when either has no length in plan (a vertical
// segment), where s and t are not defined.
func planIntersect(p0, p1, q0, q1 [2]float64) (s, t float64, ok bool) {
	r := [2]float64{p1[0] - p0[0], p1[1] - p0[1]}
	q := [2]float64{q1[0] - q0[0], q1[1] - q0[1]}
	den := r[0]*q[1] - r[1]*q[0]
	if math.Abs(den) <= 1e-12*math.Hypot(r[0], r[1])*math.Hypot(q[0], q[1]) {
		return 0, 0, false
	}
	w := [2]float64{q0[0] - p0[0], q0[1] - p0[1]}
	s = (w[0]*q[1] - w[1]*q[0]) / den
	t = (w[0]*r[1] - w[1]*r[0]) / den
	return s, t, true
}
