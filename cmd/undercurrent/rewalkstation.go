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

// middle returns the middle, m along l from its centre, of the extent
// of the plan positions xy along the line l; NaN without positions.
func (l runLine) middle(xy [][2]float64) float64 {
	if len(xy) == 0 {
		return math.NaN()
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, q := range xy {
		u := (q[0]-l.cx)*l.ux + (q[1]-l.cy)*l.uy
		lo, hi = math.Min(lo, u), math.Max(hi, u)
	}
	return 0.5 * (lo + hi)
}

// rewalkStation tells whether the run p of the group value v of the log s
// lies at the station of the walk w (whose readings are first): within
// the limit across w's line (see above). It returns whether it does, the
// run's distance across the line, m, and the traverse spacing, m (zero
// when the log holds no other traverse across the line); first holds the
// log's rows of each group value's first walk (its readings before its
// first pause). The spacing is the first walks' own: with every group's
// readings pooled, a day walked again in the log 0.6 m on from the first
// put the "nearest other traverse" 1.7 m across a line 2 m from the next
// (found in review).
func rewalkStation(w, p *logPart, s *ingest.Samples, first map[string][]int, v string) (at bool, off, spacing float64) {
	l := runLineOf(w.xy)
	off = math.Abs(l.across(p.xy))
	for u, idx := range first {
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

// A day walked again with a position offset.
//
// A whole day walked again in one log with an uncorrected GNSS offset
// between the days (commonly 0.5-2 m) puts every later walk the same
// distance across its first walk's line: 0.6 m on traverses 2 m apart, more
// than a quarter of the spacing, so each was fitted apart as a mislabel,
// VALUE (line 2), with one warning per traverse saying two traverses were
// given one name (found in review). No mislabel gives that: the crew
// naming a traverse after its neighbour puts one run a spacing over, not
// every traverse of a session shifted alike. rewalkOffset finds such a
// set: at least rewalkOffsetMinGroups groups whose first runs after a
// pause covering their first walk's ground again all begin after one
// pause (each after every first walk of the set ended) and lie off their
// first walks' lines by one shift (the plan vectors across the lines
// within rewalkOffsetTolM of their mean), of at most rewalkOffsetMaxM.
// Those runs are walks again, and the warning names the shift once. A lone
// run a spacing over stays a mislabel.
const (
	// rewalkOffsetMinGroups: the fewest groups shifted alike that make a
	// day walked again with an offset (two could be two mislabels).
	rewalkOffsetMinGroups = 3
	// rewalkOffsetTolM: how far, m, a group's shift may lie from the
	// set's mean shift (a GNSS offset between days holds to a few
	// centimetres over a session; a run's median across its line scatters
	// by a centimetre or two).
	rewalkOffsetTolM = 0.15
	// rewalkOffsetMaxM: the largest common shift, m, taken for a position
	// offset between walks (an uncorrected GNSS offset between days is
	// commonly 0.5-2 m); a session shifted further (a whole set named one
	// traverse over at a spacing of metres) stays a set of mislabels.
	rewalkOffsetMaxM = 2.5
)

// pauseRuns cuts the rows idx (in time order) of a group at pauses over
// reusedApartS between successive readings of the times t.
func pauseRuns(idx []int, t []float64) [][]int {
	var runs [][]int
	start := 0
	for j := 1; j <= len(idx); j++ {
		if j == len(idx) || t[idx[j]]-t[idx[j-1]] > reusedApartS {
			runs = append(runs, idx[start:j])
			start = j
		}
	}
	return runs
}

// runPart is the logPart of the log k holding the rows r of s.
func runPart(s *ingest.Samples, k int, r []int) *logPart {
	p := &logPart{log: k, span: newReadingSpan()}
	for _, i := range r {
		p.span.add(s.X[i], s.Y[i], s.Time[i])
		p.xy = append(p.xy, [2]float64{s.X[i], s.Y[i]})
	}
	return p
}

// rewalkOffset finds, in the log s (its rows of each group value in rows,
// the values in order), a set of later runs shifted alike off their first
// walks (see above). It returns, for each group of the set, the index of
// its run (among the group's runs cut at pauses) that walks it again, and
// the common shift, m: nil and zero without such a set, or when every run
// of the set lies at its station anyway.
func rewalkOffset(s *ingest.Samples, k int, rows map[string][]int, order []string, first map[string][]int) (map[string]int, float64) {
	type cand struct {
		v          string
		j          int
		dx, dy     float64 // the shift across the first walk's line, m
		end, start float64 // the first walk's last reading, the run's first
		at         bool    // at the station by the quarter-spacing rule
	}
	var cs []cand
	for _, v := range order {
		runs := pauseRuns(rows[v], s.Time)
		if len(runs) < 2 {
			continue
		}
		w := runPart(s, k, runs[0])
		l := runLineOf(w.xy)
		for j := 1; j < len(runs); j++ {
			p := runPart(s, k, runs[j])
			if len(runs[j]) < rewalkMinReadings || math.Hypot(p.span.maxX-p.span.minX, p.span.maxY-p.span.minY) < rewalkMinLengthM || together(w, p) {
				continue
			}
			if d, _ := w.span.apart(p.span); d > reusedApartM {
				continue
			}
			a := l.across(p.xy)
			at, _, _ := rewalkStation(w, p, s, first, v)
			cs = append(cs, cand{v: v, j: j, dx: -a * l.uy, dy: a * l.ux,
				end: s.Time[runs[0][len(runs[0])-1]], start: s.Time[runs[j][0]], at: at})
			break
		}
	}
	var best []cand
	var mx, my float64
	for _, c := range cs {
		// The runs shifted like c, then those shifted like their mean.
		in := func(x, y float64) []cand {
			var m []cand
			for _, o := range cs {
				if math.Hypot(o.dx-x, o.dy-y) <= rewalkOffsetTolM {
					m = append(m, o)
				}
			}
			return m
		}
		m := in(c.dx, c.dy)
		var sx, sy float64
		for _, o := range m {
			sx, sy = sx+o.dx, sy+o.dy
		}
		sx, sy = sx/float64(len(m)), sy/float64(len(m))
		if m2 := in(sx, sy); len(m2) >= len(m) {
			m = m2
		}
		if len(m) > len(best) {
			best, mx, my = m, sx, sy
		}
	}
	if len(best) < rewalkOffsetMinGroups || math.Hypot(mx, my) > rewalkOffsetMaxM {
		return nil, 0
	}
	end, start := math.Inf(-1), math.Inf(1)
	beside := false
	var sx, sy float64
	for _, c := range best {
		end, start = math.Max(end, c.end), math.Min(start, c.start)
		beside = beside || !c.at
		sx, sy = sx+c.dx, sy+c.dy
	}
	if start <= end || !beside {
		return nil, 0
	}
	runOf := map[string]int{}
	for _, c := range best {
		runOf[c.v] = c.j
	}
	return runOf, math.Hypot(sx, sy) / float64(len(best))
}

// rewalkLineName names the line n (from 2) of the group value v: a
// traverse beside v's given v's name.
func rewalkLineName(v string, n int) string { return fmt.Sprintf("%s (line %d)", v, n) }

// mislabel is a run of the group value v that lies beside its first walk
// (off m across its line, the traverse spacing spacing m, zero when
// unknown) after a pause of pause s, from the time t, fitted apart as
// name.
type mislabel struct {
	v, name                 string
	off, spacing, pause, at float64
}

// mislabelWarning is the one warning for the runs ms of the log path that
// lie beside their first walks: for one, its group, pause, distances and
// new name; for several, the groups (as listNames gives them), the ranges
// of the pauses, distances and spacings, and the first new name. A log
// with eleven such runs had drawn eleven warnings of some 530 characters
// each (found in review), as re-walks had before rewalkWarning gathered
// them. Empty without runs.
func mislabelWarning(path string, ms []mislabel) string {
	switch len(ms) {
	case 0:
		return ""
	case 1:
		m := ms[0]
		from := ""
		if calendarTime(m.at) {
			from = " (from " + fmtBaseTime(m.at) + ")"
		}
		near := ""
		if m.spacing > 0 {
			near = fmt.Sprintf(", where the nearest other traverse lies %.1f m across it", m.spacing)
		}
		return fmt.Sprintf("%s: the group %s's readings lie in separate places side by side: the ones after a pause of %s%s lie %.1f m across the line of the ones before%s, so they cross the conductor at another station and are not the traverse walked again (which lies on its line). Most likely two traverses were given one name (a mislabel): the later is fitted as a traverse of its own, named %s; relabel them apart (%s)",
			path, m.v, rangeText(m.pause, m.pause, "s"), from, m.off, near, m.name, m.v)
	}
	var values []string
	pLo, pHi := math.Inf(1), math.Inf(-1)
	oLo, oHi := math.Inf(1), math.Inf(-1)
	sLo, sHi := math.Inf(1), math.Inf(-1)
	for _, m := range ms {
		values = append(values, m.v)
		pLo, pHi = math.Min(pLo, m.pause), math.Max(pHi, m.pause)
		oLo, oHi = math.Min(oLo, m.off), math.Max(oHi, m.off)
		if m.spacing > 0 {
			sLo, sHi = math.Min(sLo, m.spacing), math.Max(sHi, m.spacing)
		}
	}
	near := ""
	if sHi > 0 {
		near = fmt.Sprintf(", where the nearest other traverses lie %s across them", rangeText(sLo, sHi, "m"))
	}
	return fmt.Sprintf("%s: the groups %s each have readings in separate places side by side: the ones after pauses of %s lie %s across the lines of the ones before%s, so they cross the conductor at other stations and are not the traverses walked again (which lie on their lines). Most likely two traverses were given one name each time (mislabels): each later one is fitted as a traverse of its own, named %s (and so on); relabel them apart",
		path, listNames(values), rangeText(pLo, pHi, "s"), rangeText(oLo, oHi, "m"), near, ms[0].name)
}
