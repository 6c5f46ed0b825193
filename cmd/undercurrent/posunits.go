package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/ingest"
)

// maxSurveySpeed is the fastest a survey's sensor plausibly moves, m/s:
// walked and carried surveys move at 0.5-2 m/s, towed and driven arrays
// and drones at up to about 25 m/s (90 km/h), so 60 m/s (216 km/h) is past
// any of them. Positions logged in millimetres or centimetres with no unit
// stated, read as metres, move a thousand or a hundred times faster: a
// walked traverse at 0.5 m/s reads 500 m/s in mm and 50-200 m/s in cm
// (the slowest cm cases stay under the bound and are not caught; feet,
// a factor 3.28, are not caught by speed at all).
const maxSurveySpeed = 60.0

// speedStride is the least time between the two readings a speed is taken
// over, s: a receiver that updates its position once a second under a
// magnetometer logging faster repeats positions and then jumps, so the
// speed is taken over a second or more.
const speedStride = 1.0

// medianSurveySpeed returns the median speed, m/s, of the sensor between
// readings at least speedStride apart within each group (the whole log
// when it has no group column), from the time column and the positions.
// ok is false when the log has no times or positions, or fewer than 10
// such strides. The median leaves out the jumps between traverses that
// a log with no turns in it makes, and the stops.
func medianSurveySpeed(s *ingest.Samples) (float64, bool) {
	if len(s.Time) == 0 || s.X == nil || s.Y == nil {
		return 0, false
	}
	var speeds []float64
	// The last reading a stride starts from, per group: sensors logged
	// interleaved (a cart's several sensors, one group each) each keep
	// their own.
	last := map[string]int{}
	for i := range s.Time {
		t := s.Time[i]
		if math.IsNaN(t) || math.IsNaN(s.X[i]) || math.IsNaN(s.Y[i]) {
			continue
		}
		g := ""
		if s.Group != nil {
			g = s.Group[i]
		}
		j, ok := last[g]
		if !ok {
			last[g] = i
			continue
		}
		dt := t - s.Time[j]
		if dt < 0 {
			last[g] = i // time running back: start again here
			continue
		}
		if dt < speedStride {
			continue
		}
		d := math.Hypot(s.X[i]-s.X[j], s.Y[i]-s.Y[j])
		if s.Z != nil && !math.IsNaN(s.Z[i]) && !math.IsNaN(s.Z[j]) {
			d = math.Hypot(d, s.Z[i]-s.Z[j])
		}
		speeds = append(speeds, d/dt)
		last[g] = i
	}
	if len(speeds) < 10 {
		return 0, false
	}
	sort.Float64s(speeds)
	n := len(speeds)
	if n%2 == 1 {
		return speeds[n/2], true
	}
	return (speeds[n/2-1] + speeds[n/2]) / 2, true
}

// positionUnitGiven says whether --unit gave a unit for a position column.
func (f *readFlags) positionUnitGiven() bool {
	for _, u := range append(append([]string(nil), f.units...), f.unitsOld...) {
		for _, p := range strings.Split(u, ",") {
			k, _, _ := strings.Cut(p, "=")
			switch strings.ToLower(strings.TrimSpace(k)) {
			case ingest.ColX, ingest.ColY, ingest.ColZ:
				return true
			}
		}
	}
	return false
}

// checkPositionSpeed warns when a log's positions, read as metres, move
// faster than any survey does (maxSurveySpeed): the sign of positions
// logged in millimetres or centimetres with no unit stated, which scale
// every depth, offset and chainage, and the currents with them, by that
// factor. Positions converted from latitude and longitude, or with a
// position unit given by --unit, are not questioned.
func checkPositionSpeed(path string, s *ingest.Samples, unitGiven bool) string {
	if unitGiven || s.Origin != nil {
		return ""
	}
	v, ok := medianSurveySpeed(s)
	if !ok || v <= maxSurveySpeed {
		return ""
	}
	return fmt.Sprintf("%s: the positions move at a median %.4g m/s between readings a second or more apart (by the time column, in seconds), faster than any walked, towed or driven survey (up to %g m/s): positions are read in metres unless a unit is stated, and every depth, offset and chainage (and the currents with them) scales with that unit. In millimetres the speed would be %.3g m/s, in centimetres %.3g m/s: if x, y and z are in mm or cm, give it with --unit x=mm,y=mm,z=mm (or cm)",
		path, v, maxSurveySpeed, v/1000, v/100)
}

// degreesSpan gathers the extent of the x, y of a survey's logs read as
// local metres (not from latitude and longitude columns), to tell
// longitude and latitude in degrees mapped to x and y.
type degreesSpan struct {
	first                  string // the first log looked at
	xmin, xmax, ymin, ymax float64
	n                      int
}

// add takes in the positions of log path.
func (d *degreesSpan) add(path string, s *ingest.Samples) {
	for i := range s.X {
		x, y := s.X[i], s.Y[i]
		if math.IsNaN(x) || math.IsNaN(y) {
			continue
		}
		if d.n == 0 {
			d.first, d.xmin, d.xmax, d.ymin, d.ymax = path, x, x, y, y
		}
		d.xmin, d.xmax = min(d.xmin, x), max(d.xmax, x)
		d.ymin, d.ymax = min(d.ymin, y), max(d.ymax, y)
		d.n++
	}
}

// check refuses a survey whose x, y look like longitude and latitude in
// degrees read as metres (ingest.DegreesLike, the test "undercurrent
// inspect" warns with): the whole survey inside 5 cm, fitted to a
// go-and-return pair of 737 million amperes in review, where inspect
// warned and locate said nothing. --unit for a position (unitGiven)
// says the positions are metres and lets them through. opts are the
// input options, to name the columns read as x and y.
func (d *degreesSpan) check(opts []ingest.Option, unitGiven bool) error {
	if d.n == 0 || unitGiven || !ingest.DegreesLike(d.xmin, d.xmax, d.ymin, d.ymax) {
		return nil
	}
	xs, ys := "NAME", "NAME"
	if r, err := ingest.Open(d.first, append(append([]ingest.Option(nil), opts...), ingest.WithOrigin(ingest.Geodetic{}))...); err == nil {
		for _, m := range ingest.Mappings(r) {
			switch m.Column {
			case ingest.ColX:
				xs = m.Source
			case ingest.ColY:
				ys = m.Source
			}
		}
		r.Release()
	}
	return fmt.Errorf("%s: x and y (columns %s and %s) span %.3g by %.3g and look like longitude and latitude in degrees, read as metres: the whole survey would lie within 5 cm and every current fitted would be millions of times off. Refused: map them as longitude and latitude, --column lon=%s,lat=%s in place of x=%s,y=%s; if they really are metres, give their unit with --unit x=m,y=m",
		d.first, xs, ys, d.xmax-d.xmin, d.ymax-d.ymin, xs, ys, xs, ys)
}
