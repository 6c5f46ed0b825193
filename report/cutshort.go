package report

import (
	"fmt"
	"math"
	"slices"

	"undercurrent/inverse/route"
)

// A log cut short in the middle of a traverse (the logger stopped, a file
// copied before it was closed) leaves that traverse's readings ending on
// the way to a conductor, or just over it. Its fit still converged, and
// was called sound: a line placed beyond the readings' end from one flank
// of its field, its current read off that flank, which set a level of the
// current profile and drove a current-step finding on the last pair of
// traverses (the demo with its last traverse cut to 30-60 % of its
// readings: "conductor 2: current leaves the conductor between T30 and
// T31", 0.37 to 2.5 A; found in review).
//
// cutShortProblems names the fits whose readings end before they cross a
// line: the fit's readings cover much less ground than the other fits'
// (under cutShortShare of their median extent along their own track),
// and the readings stop short of one depth past a fitted line's crossing
// on either side. The field of a line crossing a traverse at depth d
// below the sensors has its vertical component's extremes at d either
// side of the crossing (Biot-Savart for an infinite line: Bz is
// proportional to x/(x²+d²)), so readings that stop before that have not
// seen the line's field turn. A traverse walked short on purpose that
// still crosses every line by a depth either side is not named, nor is a
// traverse of the usual length whose line crosses beyond its end (an
// oblique crossing). Only the first fit of a log (starting short) and
// its last (ending short) are named, in the fits' order (that of the log
// or of time), keyed by Fit.Log: a short traverse mid-log was walked
// short (a wall, a fence), not cut; nor is the one group of a log that
// holds no other (a file a traverse). The map is keyed by the fits'
// indices. Build leaves a fit so named out of the route's line and steps,
// as one too short to place the conductor (unplace), and so out of the
// sound count, but still checks its cover (addCutShortCover).
func cutShortProblems(fits []Fit) map[int]string {
	type track struct {
		ok        bool
		c, a      [2]float64 // centroid and unit direction in plan
		lo, hi    float64    // the readings' extent along a from c
		zs, cover float64
	}
	tr := make([]track, len(fits))
	var extents []float64
	for i := range fits {
		f := &fits[i]
		if f.Problem == nil || len(f.Problem.Points) < 3 || f.Result == nil {
			continue
		}
		c, a, ok := planAxis(f.Problem.Points)
		if !ok {
			continue
		}
		t := track{ok: true, c: c, a: a, lo: math.Inf(1), hi: math.Inf(-1), zs: sensorsLevel(f)}
		for _, p := range f.Problem.Points {
			v := (p[0]-c[0])*a[0] + (p[1]-c[1])*a[1]
			t.lo, t.hi = math.Min(t.lo, v), math.Max(t.hi, v)
		}
		t.cover = t.hi - t.lo
		tr[i] = t
		extents = append(extents, t.cover)
	}
	if len(extents) < 3 {
		return nil
	}
	slices.Sort(extents)
	median := extents[len(extents)/2]
	if len(extents)%2 == 0 {
		median = 0.5 * (extents[len(extents)/2-1] + extents[len(extents)/2])
	}
	if !(median > 0) {
		return nil
	}
	// A log is cut short at its end, or started late at its start: only
	// the first and last fits of each log (in the fits' order, that of
	// the log or of time) can be so. A short traverse in the middle of a
	// log was walked short (a wall, a fence beside the route), and its
	// fit stands as it is: in review the rule named good fits beside a
	// wall (30.00 +- 0.01 A, 1.500 m, truth 30 A at 1.5 m) and hid a
	// 0.52 m cover under one of them.
	// A log that holds one group only says nothing of a cut at its ends:
	// one file a traverse is a common habit of loggers, and each such
	// file's traverse is both its first and its last, so a traverse
	// walked short beside a wall was named cut short in every file (in
	// review, 5 good fits, 9.989 A and 1.1985 m for 10 A and 1.2 m, left
	// out of the route, and a current step's bracket grew from 4 m to
	// 20 m). Only a log with other groups before or after the short one
	// shows that the walk went on past it.
	firstOf, lastOf := map[string]int{}, map[string]int{}
	keys := map[string]map[string]bool{}
	for i := range fits {
		l := fits[i].Log
		if _, ok := firstOf[l]; !ok {
			firstOf[l] = i
		}
		lastOf[l] = i
		if keys[l] == nil {
			keys[l] = map[string]bool{}
		}
		keys[l][fits[i].Key] = true
	}
	out := map[int]string{}
	for i, t := range tr {
		if !t.ok || t.cover >= cutShortShare*median || fits[i].Dipole {
			continue
		}
		atStart, atEnd := firstOf[fits[i].Log] == i, lastOf[fits[i].Log] == i
		if !atStart && !atEnd || len(keys[fits[i].Log]) < 2 {
			continue
		}
		// The plane of the traverse, square to u in plan.
		u := [2]float64{t.a[1], -t.a[0]}
		p := [3]float64{t.c[0], t.c[1], t.zs}
		for _, s := range fits[i].Result.Sources {
			if (s.Kind != "" && s.Kind != KindLine) || !sound(&s) {
				continue
			}
			if den := s.Dir[0]*u[0] + s.Dir[1]*u[1]; !(math.Abs(den) > 0.5) {
				continue // along the traverse or steep: no crossing to see
			}
			q, _, _ := crossAt(p, u, s)
			v := (q[0]-t.c[0])*t.a[0] + (q[1]-t.c[1])*t.a[1]
			d := t.zs - q[2]
			if !finite(v) || !(d > 0) {
				continue
			}
			short := math.Max(v+d-t.hi, t.lo-(v-d))
			if short <= 0 {
				continue
			}
			// The side it falls short on is its end when the last
			// reading lies there, else its start.
			pts := fits[i].Problem.Points
			first := (pts[0][0]-t.c[0])*t.a[0] + (pts[0][1]-t.c[1])*t.a[1]
			last := (pts[len(pts)-1][0]-t.c[0])*t.a[0] + (pts[len(pts)-1][1]-t.c[1])*t.a[1]
			where := "ends"
			if (t.lo-(v-d) > v+d-t.hi) != (last < first) {
				where = "starts"
			}
			// The log's last traverse may end short, its first start
			// short; not the other way round.
			if where == "ends" && !atEnd || where == "starts" && !atStart {
				continue
			}
			name := fits[i].Key
			if name == "" {
				name = "the group"
			}
			// Short of the crossing itself, or of a depth past it.
			crossed := math.Max(v-t.hi, t.lo-v) < 0
			how := "ends before it crosses the line"
			switch {
			case where == "ends" && crossed:
				how = "ends less than one depth past the line"
			case where == "starts" && crossed:
				how = "starts less than one depth before the line"
			case where == "starts":
				how = "starts past the line"
			}
			out[i] = fmt.Sprintf("the fit sees one flank only of a line's field: traverse %s %s (its readings cover %.1f m, under %.0f%% of the %.1f m the other traverses cover (median), and fall %.2f m short of one depth, %.2f m, either side of the line's crossing): the log may be cut short",
				name, how, t.cover, 100*cutShortShare, median, short, d)
			break
		}
	}
	return out
}

// cutShortShare is the share of the fits' median extent under which a
// fit's readings cover "much less ground" (cutShortProblems).
const cutShortShare = 0.75

// planAxis returns the centroid of points in plan and the unit direction
// of their largest spread (the principal axis of their 2×2 covariance);
// ok is false when they do not spread (fixed sensors).
func planAxis(pts [][3]float64) (c, a [2]float64, ok bool) {
	n := float64(len(pts))
	for _, p := range pts {
		c[0] += p[0] / n
		c[1] += p[1] / n
	}
	var sxx, syy, sxy float64
	for _, p := range pts {
		dx, dy := p[0]-c[0], p[1]-c[1]
		sxx += dx * dx
		syy += dy * dy
		sxy += dx * dy
	}
	if !(sxx+syy > 1e-4*n) {
		return c, a, false
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	return c, [2]float64{math.Cos(th), math.Sin(th)}, true
}

// addCutShortCover checks the cover of the stations that Build left out
// of the route's line because their traverse may be cut short
// (cutShortProblems; route.NamedCover): the rule may name a good fit, and
// a shallow cover under it is warned, with that caveat, not hidden.
func (d *Document) addCutShortCover(fits []Fit, r *route.Route, rs *route.Settings, cutShort map[int]string) {
	if r == nil || len(cutShort) == 0 {
		return
	}
	named := map[string]bool{}
	for i := range cutShort {
		named[fits[i].Key] = true
	}
	added := false
	for k := range r.Stations {
		p := &r.Stations[k]
		if !named[p.Key] {
			continue
		}
		if f, ok := route.NamedCover(p, rs, "its traverse is short and the log may be cut short: see its problem", len(r.Stations) == 1); ok {
			d.Findings = append(d.Findings, findingOf(f))
			added = true
		}
	}
	if added {
		SortFindings(d.Findings)
	}
}
