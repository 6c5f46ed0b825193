package main

import (
	"fmt"
	"math"
	"sort"

	"undercurrent/ingest"
)

// Where a group's readings after a pause lie: at its first walk's
// station, or beside it.
//
// splitRewalkedGroups took a run of a group's readings after a pause for
// the traverse walked again whenever its extent lay within reusedApartM
// of the first walk's. The next traverse, 4 m on along the conductor and
// walked a minute later under the same name (the crew forgot to change
// it), was so named "T04 (walk 2)", said to lie at T04's station and be
// compared with it, and the mislabel warning was lost; walked at another
// current, it drew a "current joining" step between T04 and its own walk
// (found in review). Two walks of one traverse cross the conductor at one
// station: the later walk's readings lie on the first walk's line.
// sameGround does not tell: it compares extents along the two walks'
// common axis, which two parallel traverses share. A run after a pause is
// a walk again only where its readings lie, across the first walk's line
// (the median of their signed distances from it), within
// rewalkStationFrac of the distance to the log's nearest other traverse
// across that line (the traverse spacing). One further off is another
// traverse given the same name: fitted apart, as VALUE (line N), with a
// warning that names the mislabel.
const (
	// rewalkStationFrac: a walk again lies within this share of the
	// traverse spacing across the first walk's line, well inside half the
	// spacing (half way to the next traverse). Two walks of one traverse
	// lie within a GNSS position's scatter of each other.
	rewalkStationFrac = 0.25
	// rewalkStationMinM: the least distance across the line, m, that
	// tells another traverse from a walk again (a GNSS position's scatter
	// is a few decimetres); other groups closer than this across the line
	// (a traverse's other half under another name) set no spacing.
	rewalkStationMinM = 0.5
	// rewalkStationM: the distance across the line, m, within which a run
	// is a walk again when the log holds no other traverse to set the
	// spacing.
	rewalkStationM = 1.0
)

// runLine is the line a walk's readings follow in plan: their centroid
// and the unit direction of their principal axis.
type runLine struct{ cx, cy, ux, uy float64 }

// runLineOf returns the line the plan positions xy follow.
func runLineOf(xy [][2]float64) runLine {
	var l runLine
	if len(xy) == 0 {
		return runLine{ux: 1}
	}
	for _, q := range xy {
		l.cx, l.cy = l.cx+q[0], l.cy+q[1]
	}
	l.cx, l.cy = l.cx/float64(len(xy)), l.cy/float64(len(xy))
	var sxx, syy, sxy float64
	for _, q := range xy {
		dx, dy := q[0]-l.cx, q[1]-l.cy
		sxx, syy, sxy = sxx+dx*dx, syy+dy*dy, sxy+dx*dy
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	l.ux, l.uy = math.Cos(th), math.Sin(th)
	return l
}

// across returns the median of the signed distances, m, of the plan
// positions xy from the line l (positive to its left); NaN without
// positions.
func (l runLine) across(xy [][2]float64) float64 {
	if len(xy) == 0 {
		return math.NaN()
	}
	d := make([]float64, len(xy))
	for i, q := range xy {
		d[i] = -(q[0]-l.cx)*l.uy + (q[1]-l.cy)*l.ux
	}
	sort.Float64s(d)
	if n := len(d); n%2 == 0 {
		return 0.5 * (d[n/2-1] + d[n/2])
	}
	return d[len(d)/2]
}

// rewalkStation tells whether the run p of the group value v of the log s
// lies at the station of the walk w (whose readings are first): within
// the limit across w's line (see above). It returns whether it does, the
// run's distance across the line, m, and the traverse spacing, m (zero
// when the log holds no other traverse across the line); rows holds the
// log's rows of each group value.
func rewalkStation(w, p *logPart, s *ingest.Samples, rows map[string][]int, v string) (at bool, off, spacing float64) {
	l := runLineOf(w.xy)
	off = math.Abs(l.across(p.xy))
	for u, idx := range rows {
		if u == v || len(idx) < rewalkMinReadings {
			continue
		}
		xy := make([][2]float64, len(idx))
		for j, i := range idx {
			xy[j] = [2]float64{s.X[i], s.Y[i]}
		}
		if d := math.Abs(l.across(xy)); d > rewalkStationMinM && (spacing == 0 || d < spacing) {
			spacing = d
		}
	}
	limit := rewalkStationM
	if spacing > 0 {
		limit = math.Max(rewalkStationMinM, rewalkStationFrac*spacing)
	}
	return off <= limit, off, spacing
}

// rewalkLineName names the line n (from 2) of the group value v: a
// traverse beside v's given v's name.
func rewalkLineName(v string, n int) string { return fmt.Sprintf("%s (line %d)", v, n) }

// mislabelWarning is the warning for the run of the group value v of the
// log path that lies beside its first walk (off m across its line, the
// traverse spacing spacing m, zero when unknown) after a pause of pause
// s, from the time t, fitted apart as name.
func mislabelWarning(path, v, name string, off, spacing, pause, t float64) string {
	from := ""
	if calendarTime(t) {
		from = " (from " + fmtBaseTime(t) + ")"
	}
	near := ""
	if spacing > 0 {
		near = fmt.Sprintf(", where the nearest other traverse lies %.1f m across it", spacing)
	}
	return fmt.Sprintf("%s: the group %s's readings lie in separate places side by side: the ones after a pause of %s%s lie %.1f m across the line of the ones before%s, so they cross the conductor at another station and are not the traverse walked again (which lies on its line). Most likely two traverses were given one name (a mislabel): the later is fitted as a traverse of its own, named %s; relabel them apart (%s)",
		path, v, rangeText(pause, pause, "s"), from, off, near, name, v)
}
