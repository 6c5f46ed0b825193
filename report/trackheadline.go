package report

import (
	"fmt"
	"math"
	"sort"
)

// A further conductor that crosses conductor 1.
//
// A track (see tracks.go) is summarised by its median offset from
// conductor 1, which says where a conductor laid alongside runs. For one
// that crosses conductor 1 the offset sweeps from one side to the other
// and its median means nothing: a pipe crossing a cable at 45 degrees,
// seen on five traverses at offsets -4.25 to +4.23 m, was summarised as
// "0.0025 m to the left of conductor 1", a conductor practically on top
// of the cable for 9 m (found in review). So each station of the track is
// placed against conductor 1's station of the same group, as tracks.go
// places it (the offset in the vertical plane through conductor 1's point
// square to its direction, or the track's own point when it runs within
// 30 degrees of square to it), and the angle between the two fitted
// directions in plan is taken. The track is taken as crossing conductor 1,
// or running at an angle to it, when the median angle exceeds crossAngle,
// or when its offsets sweep: they spread over more than max(1 m, 1.5
// times its median depth) (the track gate of tracks.go: more than a
// conductor's fitted position wanders between traverses), a straight line
// in conductor 1's chainage explains at least crossR2 of their variance,
// and the fitted directions turn at least half as far as that line. A
// sign change alone does not count: where two parallel cables 0.7 m apart
// take turns as the strongest, the other one's offsets jump from -0.7 to
// +0.7 m, along conductor 1. The crossing is where the straight line
// reaches zero; it is reported when it lies within the groups where the
// track was followed (half a group spacing beyond its ends allowed), and
// otherwise the track is said to run at an angle to conductor 1 without
// crossing it there. A track whose offsets all lie on one side of
// conductor 1 is said to meet it there, not to cross it: a branch leaving
// conductor 1 at a tee looks so (tee.toml), as does a crossing the fits
// do not show beyond it, and the readings do not tell the two apart.

// crossR2 is the least share of the variance of a track's offsets that a
// straight line in chainage must explain for their spread to count as the
// track running at an angle to conductor 1 (see above).
const crossR2 = 0.9

// crossAngle is the angle in plan between a further conductor and
// conductor 1, degrees, beyond which the further one is taken as crossing.
const crossAngle = 30.0

// trackCrossing is how a further conductor runs at an angle to conductor 1.
type trackCrossing struct {
	angle float64 // median angle in plan between the two, degrees
	// chainage is conductor 1's chainage where the track's offset reaches
	// zero, m; meets is false when the offsets do not change with chainage
	// (no such place) and inside true when it lies where the track was
	// followed.
	chainage      float64
	meets, inside bool
	// oneSide is true when all the track's offsets lie on one side of
	// conductor 1.
	oneSide bool
	// first and last are the track's offsets at its first and last
	// matched stations, m (positive to the right looking along
	// conductor 1's increasing chainage), at keys firstKey and lastKey.
	first, last       float64
	firstKey, lastKey string
	// length is the length of the track along itself between its first
	// and last matched stations, m: the polyline through its stations, or
	// for a go-and-return pair through the places where it meets conductor
	// 1's cross sections (see crossingOf).
	length float64
}

// crossingOf tells whether track t crosses or runs at an angle to conductor 1 of d
// (see above) and how.
func crossingOf(d *Document, t *Track) (trackCrossing, bool) {
	if d == nil || d.Route == nil || len(t.Route.Stations) < 2 {
		return trackCrossing{}, false
	}
	main := map[string]*Station{}
	for i := range d.Route.Stations {
		main[d.Route.Stations[i].Key] = &d.Route.Stations[i]
	}
	type placed struct {
		key                     string
		chainage, offset, angle float64
		// at is the track's station (a line's: where it crosses the
		// group's traverse, or where tracks.go placed it otherwise), or
		// for a pair where the track meets conductor 1's cross section,
		// m E, N.
		at [2]float64
	}
	var ps []placed
	var depths []float64
	// A track placed by its own points at every station (ownPointTrack,
	// as tracks.go placed its stations) is placed so here too.
	var cosines []float64
	for _, s := range t.Route.Stations {
		if m, ok := main[s.Key]; ok {
			cosines = append(cosines, planCos(m.Direction, s.Direction))
		}
	}
	own := !t.Route.PairNet && ownPointTrack(cosines)
	for _, s := range t.Route.Stations {
		m, ok := main[s.Key]
		if !ok {
			continue
		}
		u, okU := planUnit(m.Direction)
		v, okV := planUnit(s.Direction)
		if !okU || !okV {
			continue
		}
		right := [2]float64{u[1], -u[0]}
		q := [2]float64{s.Point[0], s.Point[1]}
		if den := v[0]*u[0] + v[1]*u[1]; math.Abs(den) > 0.5 && !own {
			k := -((q[0]-m.Point[0])*u[0] + (q[1]-m.Point[1])*u[1]) / den
			q = [2]float64{q[0] + k*v[0], q[1] + k*v[1]}
		}
		off := (q[0]-m.Point[0])*right[0] + (q[1]-m.Point[1])*right[1]
		cos := math.Min(1, math.Abs(v[0]*u[0]+v[1]*u[1]))
		if !finite(off) {
			continue
		}
		at := q
		if !t.Route.PairNet {
			at = [2]float64{s.Point[0], s.Point[1]}
		}
		ps = append(ps, placed{s.Key, m.Chainage, off, math.Acos(cos) * 180 / math.Pi, at})
		depths = append(depths, s.Depth)
	}
	if len(ps) < 2 {
		return trackCrossing{}, false
	}
	sort.SliceStable(ps, func(i, j int) bool { return ps[i].chainage < ps[j].chainage })
	angles := make([]float64, len(ps))
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, p := range ps {
		angles[i] = p.angle
		lo, hi = math.Min(lo, p.offset), math.Max(hi, p.offset)
	}
	angle := median(angles)
	// The length runs through the track's stations in conductor 1's
	// order: a line's station lies where it crosses the group's traverse
	// (trackStation), so the polyline follows the conductor from traverse
	// to traverse. The fits' points nearest the centres of the readings,
	// closer together than the traverses along a conductor crossing them
	// at an angle (by cos² of the angle for traverses square to conductor
	// 1), understated it; so did the places where the track meets
	// conductor 1's cross sections, taken next, on traverses oblique to
	// conductor 1 (20 m for 22 m along a cable diverging 10 degrees from
	// it, the traverses at 65 degrees to the first cable). A pair's
	// centre is taken there still.
	var length float64
	for i := 1; i < len(ps); i++ {
		length += math.Hypot(ps[i].at[0]-ps[i-1].at[0], ps[i].at[1]-ps[i-1].at[1])
	}
	c := trackCrossing{
		length: length,
		angle:  angle,
		first:  ps[0].offset, firstKey: ps[0].key,
		last: ps[len(ps)-1].offset, lastKey: ps[len(ps)-1].key,
		oneSide: lo > 0 || hi < 0,
	}
	// Least-squares line of offset against chainage, and the share of the
	// offsets' variance it explains.
	var mc, mo float64
	for _, p := range ps {
		mc += p.chainage
		mo += p.offset
	}
	mc /= float64(len(ps))
	mo /= float64(len(ps))
	var sxx, sxy, syy float64
	for _, p := range ps {
		sxx += (p.chainage - mc) * (p.chainage - mc)
		sxy += (p.chainage - mc) * (p.offset - mo)
		syy += (p.offset - mo) * (p.offset - mo)
	}
	var slope, r2 float64
	if sxx > 0 && syy > 0 {
		slope = sxy / sxx
		r2 = sxy * sxy / (sxx * syy)
	}
	slopeAngle := math.Atan(math.Abs(slope)) * 180 / math.Pi
	gate := math.Max(1, 1.5*median(depths))
	sweeps := hi-lo > gate && r2 >= crossR2 && angle >= 0.5*slopeAngle
	if !(angle > crossAngle) && !sweeps {
		return trackCrossing{}, false
	}
	if math.Abs(slope) > 1e-3 {
		c.chainage, c.meets = mc-mo/slope, true
		lo, hi := followedSpan(d.Route.Stations, ps[0].chainage, ps[len(ps)-1].chainage, len(ps))
		c.inside = c.chainage >= lo && c.chainage <= hi
	}
	return c, true
}

// followedSpan is the span of conductor 1's chainage over which a track
// first and last matched at chainages first and last (n stations) counts
// as followed, for the test of where its line meets conductor 1: out to
// conductor 1's station next beyond each end, the traverse that did not
// show it (where a branch leaves, or a crossing the fits do not show lies,
// somewhere in that gap), or half the track's mean spacing beyond an end
// with no station beyond it. Half a spacing alone put the true tee of
// tee.toml (branch leaving at chainage 26 m, first seen at T08, 28 m, the
// traverse before at 24 m) outside on two seeds of three once conductor
// 1's T08 moved from 27.94 to 28.00 m, and it read as not meeting the
// feeder (found in review).
func followedSpan(main []Station, first, last float64, n int) (lo, hi float64) {
	half := 0.0
	if n > 1 {
		half = (last - first) / float64(n-1) / 2
	}
	lo, hi = first-half, last+half
	before, after := math.Inf(-1), math.Inf(1)
	for i := range main {
		c := main[i].Chainage
		if !finite(c) {
			continue
		}
		if c < first && c > before {
			before = c
		}
		if c > last && c < after {
			after = c
		}
	}
	if !math.IsInf(before, 0) {
		lo = math.Min(lo, before)
	}
	if !math.IsInf(after, 0) {
		hi = math.Max(hi, after)
	}
	return lo, hi
}

// planUnit is d's horizontal part as a unit vector; ok is false when it
// has none.
func planUnit(d [3]float64) (u [2]float64, ok bool) {
	n := math.Hypot(d[0], d[1])
	if !(n > 0) || !finite(n) {
		return u, false
	}
	return [2]float64{d[0] / n, d[1] / n}, true
}

// sideOf writes an offset from conductor 1: "4.25 m to the left".
func sideOf(off float64) string {
	side := "right"
	if off < 0 {
		side = "left"
	}
	return fmt.Sprintf("%s m to the %s", num(math.Abs(off)), side)
}

// where says where along conductor 1 the crossing c lies: "at T05" when a
// station of conductor 1 is within a tenth of its spacing of it, or
// "between T05 and T06".
func (c trackCrossing) where(d *Document) string {
	st := d.Route.Stations
	for i := range st {
		gap := math.Inf(1)
		if i+1 < len(st) {
			gap = st[i+1].Chainage - st[i].Chainage
		}
		if i > 0 {
			gap = math.Min(gap, st[i].Chainage-st[i-1].Chainage)
		}
		if math.Abs(st[i].Chainage-c.chainage) <= 0.1*gap {
			return "at " + st[i].Key
		}
	}
	for i := 0; i+1 < len(st); i++ {
		if st[i].Chainage <= c.chainage && c.chainage <= st[i+1].Chainage {
			return fmt.Sprintf("between %s and %s", st[i].Key, st[i+1].Key)
		}
	}
	return "beyond the groups"
}

// clause is the crossing's account for a summary, after "Conductor N ":
// "crosses conductor 1 at about 45° near chainage 12.0 m (at T05)".
func (c trackCrossing) clause(d *Document) string {
	switch {
	case c.meets && c.inside && c.oneSide:
		return fmt.Sprintf("meets conductor 1 at about %.0f° near chainage %.1f m (%s), seen on one side of it only (a branch from it, or a crossing the fits do not show beyond it)", c.angle, c.chainage, c.where(d))
	case c.meets && c.inside:
		return fmt.Sprintf("crosses conductor 1 at about %.0f° near chainage %.1f m (%s)", c.angle, c.chainage, c.where(d))
	case c.meets:
		return fmt.Sprintf("runs at about %.0f° to conductor 1 and does not cross it where it was followed (their lines would meet near chainage %.1f m of conductor 1)", c.angle, c.chainage)
	}
	return fmt.Sprintf("runs at about %.0f° to conductor 1", c.angle)
}

// trackSummary says in a sentence where further conductor t runs and what
// it carries: as trackHeadline does for a conductor alongside conductor 1,
// and for one that crosses it where and at what angle, with its offsets
// at the ends, in place of a median offset that means nothing.
func trackSummary(d *Document, t *Track) string {
	c, ok := crossingOf(d, t)
	if !ok {
		return trackHeadline(d, t)
	}
	what, cur := fmt.Sprintf("Conductor %d", t.Number), "current"
	if t.Route.PairNet {
		// A followed go-and-return pair: its current is the net current, its
		// depth the centre's (trackHeadline words the parallel case so).
		what, cur = fmt.Sprintf("Conductor %d, a go-and-return pair,", t.Number), "net current"
	}
	line := fmt.Sprintf("%s %s: it was followed for %.0f m in %d groups, from %s of conductor 1 at %s to %s at %s (looking along the route)",
		what, c.clause(d), c.length, len(t.Route.Stations), sideOf(c.first), c.firstKey, sideOf(c.last), c.lastKey)
	var used []Station
	for _, s := range t.Route.Stations {
		if s.Used {
			used = append(used, s)
		}
	}
	if len(used) > 0 {
		a, b := used[0], used[len(used)-1]
		r := &t.Route
		line += fmt.Sprintf("; %s %s at %s and %s at %s%s",
			cur, endCurrent(d, r, &a), r.endStation(&a).Key, endCurrent(d, r, &b), r.endStation(&b).Key, firstWalkClause(r))
		if !t.Route.PairNet {
			line += crossingFlow(used)
		}
		line += trackPhaseClause(t) + returnShareClause(t)
		lo, hi := used[0].Depth, used[0].Depth
		for _, s := range used {
			lo, hi = math.Min(lo, s.Depth), math.Max(hi, s.Depth)
		}
		_, one := span(lo, hi)
		depth, cover := "depth", "cover"
		if t.Route.PairNet {
			depth, cover = "centre depth", "centre cover"
		}
		line += "; " + depthRangeWords(d, lo, hi, depth, cover)
		if s, cv, sg, ok := leastCoverOf(d, &t.Route); ok {
			line += fmt.Sprintf("; least cover %s m", pm(cv, sg))
			if !one {
				line += " at " + s.Key
			}
			if pc := preciseCoverOf(d, &t.Route, s); pc != "" {
				line += ", best determined at " + pc + " m"
			}
		}
	}
	return line + "."
}

// ConductorBrief is the short account of further conductor t that a
// one-line summary gives: parallel, the caller's words for a conductor
// alongside conductor 1, unless t crosses or runs at an angle to conductor 1 (see
// crossingOf), when it says so with the angle and where:
// "; conductor 2 followed on 5 traverses, crossing conductor 1 at about
// 45° near chainage 12.0 m (at T05)".
func ConductorBrief(d *Document, t *Track, parallel string) string {
	c, ok := crossingOf(d, t)
	if !ok {
		return parallel
	}
	return fmt.Sprintf("; conductor %d followed on %d traverses, which %s", t.Number, len(t.Route.Stations), c.clause(d))
}

// crossingFlow says which way a crossing conductor's DC current flows,
// over its used stations: ", flowing from T15 towards T01 (setting off
// about 280° from north, about west)". Each station's current is signed
// along its Direction, turned along increasing chainage of the track, so
// a negative current flows from the track's last station towards its
// first. The bearing is the plan direction between the first and last
// used stations, reversed for a negative current. Empty for AC (the
// phases say the direction), when no station's current is over two
// sigma, or when such stations disagree in sign; and for fewer than two
// used stations at distinct places.
func crossingFlow(used []Station) string {
	if len(used) < 2 {
		return ""
	}
	sign := 0
	for _, s := range used {
		if s.Phase != nil {
			return ""
		}
		if !(math.Abs(s.Current) > 2*s.CurrentSigma) {
			continue
		}
		k := 1
		if s.Current < 0 {
			k = -1
		}
		if sign != 0 && k != sign {
			return ""
		}
		sign = k
	}
	a, b := used[0], used[len(used)-1]
	dx, dy := b.Point[0]-a.Point[0], b.Point[1]-a.Point[1]
	if sign == 0 || !(math.Hypot(dx, dy) > 0) {
		return ""
	}
	from, to := a.Key, b.Key
	if sign < 0 {
		from, to, dx, dy = b.Key, a.Key, -dx, -dy
	}
	bearing := math.Mod(math.Round(math.Atan2(dx, dy)*180/math.Pi)+360, 360)
	return fmt.Sprintf(", flowing from %s towards %s (setting off %.0f° from north, %s)", from, to, bearing, compassPoint(bearing))
}

// addCrossings records in each further conductor of d that crosses or runs
// at an angle to conductor 1 how it does (Track.Crossing, see crossingOf).
func (d *Document) addCrossings() {
	for i := range d.Conductors {
		t := &d.Conductors[i]
		c, ok := crossingOf(d, t)
		if !ok {
			continue
		}
		x := &Crossing{AngleDeg: round3(c.angle), Crosses: c.meets && c.inside && !c.oneSide, OneSide: c.oneSide, LengthM: round3(c.length)}
		if c.meets {
			ch := round3(c.chainage)
			x.ChainageM = &ch
		}
		t.Crossing = x
	}
}

// round3 rounds v to the millimetre (or thousandth of a degree).
func round3(v float64) float64 { return math.Round(v*1000) / 1000 }
