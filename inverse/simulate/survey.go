package simulate

import (
	"fmt"
	"math"
	"strconv"
)

// Line is one planned survey line, a traverse or a grid line, as walked.
type Line struct {
	// Key is the value written in the group column for its readings
	// ("T01", "T02", ... for traverses; "L01", ... for grid lines).
	Key string
	// From and To are the plan positions (east, north) of its start and
	// end, in walking order, m.
	From, To [2]float64
	// Chainage is, for a traverse, the distance along the route to where
	// it crosses the route, m; for a grid line, its distance across the
	// grid from the first line.
	Chainage float64
}

// Length is the line's length, m.
func (l Line) Length() float64 { return math.Hypot(l.To[0]-l.From[0], l.To[1]-l.From[1]) }

// samples is the number of readings on the line at spacing ds.
// The count is worked out in float64 and saturates at MaxRows+1, so that
// a line too long for the guard in Validate cannot overflow the int
// conversion into a negative count that passes the guard.
func (l Line) samples(ds float64) int {
	n := math.Floor(l.Length()/ds+1e-9) + 1
	if !(n <= MaxRows) {
		return MaxRows + 1
	}
	return int(n)
}

// lineSamples is the number of readings on survey line l.
func (sc *Scenario) lineSamples(l Line) int {
	switch sc.Survey.Pattern {
	case "spin":
		return sc.spinRows()
	case "fixed":
		return sc.fixedRows()
	}
	return l.samples(sc.speed() / sc.rate())
}

// Lines returns the survey lines in walking order. The scenario must have
// been checked (Load, Parse or Validate).
func (sc *Scenario) Lines() []Line { return append([]Line(nil), sc.lines...) }

// planLines lays out the survey.
func (sc *Scenario) planLines() ([]Line, error) {
	sv := &sc.Survey
	zig := sv.Zigzag == nil || *sv.Zigzag
	var lines []Line
	switch sv.Pattern {
	case "", "traverses":
		var err error
		if lines, err = sc.traverses(); err != nil {
			return nil, err
		}
	case "grid":
		var err error
		if lines, err = sc.grid(); err != nil {
			return nil, err
		}
	case "spin":
		return sc.spinLine()
	case "fixed":
		return sc.fixedLines()
	default:
		return nil, sc.errAt("survey", 0, "pattern", "unknown pattern %q: want \"traverses\", \"grid\", \"spin\" or \"fixed\"", sv.Pattern)
	}
	if zig {
		for i := 1; i < len(lines); i += 2 {
			lines[i].From, lines[i].To = lines[i].To, lines[i].From
		}
	}
	return lines, nil
}

func lineKey(prefix string, i, n int) string {
	w := len(strconv.Itoa(n))
	if w < 2 {
		w = 2
	}
	return fmt.Sprintf("%s%0*d", prefix, w, i+1)
}

// traverses lays traverses across the route, each perpendicular to the
// route where it crosses it and centred on it.
func (sc *Scenario) traverses() ([]Line, error) {
	sv := &sc.Survey
	if sv.Count < 1 || sv.Count > maxLines {
		return nil, sc.errAt("survey", 0, "count", "count %d traverses must be in 1..%d", sv.Count, maxLines)
	}
	if !finite(sv.Spacing, sv.FirstAt, sv.Length) || sv.Length <= 0 {
		return nil, sc.errAt("survey", 0, "length_m", "traverse length %g m must be > 0", sv.Length)
	}
	if ds := sc.speed() / sc.rate(); !(sv.Length/ds <= MaxRows) {
		return nil, sc.errAt("survey", 0, "length_m", "a traverse of %g m, at %g m between readings, would log more than %d readings: shorten it (a survey traverse is some metres to a few kilometres)", sv.Length, ds, MaxRows)
	}
	if sv.Count > 1 && !(sv.Spacing > 0) {
		return nil, sc.errAt("survey", 0, "spacing_m", "spacing %g m between traverses must be > 0", sv.Spacing)
	}
	if sv.FirstAt < 0 {
		return nil, sc.errAt("survey", 0, "first_at_m", "first_at_m %g must be >= 0", sv.FirstAt)
	}
	last := sv.FirstAt + float64(sv.Count-1)*sv.Spacing
	route := sv.Route
	if len(route) == 0 {
		var err error
		if route, err = sc.defaultRoute(last); err != nil {
			return nil, err
		}
	}
	if len(route) < 2 {
		return nil, sc.errAt("survey", 0, "route", "a route needs at least 2 points, has %d", len(route))
	}
	cum := make([]float64, len(route))
	for i := 1; i < len(route); i++ {
		if !finite(route[i][:]...) || !finite(route[i-1][:]...) {
			return nil, sc.errAt("survey", 0, "route", "route point %d is not finite", i+1)
		}
		d := math.Hypot(route[i][0]-route[i-1][0], route[i][1]-route[i-1][1])
		if d == 0 {
			return nil, sc.errAt("survey", 0, "route", "route points %d and %d coincide", i, i+1)
		}
		cum[i] = cum[i-1] + d
	}
	total := cum[len(cum)-1]
	if last > total*(1+1e-9) {
		return nil, sc.errAt("survey", 0, "count", "the last traverse, at chainage %.6g m, lies beyond the end of the route (%.6g m long)", last, total)
	}
	lines := make([]Line, sv.Count)
	seg := 0
	for i := range lines {
		s := sv.FirstAt + float64(i)*sv.Spacing
		for seg < len(route)-2 && s > cum[seg+1] {
			seg++
		}
		a, b := route[seg], route[seg+1]
		l := cum[seg+1] - cum[seg]
		t := [2]float64{(b[0] - a[0]) / l, (b[1] - a[1]) / l}
		f := (s - cum[seg]) / l
		c := [2]float64{a[0] + f*(b[0]-a[0]), a[1] + f*(b[1]-a[1])}
		// Traverses run from the left of the route to its right, as seen
		// looking along the route.
		n := [2]float64{-t[1], t[0]}
		h := sv.Length / 2
		lines[i] = Line{
			Key:      lineKey("T", i, sv.Count),
			From:     [2]float64{c[0] + h*n[0], c[1] + h*n[1]},
			To:       [2]float64{c[0] - h*n[0], c[1] - h*n[1]},
			Chainage: s,
		}
	}
	return lines, nil
}

// defaultRoute is the plan view of the first line or polyline conductor,
// long enough to reach chainage last.
func (sc *Scenario) defaultRoute(last float64) ([][2]float64, error) {
	for _, c := range sc.Conductors {
		switch c.Kind {
		case "polyline":
			var r [][2]float64
			for _, v := range c.Vertices {
				p := [2]float64{v[0], v[1]}
				if len(r) > 0 && r[len(r)-1] == p {
					continue
				}
				r = append(r, p)
			}
			if len(r) >= 2 {
				return r, nil
			}
		case "line":
			d := *c.Direction
			h := math.Hypot(d[0], d[1])
			if h == 0 {
				continue
			}
			p := *c.Point
			end := last + 1
			return [][2]float64{{p[0], p[1]}, {p[0] + end*d[0]/h, p[1] + end*d[1]/h}}, nil
		}
	}
	return nil, sc.errAt("survey", 0, "route", "no route given and no line or polyline conductor with a horizontal run to take it from")
}

// grid lays parallel lines over a rectangle.
func (sc *Scenario) grid() ([]Line, error) {
	sv := &sc.Survey
	if !finite(sv.Corner[:]...) || !finite(sv.Size[:]...) || !finite(sv.Azimuth, sv.LineSpacing) {
		return nil, sc.errAt("survey", 0, "size_m", "grid corner, size, azimuth and line spacing must be finite")
	}
	if sv.Size[0] <= 0 || sv.Size[1] < 0 {
		return nil, sc.errAt("survey", 0, "size_m", "grid size %v m must be > 0 along the lines and >= 0 across", sv.Size)
	}
	if !(sv.LineSpacing > 0) {
		return nil, sc.errAt("survey", 0, "line_spacing_m", "line spacing %g m must be > 0", sv.LineSpacing)
	}
	// Counted in float64: a huge size overflowed the int conversion.
	nf := math.Floor(sv.Size[1]/sv.LineSpacing+1e-9) + 1
	if !(nf <= maxLines) {
		return nil, sc.errAt("survey", 0, "line_spacing_m", "the grid would have %.6g lines, more than %d", nf, maxLines)
	}
	n := int(nf)
	if ds := sc.speed() / sc.rate(); !(sv.Size[0]/ds <= MaxRows) {
		return nil, sc.errAt("survey", 0, "size_m", "a grid line of %g m, at %g m between readings, would log more than %d readings: make the grid smaller", sv.Size[0], ds, MaxRows)
	}
	az := sv.Azimuth * math.Pi / 180
	u := [2]float64{math.Sin(az), math.Cos(az)}  // along the lines
	v := [2]float64{math.Cos(az), -math.Sin(az)} // to their right
	lines := make([]Line, n)
	for k := range lines {
		off := float64(k) * sv.LineSpacing
		a := [2]float64{sv.Corner[0] + off*v[0], sv.Corner[1] + off*v[1]}
		lines[k] = Line{
			Key:      lineKey("L", k, n),
			From:     a,
			To:       [2]float64{a[0] + sv.Size[0]*u[0], a[1] + sv.Size[0]*u[1]},
			Chainage: off,
		}
	}
	return lines, nil
}
