package main

import (
	"math"

	"undercurrent/ingest"
)

// turnMount turns the readings of s back by a mount turn: the field as
// read is turned deg degrees anticlockwise seen from above (a
// magnetometer turned on its pole or mount), so it is turned deg
// clockwise. In east, north, up that is a turn by -deg about up; in the
// sensor's own axes (x forward, y right, z down: calibrate.EulerToENU) a
// turn by +deg about z, the mount's own axis, before the attitude turns
// the readings to east, north, up.
func turnMount(s *ingest.Samples, deg float64) {
	a := -deg * math.Pi / 180
	if s.Frame == ingest.FrameSensor {
		a = -a
	}
	sn, cs := math.Sincos(a)
	for i := range s.Bx {
		x, y := s.Bx[i], s.By[i]
		s.Bx[i], s.By[i] = cs*x-sn*y, sn*x+cs*y
	}
}
